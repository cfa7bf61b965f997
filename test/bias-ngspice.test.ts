/**
 * Oracle: ngspice (Debian package ngspice, batch mode, its Level 1 MOSFET).
 * Seeded random stages of every built-in topology and both polarities are
 * solved here and by ngspice from the very decks lib/bias/spice.ts exports;
 * node voltages and the drain current must agree to 1e-6 relative (1 µV or
 * 10 pA absolute near zero: ngspice's junction leakage and GMIN), gm, gds
 * and gmb likewise, and the region must agree in every case.
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

// Uniform draws without fast-check's bias towards the ends of a range (realistic values, not edge cases).

const resistor = logUniform(100, 1e6);

function stageArb(topology: string, polarity: Polarity): fc.Arbitrary<Stage> {
  const supplies = fc
    .tuple(uniform(1.8, 15), maybeZero(uniform(0.5, 5), 0.5))
    .map(([vdd, neg]) => ({ vdd: volts(vdd), vss: volts(-neg) }));
  const u = unit;
  const comps = (s: { vdd: number; vss: number }) => {
    const vgIn = u.map((x) => s.vss + x * (s.vdd - s.vss));
    switch (topology) {
      case "fixed-gate":
        return fc.record({ vg: vgIn, rd: resistor, rs: maybeZero(resistor, 0.3) });
      case "four-resistor":
        return fc.record({ rg1: logUniform(10e3, 10e6), rg2: logUniform(10e3, 10e6), rd: resistor, rs: resistor });
      case "drain-feedback":
        return fc.record({ rf: logUniform(10e3, 10e6), rd: resistor, rs: maybeZero(resistor, 0.4) });
      case "source-follower":
        return fc.record({ rg1: logUniform(10e3, 10e6), rg2: logUniform(10e3, 10e6), rs: resistor, rd: maybeZero(resistor, 0.5) });
      default:
        return fc.record({ vg: vgIn, iss: logUniform(1e-6, 2e-3), rd: logUniform(100, 100e3) });
    }
  };
  return fc
    .record({ card: cardArb(polarity), w: logUniform(1e-6, 100e-6), l: logUniform(0.5e-6, 5e-6), supplies, body: fc.constantFrom<BodyTie>("source", "rail") })
    .chain((r) => comps(r.supplies).map((components): Stage => ({ topology, device: { card: r.card, w: meters(r.w), l: meters(r.l) }, components, supplies: r.supplies, body: r.body })));
}

/** A circuit SPICE can compare against the square-law model: no forward-biased junction (the model has no junction diodes). */
function comparable(stage: Stage): boolean {
  const a = analyzeStage(stage);
  const lo = stage.supplies.vss ?? 0;
  const hi = stage.supplies.vdd;
  return Object.values(a.nodes).every((v) => v >= lo - 1e-9 && v <= hi + 1e-9);
}

const topologies = ["fixed-gate", "four-resistor", "drain-feedback", "source-follower", "current-source-bias"];
const perBatch = 34;
const tally: Record<Region, number> = { cutoff: 0, triode: 0, saturation: 0 };
let total = 0;
const methods: Record<string, number> = {};
let worstRel = 0;

describe("bias analysis against ngspice Level 1 (Debian ngspice, batch mode)", () => {
  for (const topology of topologies)
    for (const polarity of ["nmos", "pmos"] as const) {
      it(`${topology}, ${polarity}: ${perBatch} seeded random circuits agree in nodes, ID and region`, () => {
        const seed = 1000 + topologies.indexOf(topology) * 10 + (polarity === "nmos" ? 0 : 1);
        const stages = fc
          .sample(stageArb(topology, polarity), { seed, numRuns: perBatch * 3 })
          .filter(comparable)
          .slice(0, perBatch);
        expect(stages.length).toBe(perBatch);
        const lines = [".options reltol=1e-10 vntol=1e-12 abstol=1e-16 gmin=1e-18"];
        const prints: string[] = [];
        stages.forEach((st, i) => {
          const c = stageCircuit(st, `c${i}_`);
          lines.push(...c.lines);
          const m = c.instance.toLowerCase();
          prints.push(`v(${c.nodes.gate})`, `v(${c.nodes.source})`, `v(${c.nodes.drain})`, `i(${c.drainAmmeter.toLowerCase()})`, `@${m}[von]`, `@${m}[vdsat]`, `@${m}[gm]`, `@${m}[gds]`, `@${m}[gmbs]`);
        });
        // `quit 0`: ngspice -b exits 1 after a .control block that runs no .tran/.plot, even on success.
        const rows = runNgspice({ circuit: lines.join("\n"), control: ["op", ...prints.map((p) => `print ${p}`), "quit 0"].join("\n") });
        expect(rows.length).toBe(prints.length);
        stages.forEach((st, i) => {
          const [vg, vs, vd, id, von, , gm, gds, gmbs] = rows.slice(i * 9, i * 9 + 9).map((r) => r[1]);
          const a = analyzeStage(st);
          const where = `${topology} ${polarity} #${i}: ${JSON.stringify(st)}`;
          methods[a.solver.method] = (methods[a.solver.method] ?? 0) + 1;
          const close = (value: number | undefined, ref: number, abs: number, what: string) => {
            expect(value, `${what} missing from our analysis — ${where}`).toBeDefined();
            const ours = value!;
            if (Math.abs(ref) > abs) worstRel = Math.max(worstRel, Math.abs(ours - ref) / Math.abs(ref));
            expect(Math.abs(ours - ref), `${what} ours ${ours} ngspice ${ref} — ${where}`).toBeLessThanOrEqual(Math.max(1e-6 * Math.abs(ref), abs));
          };
          close(a.nodes.gate, vg!, 1e-6, "VG");
          close(a.nodes.source, vs!, 1e-6, "VS");
          close(a.nodes.drain, vd!, 1e-6, "VD");
          close(a.op.id, id!, 1e-11, "ID");
          // Small-signal parameters (ngspice's own derivatives; 1e-10 S absolute for GMIN-level values).
          close(a.smallSignal.gm, gm!, 1e-10, "gm");
          close(a.smallSignal.gds, gds!, 1e-10, "gds");
          if (st.body === "rail") close(a.smallSignal.gmb, gmbs!, 1e-10, "gmb");
          // ngspice's region from its own threshold (von) at its own node voltages, in device polarity.
          const s = polarity === "nmos" ? 1 : -1;
          const ngRegion = regionOf(s * (vg! - vs!) - s * von!, s * (vd! - vs!));
          const ours = a.region;
          // On a region edge closer than the solver tolerance either answer is right; none was drawn so close here.
          expect(ours, `region — ${where}`).toBe(ngRegion);
          tally[ours]++;
          total++;
        });
      });
    }
  it("covered every region and 300+ circuits in total", () => {
    expect(total).toBeGreaterThanOrEqual(300);
    expect(tally.cutoff).toBeGreaterThanOrEqual(10);
    expect(tally.triode).toBeGreaterThanOrEqual(20);
    expect(tally.saturation).toBeGreaterThanOrEqual(100);
    // Both numeric paths are exercised: closed forms (λ = 0, no body effect) and the bracketed Newton solve.
    expect(methods["closed-form"] ?? 0).toBeGreaterThanOrEqual(30);
    expect(methods["bracketed-newton"] ?? 0).toBeGreaterThanOrEqual(150);
    console.log(`ngspice comparison: ${total} circuits, regions ${JSON.stringify(tally)}, methods ${JSON.stringify(methods)}, worst relative deviation ${worstRel.toExponential(2)}`);
  });
});
