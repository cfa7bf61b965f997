/**
 * Oracle: ngspice (Debian package ngspice, batch mode, its Level 1 MOSFET).
 * Seeded random current mirrors of both polarities, the output held at a
 * voltage (often below compliance) or loaded by a resistor, are solved here
 * and by ngspice from the very decks the topology exports. Node voltages and
 * currents must agree to 1e-6 relative (1 µV or 10 pA absolute near zero:
 * ngspice's junction leakage and GMIN), so must the output transistor's gm
 * and gds (hence ro2), and the regions of both transistors must agree in
 * every case.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { analyzeStage, stageCircuit } from "../lib/bias/analyze.js";
import type { MirrorAnalysis } from "../lib/bias/topologies/current-mirror.js";
import type { Stage } from "../lib/bias/topology.js";
import type { DeviceCard, Polarity } from "../lib/device/card.js";
import { regionOf, type Region } from "../lib/device/region.js";
import { InfeasibleError } from "../lib/errors.js";
import { meters, volts } from "../lib/quantity.js";
import { runNgspice } from "./support/ngspice.js";
import { cardArb, logUniform, maybeZero, uniform, unit } from "./support/arbitraries.js";


/** One card for both (matched pair) in 80 % of draws; otherwise the output transistor gets its own card (its threshold may exceed the mirror's VGS: cutoff). */
function mirrorArb(polarity: Polarity): fc.Arbitrary<Stage> {
  return fc
    .record({
      card: cardArb(polarity, `rand-${polarity}`),
      other: cardArb(polarity, `rand-${polarity}-out`),
      ownCard: unit.map((u) => u < 0.2),
      w1: logUniform(1e-6, 100e-6),
      l1: logUniform(0.5e-6, 5e-6),
      w2: logUniform(1e-6, 100e-6),
      l2: logUniform(0.5e-6, 5e-6),
      vdd: uniform(1.8, 15),
      neg: maybeZero(uniform(0.5, 5), 0.5),
      rref: logUniform(1e3, 1e6),
      held: unit.map((u) => u < 0.5),
      nearRail: unit.map((u) => u < 0.5),
      at: unit,
      rload: maybeZero(logUniform(100, 1e6), 0.05),
    })
    .map((r): Stage => {
      const vss = volts(-r.neg);
      const span = r.vdd - vss;
      const pmos = polarity === "pmos";
      // Output position above the source rail: half the held outputs within 1 V of it (mostly below compliance).
      const above = r.nearRail ? Math.min(span, 1) * r.at : span * r.at;
      const vout = pmos ? r.vdd - above : vss + above;
      return {
        topology: "current-mirror",
        device: { card: r.ownCard ? r.other : r.card, w: meters(r.w2), l: meters(r.l2) },
        devices: { reference: { card: r.card, w: meters(r.w1), l: meters(r.l1) } },
        components: r.held ? { rref: r.rref, vout } : { rref: r.rref, rload: r.rload },
        supplies: { vdd: volts(r.vdd), vss },
      };
    });
}

/** A supply too low to turn M1 on is a typed error (tested in bias-mirror.test.ts), not a circuit to compare. */
function solvable(stage: Stage): boolean {
  try {
    analyzeStage(stage);
    return true;
  } catch (e) {
    if (e instanceof InfeasibleError) return false;
    throw e;
  }
}

type Eight = [number, number, number, number, number, number, number, number];
const perBatch = 30;
const tally: Record<Region, number> = { cutoff: 0, triode: 0, saturation: 0 };
let total = 0;
let belowCompliance = 0;
let held = 0;
let worstRel = 0;

describe("current mirror against ngspice Level 1 (Debian ngspice, batch mode)", () => {
  for (const polarity of ["nmos", "pmos"] as const)
    it(`${polarity}: ${perBatch} seeded random mirrors agree in nodes, IREF, IOUT and both regions`, () => {
      const seed = 7100 + (polarity === "nmos" ? 0 : 1);
      const stages = fc.sample(mirrorArb(polarity), { seed, numRuns: perBatch * 2 }).filter(solvable).slice(0, perBatch);
      expect(stages.length).toBe(perBatch);
      const lines = [".options reltol=1e-10 vntol=1e-12 abstol=1e-16 gmin=1e-18"];
      const prints: string[] = [];
      stages.forEach((st, i) => {
        const c = stageCircuit(st, `c${i}_`);
        lines.push(...c.lines);
        const m1 = c.instances!.reference!.toLowerCase();
        const m2 = c.instance.toLowerCase();
        prints.push(`v(${c.nodes.gate})`, `v(${c.nodes.drain})`, `i(${c.drainAmmeter.toLowerCase()})`, `i(${c.ammeters!.reference!.toLowerCase()})`, `@${m1}[von]`, `@${m2}[von]`, `@${m2}[gds]`, `@${m2}[gm]`);
      });
      // `quit 0`: ngspice -b exits 1 after a .control block that runs no .tran/.plot, even on success.
      const rows = runNgspice({ circuit: lines.join("\n"), control: ["op", ...prints.map((p) => `print ${p}`), "quit 0"].join("\n") });
      expect(rows.length).toBe(prints.length);
      const s = polarity === "nmos" ? 1 : -1;
      stages.forEach((st, i) => {
        // rows.length was checked against prints above, so each slice holds exactly these eight values.
        const [vg, vd, iout, iref, von1, von2, gds2, gm2] = rows.slice(i * 8, i * 8 + 8).map((r) => r[1]) as Eight;
        const a = analyzeStage(st) as MirrorAnalysis;
        const where = `mirror ${polarity} #${i}: ${JSON.stringify(st)}`;
        const close = (value: number | undefined, ref: number, abs: number, what: string) => {
          expect(value, `${what} missing from our analysis — ${where}`).toBeDefined();
          const ours = value!;
          if (Math.abs(ref) > abs) worstRel = Math.max(worstRel, Math.abs(ours - ref) / Math.abs(ref));
          expect(Math.abs(ours - ref), `${what} ours ${ours} ngspice ${ref} — ${where}`).toBeLessThanOrEqual(Math.max(1e-6 * Math.abs(ref), abs));
        };
        close(a.nodes.gate, vg, 1e-6, "VG (reference node)");
        close(a.nodes.drain, vd, 1e-6, "VOUT");
        close(a.op.id, iout, 1e-11, "IOUT");
        close(a.devices!.reference!.op.id, iref, 1e-11, "IREF");
        // The output resistance ro2 = 1/gds2 and gm2 at the output transistor's operating point.
        close(a.smallSignal.gds, gds2, 1e-15, "gds2");
        close(a.smallSignal.gm, gm2, 1e-15, "gm2");
        if (a.region === "saturation" && gds2 > 0) close(a.mirror.outputResistance, 1 / gds2, 1e-6, "ro2");
        // Regions from ngspice's own thresholds (von) at its own node voltages, in device polarity; sources at the rail.
        const vsrc = s > 0 ? (st.supplies.vss ?? 0) : st.supplies.vdd;
        const r1 = regionOf(s * (vg - vsrc) - s * von1, s * (vg - vsrc));
        const r2 = regionOf(s * (vg - vsrc) - s * von2, s * (vd - vsrc));
        expect(a.devices!.reference!.region, `M1 region — ${where}`).toBe(r1);
        expect(a.region, `M2 region — ${where}`).toBe(r2);
        expect(r1).toBe("saturation"); // the diode-connected reference is saturated whenever it conducts
        if (st.components.vout !== undefined) held++;
        if (a.mirror.complianceMargin < 0) belowCompliance++;
        tally[a.region]++;
        total++;
      });
    });
  it("covered held and loaded outputs, below-compliance (triode) outputs and cutoff", () => {
    expect(total).toBe(2 * perBatch);
    expect(held).toBeGreaterThanOrEqual(15);
    expect(total - held).toBeGreaterThanOrEqual(15);
    expect(tally.triode).toBeGreaterThanOrEqual(10);
    expect(belowCompliance).toBe(tally.triode);
    expect(tally.saturation).toBeGreaterThanOrEqual(15);
    expect(tally.cutoff).toBeGreaterThanOrEqual(1);
    console.log(`mirror vs ngspice: ${total} circuits (${held} held outputs), M2 regions ${JSON.stringify(tally)}, worst relative deviation ${worstRel.toExponential(2)}`);
  });
});
