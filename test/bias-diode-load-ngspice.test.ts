/**
 * Oracle: ngspice (Debian package ngspice, batch mode, its Level 1 MOSFET).
 * Seeded random common-source stages with a diode-connected load — NMOS and
 * PMOS drivers, complementary and same-type loads, body at the rail (body
 * effect on a same-type load) or at the source — are solved here and by
 * ngspice from the very decks the topology exports. The output voltage and
 * the current agree to 1e-6 relative (1 µV or 10 pA absolute near zero), the
 * regions of both transistors agree in every case, and where the driver
 * conducts the small-signal gain and output resistance agree with ngspice's
 * transfer-function analysis (.tf) to 1e-6 relative.
 *
 * With the driver cut off the square law leaves the output undetermined
 * between the load's conduction edge and the rail (no current anywhere);
 * ngspice settles it by junction leakage (its default IS = 1e-14 A per
 * junction, ngspice manual, MOSFET level 1 parameters; from memory) and
 * GMIN. There the check is that ngspice's output lies in that range, the
 * lower end widened by the overdrive that leakage needs in the load,
 * √(2·2·IS/k2), and that its load carries no more than leakage.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { analyzeStage, stageCircuit } from "../lib/bias/analyze.js";
import type { BodyTie, Stage } from "../lib/bias/topology.js";
import type { DeviceCard, Polarity } from "../lib/device/card.js";
import { regionOf, type Region } from "../lib/device/region.js";
import { meters, volts } from "../lib/quantity.js";
import { runNgspice } from "./support/ngspice.js";
import { cardArb, logUniform, maybeZero, uniform, unit } from "./support/arbitraries.js";


const other = (p: Polarity): Polarity => (p === "nmos" ? "pmos" : "nmos");

function stageArb(polarity: Polarity, loadPolarity: Polarity): fc.Arbitrary<Stage> {
  return fc
    .record({
      drv: cardArb(polarity, `drv-${polarity}`),
      load: cardArb(loadPolarity, `load-${loadPolarity}`),
      w1: logUniform(1e-6, 100e-6),
      l1: logUniform(0.5e-6, 5e-6),
      w2: logUniform(1e-6, 100e-6),
      l2: logUniform(0.5e-6, 5e-6),
      vdd: uniform(1.8, 15),
      neg: maybeZero(uniform(0.5, 5), 0.5),
      at: unit,
      body: fc.constantFrom<BodyTie>("source", "rail"),
    })
    .map((r): Stage => {
      const vss = volts(-r.neg);
      return {
        topology: "diode-load",
        device: { card: r.drv, w: meters(r.w1), l: meters(r.l1) },
        devices: { load: { card: r.load, w: meters(r.w2), l: meters(r.l2) } },
        components: { vg: vss + r.at * (r.vdd - vss) },
        supplies: { vdd: volts(r.vdd), vss },
        body: r.body,
      };
    })
    .filter((st) => st.supplies.vdd - (st.supplies.vss ?? 0) > Math.abs(st.devices!.load!.card.vt0)); // a load that can never conduct is a typed error
}

const isDefault = 1e-14; // A, ngspice default junction saturation current (from memory)
const perBatch = 20;
const tally: Record<Region, number> = { cutoff: 0, triode: 0, saturation: 0 };
let total = 0;
let bodyEffect = 0;
let gains = 0;
let worstRel = 0;

describe("common source with a diode-connected load against ngspice Level 1 (Debian ngspice, batch mode)", () => {
  for (const polarity of ["nmos", "pmos"] as const)
    for (const loadType of ["complementary", "same-type"] as const)
      it(`${polarity} driver, ${loadType} load: ${perBatch} seeded random stages agree in VOUT, ID and both regions`, () => {
        const loadPolarity = loadType === "same-type" ? polarity : other(polarity);
        const seed = 7200 + (polarity === "nmos" ? 0 : 2) + (loadType === "same-type" ? 1 : 0);
        const stages = fc.sample(stageArb(polarity, loadPolarity), { seed, numRuns: perBatch });
        expect(stages.length).toBe(perBatch);
        const lines = [".options reltol=1e-10 vntol=1e-12 abstol=1e-16 gmin=1e-18"];
        const prints: string[] = [];
        const circuits = stages.map((st, i) => stageCircuit(st, `c${i}_`));
        circuits.forEach((c) => {
          lines.push(...c.lines);
          prints.push(`v(${c.nodes.drain})`, `i(${c.drainAmmeter.toLowerCase()})`, `@${c.instance.toLowerCase()}[von]`, `@${c.instances!.load!.toLowerCase()}[von]`);
        });
        // Small-signal gain and output resistance from ngspice's .tf at each conducting stage's own operating point.
        const analyses = stages.map((st) => analyzeStage(st));
        const tf: string[] = [];
        analyses.forEach((a, i) => {
          if (a.region === "cutoff") return;
          const c = circuits[i]!;
          tf.push(`tf v(${c.nodes.drain}) ${c.lines.find((l) => l.startsWith(`Vc${i}_G `))!.split(" ")[0]!.toLowerCase()}`, "print transfer_function", `print output_impedance_at_v(${c.nodes.drain})`);
        });
        const rows = runNgspice({ circuit: lines.join("\n"), control: ["op", ...prints.map((p) => `print ${p}`), ...tf, "quit 0"].join("\n") });
        const tfRows = rows.splice(prints.length);
        expect(rows.length).toBe(prints.length);
        expect(tfRows.length).toBe((2 * tf.length) / 3);
        const s = polarity === "nmos" ? 1 : -1;
        const sl = loadPolarity === "nmos" ? 1 : -1;
        stages.forEach((st, i) => {
          // rows.length was checked against prints above, so each slice holds exactly these four values.
          const [vd, id, von1, von2] = rows.slice(i * 4, i * 4 + 4).map((r) => r[1]) as [number, number, number, number];
          const a = analyses[i]!;
          const load = a.devices!.load!;
          const where = `diode-load ${polarity}/${loadType} #${i}: ${JSON.stringify(st)}`;
          const close = (value: number | undefined, ref: number, abs: number, what: string) => {
            expect(value, `${what} missing from our analysis — ${where}`).toBeDefined();
            const ours = value!;
            if (Math.abs(ref) > abs) worstRel = Math.max(worstRel, Math.abs(ours - ref) / Math.abs(ref));
            expect(Math.abs(ours - ref), `${what} ours ${ours} ngspice ${ref} — ${where}`).toBeLessThanOrEqual(Math.max(1e-6 * Math.abs(ref), abs));
          };
          const vss = st.supplies.vss ?? 0;
          const vdd = st.supplies.vdd;
          const srcRail = s > 0 ? vss : vdd;
          const drainRail = s > 0 ? vdd : vss;
          const vg = st.components.vg!;
          // ngspice's regions from its own thresholds at its own node voltages.
          const r1 = regionOf(s * (vg - srcRail) - s * von1, s * (vd - srcRail));
          const lt = loadType === "same-type" ? { g: drainRail, d: drainRail, s: vd } : { g: vd, d: vd, s: drainRail };
          const vovLoad = sl * (lt.g - lt.s) - sl * von2;
          const r2 = regionOf(vovLoad, sl * (lt.d - lt.s));
          expect(a.region, `driver region — ${where}`).toBe(r1);
          close(a.op.id, id, 1e-11, "ID");
          if (a.region === "cutoff") {
            // Undetermined output: ngspice must sit between the load's conduction edge (less the leakage overdrive) and the rail.
            const k2 = (load.op.k as number);
            const slack = Math.sqrt((4 * isDefault) / k2) + 1e-6;
            const u = s * vd;
            expect(a.nodes.drain, `our output — ${where}`).toBeDefined();
            expect(u, `cutoff output above the load's edge — ${where}`).toBeGreaterThanOrEqual(s * a.nodes.drain! - slack);
            expect(u, `cutoff output below the rail — ${where}`).toBeLessThanOrEqual(s * drainRail + 1e-6);
            expect(load.region, `load region — ${where}`).toBe("cutoff");
            // ngspice's load is cut off too, or conducts no more than junction leakage at the very edge.
            expect(r2 === "cutoff" || vovLoad <= slack, `ngspice load region ${r2} (overdrive ${vovLoad} V) — ${where}`).toBe(true);
          } else {
            close(a.nodes.drain, vd, 1e-6, "VOUT");
            const [gain, rout] = tfRows.splice(0, 2).map((r) => r[1]!);
            close(a.metrics.amplifiers[0]!.gain, gain!, 1e-9, "small-signal gain vout/vin");
            close(a.metrics.amplifiers[0]!.rout, rout!, 1e-6, "output resistance");
            gains++;
            expect(load.region, `load region — ${where}`).toBe(r2);
            expect(r2).toBe("saturation"); // a diode-connected load is saturated whenever it conducts
          }
          if (loadType === "same-type" && st.body === "rail" && (st.devices!.load!.card.gamma ?? 0) > 0 && a.region !== "cutoff") bodyEffect++;
          tally[a.region]++;
          total++;
        });
      });
  it("covered 60+ stages with every driver region and body-affected loads", () => {
    expect(total).toBe(4 * perBatch);
    expect(tally.cutoff).toBeGreaterThanOrEqual(5);
    expect(tally.triode).toBeGreaterThanOrEqual(5);
    expect(tally.saturation).toBeGreaterThanOrEqual(10);
    expect(bodyEffect).toBeGreaterThanOrEqual(5);
    expect(gains).toBe(total - tally.cutoff);
    console.log(`diode-load vs ngspice: ${total} stages, driver regions ${JSON.stringify(tally)}, ${bodyEffect} with body effect on the load, ${gains} gains and output resistances from .tf, worst relative deviation ${worstRel.toExponential(2)}`);
  });
});
