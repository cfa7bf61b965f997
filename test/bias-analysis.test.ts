/**
 * The bias framework on its own terms: recorded reasoning, typed errors,
 * polarity symmetry, energy balance, closed form versus iteration, and the
 * record agreeing with the numbers. Device values are invented for the tests.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { hasClosedForm, newSolution, solveNetwork, type BiasNetwork } from "../lib/bias/solve.js";
import { topologyIds, type Stage } from "../lib/bias/topology.js";
import type { DeviceCard } from "../lib/device/card.js";
import { ConvergenceError, InfeasibleError, InputError } from "../lib/errors.js";
import * as biasFormulas from "../lib/formulas/bias.formulas.js";
import * as deviceFormulas from "../lib/formulas/device.formulas.js";
import { Derivation, type FormulaStep } from "../lib/record/derivation.js";
import { expectReevaluates } from "./support/reevaluate.js";

// Invented cards (not a real process).
const ncard: DeviceCard = { name: "test-n", polarity: "nmos", kp: 150e-6 as DeviceCard["kp"], vt0: 0.6 as DeviceCard["vt0"], lambda: 0.04 as DeviceCard["lambda"], gamma: 0.45 as DeviceCard["gamma"], phi: 0.7 as DeviceCard["phi"] };
const pcard: DeviceCard = { ...ncard, name: "test-p", polarity: "pmos", vt0: -0.6 as DeviceCard["vt0"] };
const dev = (card: DeviceCard) => ({ card, w: 20e-6 as Stage["device"]["w"], l: 1e-6 as Stage["device"]["l"] });
const steps = (rec: Derivation) => rec.steps.filter((s): s is FormulaStep => s.kind === "formula");
const allFormulas: Record<string, { fn: (...a: number[]) => number }> = { ...biasFormulas, ...deviceFormulas } as never;

const fourR = (over: Partial<Stage> & { components?: Record<string, number> } = {}): Stage => ({
  topology: "four-resistor",
  device: dev(ncard),
  components: { rg1: 300e3, rg2: 100e3, rd: 4.7e3, rs: 1e3 },
  supplies: { vdd: 9 } as Stage["supplies"],
  body: "rail",
  ...over,
});

describe("bias analysis: the record", () => {
  it("registers the five single-transistor topologies", () => {
    for (const id of ["fixed-gate", "four-resistor", "drain-feedback", "source-follower", "current-source-bias"]) expect(topologyIds()).toContain(id);
  });

  it("records every formula with the numbers that reproduce its result", () => {
    for (const stage of [fourR(), fourR({ device: dev({ ...ncard, lambda: 0 as DeviceCard["lambda"], gamma: 0 as DeviceCard["gamma"] }) })]) {
      const rec = new Derivation("t");
      analyzeStage(stage, rec);
      expect(steps(rec).length).toBeGreaterThan(10);
      for (const s of steps(rec)) {
        const f = allFormulas[s.formula];
        expect(f, s.formula).toBeDefined();
        const r = f!.fn(...s.inputs.map((i) => i.value));
        expect(Object.is(r, s.result.value) || Math.abs(r - s.result.value) <= 1e-15 * Math.abs(r), `${s.formula}`).toBe(true);
      }
    }
  });

  it("every recorded step re-evaluates with mathjs units to its recorded result, for all five topologies", () => {
    const flat = { ...ncard, lambda: 0 as DeviceCard["lambda"], gamma: 0 as DeviceCard["gamma"] };
    const stages: Stage[] = [
      fourR(),
      fourR({ device: dev(flat), components: { rg1: 100e3, rg2: 300e3, rd: 20e3, rs: 100 } }), // closed form, triode re-solve
      { topology: "fixed-gate", device: dev(pcard), components: { vg: 1, rd: 2e3, rs: 500 }, supplies: { vdd: 5 } as Stage["supplies"], body: "rail" },
      { topology: "drain-feedback", device: dev(flat), components: { rf: 1e6, rd: 10e3, rs: 1e3 }, supplies: { vdd: 5 } as Stage["supplies"] },
      { topology: "source-follower", device: dev(ncard), components: { rg1: 100e3, rg2: 100e3, rs: 2e3, rd: 500 }, supplies: { vdd: 5, vss: -5 } as Stage["supplies"], body: "rail" },
      { topology: "current-source-bias", device: dev(flat), components: { vg: 0, iss: 100e-6, rd: 20e3 }, supplies: { vdd: 2.5, vss: -2.5 } as Stage["supplies"] },
      { topology: "current-source-bias", device: dev(ncard), components: { vg: 0, iss: 100e-6, rd: 20e3 }, supplies: { vdd: 2.5, vss: -2.5 } as Stage["supplies"], body: "rail" },
    ];
    for (const st of stages) {
      const rec = new Derivation(st.topology);
      analyzeStage(st, rec);
      expect(expectReevaluates(rec)).toBeGreaterThan(10);
    }
  });

  it("gives the same numbers with and without a record", () => {
    const a = analyzeStage(fourR());
    const b = analyzeStage(fourR(), new Derivation("t"));
    expect(b.nodes).toEqual(a.nodes);
    expect(b.currents).toEqual(a.currents);
    expect(b.metrics).toEqual(a.metrics);
  });

  it("states the cutoff conclusion in numbers when the gate cannot reach threshold", () => {
    const rec = new Derivation("t");
    const a = analyzeStage(fourR({ components: { rg1: 1e6, rg2: 50e3, rd: 4.7e3, rs: 1e3 }, device: dev({ ...ncard, lambda: 0 as DeviceCard["lambda"] }), body: "source" }), rec);
    expect(a.region).toBe("cutoff");
    expect(a.currents.drainMagnitude).toBe(0);
    const note = rec.steps.find((s) => s.kind === "note" && s.title === "Region: cutoff");
    expect(note && note.kind === "note" && note.text).toMatch(/VOV0 = -0\.1\d* V ≤ 0/);
    expect(a.findings.some((f) => f.includes("cutoff"))).toBe(true);
    expect(a.metrics.amplifiers).toEqual([]);
  });

  it("records the first cut, then the exact iteration, when λ and the body effect enter", () => {
    const rec = new Derivation("t");
    const a = analyzeStage(fourR(), rec);
    expect(a.solver.method).toBe("bracketed-newton");
    const titles = rec.steps.map((s) => s.title);
    expect(titles).toContain("First cut");
    expect(titles).toContain("Exact solution");
    expect(steps(rec).some((s) => s.formula === "bodyEffectThreshold")).toBe(true);
    expect(rec.checks.find((c) => c.title.startsWith("Solver: device current equals"))?.passed).toBe(true);
  });
});

describe("bias analysis: bad input gets typed errors naming the field", () => {
  it("negative resistor", () => {
    const e = (() => {
      try {
        analyzeStage(fourR({ components: { rg1: 300e3, rg2: 100e3, rd: -4.7e3, rs: 1e3 } }));
      } catch (x) {
        return x;
      }
    })();
    expect(e).toBeInstanceOf(InputError);
    expect((e as Error).message).toMatch(/components\.rd: got -4700, expected a resistance ≥ 0 Ω/);
  });
  it("unknown and missing components, NaN, unknown topology", () => {
    expect(() => analyzeStage(fourR({ components: { rg1: 1, rg2: 1, rd: 1, rs: 1, rx: 3 } }))).toThrow(/components\.rx/);
    expect(() => analyzeStage(fourR({ components: { rg1: 1, rg2: 1, rd: 1 } }))).toThrow(/components\.rs: got nothing/);
    expect(() => analyzeStage(fourR({ components: { rg1: 1, rg2: 1, rd: NaN, rs: 1 } }))).toThrow(InputError);
    expect(() => analyzeStage(fourR({ topology: "cascode-thing" }))).toThrow(/one of the topology ids/);
  });
  it("supplies that are upside down are infeasible, explained in numbers", () => {
    expect(() => analyzeStage(fourR({ supplies: { vdd: -1, vss: 0 } as Stage["supplies"] }))).toThrow(InfeasibleError);
    expect(() => analyzeStage(fourR({ supplies: { vdd: -1, vss: 0 } as Stage["supplies"] }))).toThrow(/vdd = -1 V must be above supplies\.vss = 0 V/);
  });
  it("a current sink of zero is refused", () => {
    expect(() => analyzeStage({ topology: "current-source-bias", device: dev(ncard), components: { vg: 1, iss: 0, rd: 1e3 }, supplies: { vdd: 3 } as Stage["supplies"] })).toThrow(/iss: got 0, expected a current > 0 A/);
  });
  it("the solver names the stage when it cannot converge (a network forced out of its bracket)", () => {
    const n: BiasNetwork = { k: 1e-3, vt0: 0.5, gamma: 0, phi: 0.7, lambda: 0.01, clm: "continuous", vdr: 5, vsr: 0, gateToDrain: false, vg: 2, rd: 1e3, rs: 1e3, iss: 0, bodyToRail: false };
    expect(solveNetwork(n, newSolution(), "stage \"x\"").id).toBeGreaterThan(0);
    expect(() => solveNetwork({ ...n, vg: NaN }, newSolution(), 'stage "x"')).toThrow(ConvergenceError);
    expect(() => solveNetwork({ ...n, vg: NaN }, newSolution(), 'stage "x"')).toThrow(/stage "x"/);
  });
});

describe("bias analysis: properties", () => {
  const stageArb = fc
    .record({
      topology: fc.constantFrom("fixed-gate", "four-resistor", "drain-feedback", "source-follower", "current-source-bias"),
      vdd: fc.integer({ min: 20, max: 120 }).map((x) => x / 10),
      vss: fc.integer({ min: -30, max: 0 }).map((x) => x / 10),
      a: fc.integer({ min: 0, max: 1000 }).map((x) => x / 1000),
      r1: fc.integer({ min: 20, max: 60 }).map((x) => 10 ** (x / 10)),
      r2: fc.integer({ min: 20, max: 60 }).map((x) => 10 ** (x / 10)),
      r3: fc.integer({ min: 20, max: 50 }).map((x) => 10 ** (x / 10)),
      body: fc.constantFrom<"source" | "rail">("source", "rail"),
    })
    .map(({ topology, vdd, vss, a, r1, r2, r3, body }) => {
      const vg = vss + a * (vdd - vss);
      const components: Record<string, Record<string, number>> = {
        "fixed-gate": { vg, rd: r1, rs: r3 },
        "four-resistor": { rg1: r1 * 100, rg2: r2 * 100, rd: r3, rs: r2 / 10 },
        "drain-feedback": { rf: r1 * 100, rd: r3, rs: r2 / 10 },
        "source-follower": { rg1: r1 * 100, rg2: r2 * 100, rs: r3 },
        "current-source-bias": { vg, iss: 1e-3 / r2 * 100, rd: r3 },
      };
      return { topology, device: dev(ncard), components: components[topology]!, supplies: { vdd, vss } as Stage["supplies"], body } as Stage;
    });

  it("a PMOS stage is the NMOS stage with every voltage negated (rails swapped)", () => {
    fc.assert(
      fc.property(stageArb, (st) => {
        const n = analyzeStage(st);
        const c = { ...st.components } as Record<string, number>;
        if (c.vg !== undefined) c.vg = -c.vg;
        if (c.rg1 !== undefined) [c.rg1, c.rg2] = [c.rg2!, c.rg1];
        const mirrored: Stage = { ...st, device: dev(pcard), components: c, supplies: { vdd: -st.supplies.vss!, vss: -st.supplies.vdd } as Stage["supplies"] };
        const p = analyzeStage(mirrored);
        expect(p.region).toBe(n.region);
        for (const node of ["gate", "source", "drain"]) expect(p.nodes[node]).toBeCloseTo(-n.nodes[node]!, 9);
        expect(p.currents.drainMagnitude).toBeCloseTo(n.currents.drainMagnitude!, 12);
        expect(p.op.id).toBeCloseTo(-n.op.id, 12);
      }),
      { seed: 7, numRuns: 150 },
    );
  });

  it("the supplies deliver exactly the power the components and the transistor dissipate", () => {
    fc.assert(
      fc.property(stageArb, (st) => {
        const a = analyzeStage(st);
        const delivered = (st.supplies.vdd - (st.supplies.vss ?? 0)) * a.currents.supply!;
        expect(Math.abs(a.power.total - delivered)).toBeLessThanOrEqual(1e-12 + 1e-9 * Math.abs(delivered));
      }),
      { seed: 11, numRuns: 150 },
    );
  });

  it("the closed form agrees with the iteration (λ → 0) to 1e-9", () => {
    fc.assert(
      fc.property(stageArb, (st) => {
        const card0 = { ...ncard, lambda: 0 as DeviceCard["lambda"], gamma: 0 as DeviceCard["gamma"] };
        const exact = analyzeStage({ ...st, device: dev(card0) });
        expect(exact.solver.method === "closed-form" || exact.solver.method === "direct").toBe(true);
        const iter = analyzeStage({ ...st, device: dev({ ...card0, lambda: 1e-14 as DeviceCard["lambda"] }) });
        expect(iter.solver.method).not.toBe("closed-form");
        for (const node of ["source", "drain"]) expect(Math.abs(iter.nodes[node]! - exact.nodes[node]!)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(exact.nodes[node]!)));
        expect(iter.region).toBe(exact.region);
      }),
      { seed: 13, numRuns: 150 },
    );
  });

  it("closed forms are used exactly when λ = 0 and there is no body effect", () => {
    const base: BiasNetwork = { k: 1e-3, vt0: 0.5, gamma: 0.4, phi: 0.7, lambda: 0, clm: "continuous", vdr: 5, vsr: 0, gateToDrain: false, vg: 2, rd: 1e3, rs: 1e3, iss: 0, bodyToRail: true };
    expect(hasClosedForm(base)).toBe(false);
    expect(hasClosedForm({ ...base, bodyToRail: false })).toBe(true);
    expect(hasClosedForm({ ...base, rs: 0 })).toBe(true);
    expect(hasClosedForm({ ...base, gamma: 0, lambda: 0.01 })).toBe(false);
  });
});

describe("bias analysis: stages with no resistance in the loop", () => {
  it("RD = RS = 0: the rails set VGS and VDS; saturation or triode follows from the device law", () => {
    const flat = { ...ncard, lambda: 0 as DeviceCard["lambda"], gamma: 0 as DeviceCard["gamma"] };
    for (const [vg, vdd, region] of [[1.2, 5, "saturation"], [6, 1, "triode"], [0.3, 5, "cutoff"]] as const) {
      for (const card of [flat, ncard]) {
        const rec = new Derivation("t");
        const a = analyzeStage({ topology: "fixed-gate", device: dev(card), components: { vg, rd: 0 }, supplies: { vdd } as Stage["supplies"] }, rec);
        expect(a.region).toBe(region);
        expect(a.nodes.drain).toBe(vdd);
        expect(a.currents.drainMagnitude).toBeCloseTo(Math.abs(a.op.id), 15);
      }
    }
  });
});

describe("bias analysis: model options", () => {
  it("clm \"saturation-only\" solves triode without (1 + λ·VDS), continuous with it (SPICE Level 1)", () => {
    const base: Stage = { topology: "fixed-gate", device: dev(ncard), components: { vg: 3, rd: 20e3, rs: 200 }, supplies: { vdd: 5 } as Stage["supplies"], body: "rail" };
    for (const clm of ["saturation-only", "continuous"] as const) {
      const a = analyzeStage({ ...base, options: { clm } });
      expect(a.region).toBe("triode");
      const k = (150e-6 * 20e-6) / 1e-6;
      const vds = a.op.vdsDevice;
      const plain = k * (a.op.vov - vds / 2) * vds;
      expect(a.currents.drainMagnitude).toBeCloseTo(clm === "continuous" ? plain * (1 + 0.04 * vds) : plain, 15);
      // KCL: the same current through RD.
      expect((5 - a.nodes.drain!) / 20e3).toBeCloseTo(a.currents.drainMagnitude!, 15);
    }
  });
});

describe("bias analysis: metrics (small-signal model, common practice)", () => {
  it("common-source gain with ro equals −gm·(RD ∥ ro); degeneration lowers it", () => {
    const a = analyzeStage(fourR());
    const cs = a.metrics.amplifiers.find((m) => m.kind === "common-source")!;
    const { gm, ro } = a.smallSignal;
    expect(cs.gain).toBeCloseTo((-gm * (4.7e3 * ro)) / (4.7e3 + ro), 9);
    const deg = a.metrics.amplifiers.find((m) => m.kind === "common-source-degenerated")!;
    expect(Math.abs(deg.gain)).toBeLessThan(Math.abs(cs.gain));
    expect(cs.rin).toBeCloseTo(75e3, 6);
  });
  it("a source follower has gain below one, and the swing limits bracket the quiescent point", () => {
    const a = analyzeStage({ topology: "source-follower", device: dev(ncard), components: { rg1: 100e3, rg2: 100e3, rs: 2e3 }, supplies: { vdd: 5 } as Stage["supplies"], body: "rail" });
    const f = a.metrics.amplifiers[0]!;
    expect(f.kind).toBe("source-follower");
    expect(f.gain).toBeGreaterThan(0);
    expect(f.gain).toBeLessThan(1);
    const sw = a.metrics.swing[0]!;
    expect(sw.lower).toBeLessThanOrEqual(sw.quiescent);
    expect(sw.upper).toBeGreaterThanOrEqual(sw.quiescent);
  });
  it("limits turn into checks with margins", () => {
    const a = analyzeStage(fourR({ limits: { maxDevicePower: 1e-3 as never, minSaturationMargin: 0.3 as never } }));
    const p = a.metrics.checks.find((c) => c.name === "Transistor dissipation")!;
    expect(p.margin).toBeCloseTo(1e-3 - a.power.transistor, 15);
    const m = a.metrics.checks.find((c) => c.name.startsWith("Saturation margin"))!;
    expect(m.min).toBe(0.3);
    expect(m.passed).toBe(m.value >= 0.3);
  });
});

describe("currents carry their sign convention in their name (issue 7 item 22)", () => {
  it("drainMagnitude is |channel current| beside the signed op.id, for NMOS and PMOS", () => {
    for (const card of [ncard, pcard]) {
      const a = analyzeStage(fourR({ device: dev(card), components: { rg1: 300e3, rg2: 100e3, rd: 4.7e3, rs: 1e3 } }));
      expect("drain" in a.currents).toBe(false);
      expect(a.currents.drainMagnitude).toBeGreaterThan(0);
      expect(a.currents.drainMagnitude).toBeCloseTo(Math.abs(a.op.id), 15);
      expect(Math.sign(a.op.id)).toBe(card.polarity === "nmos" ? 1 : -1);
    }
  });
});
