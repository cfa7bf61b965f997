/**
 * Current mirror with a reference resistor: a worked textbook example, the
 * square-law relations the analysis must satisfy, the record, the SPICE deck,
 * and bad input. The agreement with ngspice is in bias-mirror-ngspice.test.ts.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { analyzeStage, spiceDeck } from "../lib/bias/analyze.js";
import { analyzeMirror, mirrorOutputCurve, type CurrentMirrorStage, type MirrorAnalysis } from "../lib/bias/topologies/current-mirror.js";
import type { DeviceCard } from "../lib/device/card.js";
import { InfeasibleError, InputError, PinchoffError } from "../lib/errors.js";
import * as bf from "../lib/formulas/bias.formulas.js";
import * as df from "../lib/formulas/device.formulas.js";
import * as mf from "../lib/formulas/mirror.formulas.js";
import { amperesPerVoltSquared, meters, ohms, perVolt, volts } from "../lib/quantity.js";
import { Derivation, type FormulaStep } from "../lib/record/derivation.js";

const nmos = (over: Partial<DeviceCard> = {}): DeviceCard => ({ name: "invented-n", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.7), lambda: perVolt(0), provenance: "invented for the tests", ...over });
const pmosOf = (c: DeviceCard): DeviceCard => ({ ...c, name: `${c.name}-p`, polarity: "pmos", vt0: volts(-c.vt0) });

/** Component values given in plain SI numbers; only the fields given are set (the bad-input tests rely on absent ones). */
interface PlainComponents {
  readonly rref: number;
  readonly vout?: number;
  readonly rload?: number;
}
const branded = (c: PlainComponents): CurrentMirrorStage["components"] => ({
  rref: ohms(c.rref),
  ...(c.vout !== undefined ? { vout: volts(c.vout) } : {}),
  ...(c.rload !== undefined ? { rload: ohms(c.rload) } : {}),
});

function mirror(over: { card?: DeviceCard; out?: DeviceCard; w1?: number; w2?: number; components?: PlainComponents; vdd?: number; vss?: number } = {}): CurrentMirrorStage {
  const card = over.card ?? nmos();
  return {
    topology: "current-mirror",
    name: "invented mirror",
    device: { card: over.out ?? card, w: meters(over.w2 ?? 10e-6), l: meters(1e-6) },
    devices: { reference: { card, w: meters(over.w1 ?? 10e-6), l: meters(1e-6) } },
    components: branded(over.components ?? { rref: 19.84e3, vout: 1.5 }),
    supplies: { vdd: volts(over.vdd ?? 3), vss: volts(over.vss ?? 0) },
  };
}

/** Every formula the record names, by id (ids are unique across the three catalogs). */
const byId = new Map<string, { fn: (...a: number[]) => number }>();
for (const mod of [bf, df, mf]) for (const f of Object.values(mod)) {
  expect(byId.has(f.id), `formula id ${f.id} defined twice`).toBe(false);
  byId.set(f.id, f as never);
}
/** Each recorded formula step re-evaluates to its recorded result from its recorded arguments. */
function expectStepsReplay(rec: Derivation): number {
  const steps = rec.steps.filter((s): s is FormulaStep => s.kind === "formula");
  for (const s of steps) {
    const f = byId.get(s.formula);
    expect(f, s.formula).toBeDefined();
    expect(f!.fn(...s.inputs.map((i) => i.value)), `${s.formula} replayed`).toBe(s.result.value);
  }
  return steps.length;
}

describe("Sedra & Smith, Microelectronic Circuits, 6th ed., Example 8.1 (basic MOSFET current source; values and example number from memory)", () => {
  // VDD = 3 V, IREF = 100 µA wanted, W/L = 10 µm/1 µm matched, Vt = 0.7 V, k'n = 200 µA/V², V'A = 20 V/µm.
  // The book: VOV = 0.316 V, VGS = 1.016 V, R = 19.84 kΩ, VO,min = 0.316 V, ro = 200 kΩ, ΔIO = 5 µA for ΔVO = +1 V.
  it("R = 19.84 kΩ gives IREF = 100 µA at VGS = 1.016 V; the lowest output is VOV = 0.316 V (λ = 0, as the book designs it)", () => {
    const a = analyzeMirror(mirror());
    expect(a.mirror.referenceCurrent / 100e-6).toBeCloseTo(1, 3); // 19.84 kΩ is the book's rounding
    // Unrounded, the book's method R = (VDD − VGS)/IREF with VGS = Vt + √(2·IREF/k) gives exactly 100 µA.
    const rExact = (3 - (0.7 + Math.sqrt((2 * 100e-6) / (200e-6 * 10)))) / 100e-6;
    expect(rExact / 1e3).toBeCloseTo(19.84, 2);
    const b = analyzeMirror(mirror({ components: { rref: rExact, vout: 1.5 } }));
    expect(Math.abs(b.mirror.referenceCurrent - 100e-6)).toBeLessThan(1e-12 * 100e-6 * 10);
    expect(a.mirror.gateSource).toBeCloseTo(1.016, 3);
    expect(a.mirror.compliance).toBeCloseTo(0.316, 3);
    expect(a.mirror.outputCurrent).toBeCloseTo(a.mirror.referenceCurrent, 15); // matched, λ = 0: an exact copy
    expect(a.region).toBe("saturation");
    expect(a.devices!.reference!.region).toBe("saturation");
  });
  it("with λ = 1/VA = 1/(20 V/µm · 1 µm): ro ≈ 200 kΩ and a +1 V output step adds ≈ 5 µA", () => {
    const st = mirror({ card: nmos({ lambda: perVolt(0.05) }) });
    const a = analyzeMirror(st);
    // Level 1 gives gds = λ·(k/2)·VOV², without the (1 + λ·VDS) the book's ro = VA/IO folds in, and the reference
    // current itself rises by (1 + λ·VGS); so within 5 % of the book's figures, not equal to them.
    expect(a.mirror.outputResistance / 200e3).toBeGreaterThan(0.95);
    expect(a.mirror.outputResistance / 200e3).toBeLessThan(1.05);
    const [i1, i2] = mirrorOutputCurve(st, [1.5, 2.5]);
    expect((i2! - i1!) / 5e-6).toBeGreaterThan(0.95);
    expect((i2! - i1!) / 5e-6).toBeLessThan(1.05);
    // And exactly the Level 1 slope: ΔI = gds·ΔV in saturation (the current is linear in VDS there).
    expect(i2! - i1!).toBeCloseTo(a.smallSignal.gds * 1, 15);
  });
});

describe("square-law relations of the mirror", () => {
  it("the reference root satisfies both branch equations, and the rejected root lies below Vt (λ = 0)", () => {
    const rec = new Derivation("mirror");
    const a = analyzeMirror(mirror({ components: { rref: 47e3, vout: 2 }, vdd: 5 }), rec);
    const k = 200e-6 * 10;
    const vgs = a.mirror.gateSource;
    expect((5 - vgs) / 47e3).toBeCloseTo(a.mirror.referenceCurrent, 17);
    expect((k / 2) * (vgs - 0.7) ** 2).toBeCloseTo(a.mirror.referenceCurrent, 17);
    const rejected = rec.steps.find((s): s is FormulaStep => s.kind === "formula" && s.formula === "referenceGateSourceRejected");
    expect(rejected!.result.value).toBeLessThan(0.7);
    expect(rec.steps.some((s) => s.kind === "note" && s.title === "Root rejected")).toBe(true);
    expect(rec.steps.some((s) => s.kind === "note" && s.title === "M1 is saturated whenever it conducts")).toBe(true);
    expect(a.solver.method).toBe("closed-form");
  });

  it("with λ and unequal W/L: IOUT = IREF·(W2/L2)/(W1/L1)·(1 + λVDS2)/(1 + λVDS1) above compliance", () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.005, max: 0.15, noNaN: true }),
        fc.double({ min: 0.25, max: 8, noNaN: true }),
        fc.double({ min: 5e3, max: 500e3, noNaN: true }),
        fc.double({ min: 0.3, max: 1, noNaN: true }),
        (lambda, n, rref, at) => {
          const st = mirror({ card: nmos({ lambda: perVolt(lambda) }), w2: 10e-6 * n, components: { rref, vout: 0 }, vdd: 5 });
          const vgs = analyzeMirror(st).mirror.gateSource;
          const vout = vgs - 0.7 + at * (5 - (vgs - 0.7)); // above compliance
          const a = analyzeMirror({ ...st, components: branded({ rref, vout }) });
          const expected = a.mirror.referenceCurrent * n * ((1 + lambda * vout) / (1 + lambda * vgs));
          expect(a.region).toBe("saturation");
          expect(Math.abs(a.mirror.outputCurrent - expected)).toBeLessThanOrEqual(1e-12 * expected);
        },
      ),
      { seed: 81, numRuns: 60 },
    );
  });

  it("below compliance M2 is in triode with k2·(VOV − VDS/2)·VDS·(1 + λVDS), and the finding says how far short it falls", () => {
    const a = analyzeMirror(mirror({ card: nmos({ lambda: perVolt(0.04) }), components: { rref: 19.84e3, vout: 0.1 } }));
    const vov = a.mirror.gateSource - 0.7;
    expect(a.region).toBe("triode");
    expect(a.mirror.complianceMargin).toBeCloseTo(0.1 - vov, 15);
    expect(a.mirror.outputCurrent).toBeCloseTo(2e-3 * (vov - 0.05) * 0.1 * (1 + 0.004), 17);
    expect(a.metrics.checks.find((c) => c.name.startsWith("Output compliance"))!.passed).toBe(false);
    expect(a.findings.some((f) => f.includes("below compliance") && f.includes("% short"))).toBe(true);
    expect(a.metrics.swing[0]!.headroomDown).toBeLessThan(0);
  });

  it("the output characteristic is continuous at compliance and matches the analysis at each held voltage", () => {
    const st = mirror({ card: nmos({ lambda: perVolt(0.05) }) });
    const vc = analyzeMirror(st).mirror.compliance;
    const vs = [0, 0.05, 0.2, vc - 1e-9, vc, vc + 1e-9, 1, 2, 3];
    const curve = mirrorOutputCurve(st, vs);
    vs.forEach((v, i) => expect(curve[i]).toBeCloseTo(analyzeMirror({ ...st, components: branded({ rref: 19.84e3, vout: v }) }).op.id, 18));
    expect(Math.abs(curve[4]! - curve[3]!)).toBeLessThan(1e-12);
    expect(Math.abs(curve[5]! - curve[4]!)).toBeLessThan(1e-12);
  });

  it("a load resistor: VOUT = VDD − IOUT·RLOAD, triode when RLOAD is too large for the current", () => {
    for (const rload of [0, 1e3, 20e3, 200e3]) {
      const a = analyzeMirror(mirror({ card: nmos({ lambda: perVolt(0.03) }), components: { rref: 19.84e3, rload } }));
      expect(a.nodes.drain).toBeCloseTo(3 - a.mirror.outputCurrent * rload, 9);
      expect(a.region).toBe(a.nodes.drain! - 0 >= a.mirror.compliance ? "saturation" : "triode");
      expect(a.currents.supply).toBeCloseTo(a.mirror.referenceCurrent + a.mirror.outputCurrent, 18);
    }
    expect(analyzeMirror(mirror({ components: { rref: 19.84e3, rload: 200e3 } })).region).toBe("triode");
  });

  it("a PMOS mirror is the NMOS one reflected through the rails: nodes negated, currents the same magnitude", () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 0.12, noNaN: true }), fc.double({ min: 2e3, max: 1e6, noNaN: true }), fc.double({ min: 0, max: 1, noNaN: true }), (lambda, rref, at) => {
        const n = mirror({ card: nmos({ lambda: perVolt(lambda) }), components: { rref, vout: -at * 3 }, vdd: 0, vss: -3 });
        const p = mirror({ card: pmosOf(nmos({ lambda: perVolt(lambda) })), components: { rref, vout: at * 3 }, vdd: 3, vss: 0 });
        const an = analyzeMirror(n);
        const ap = analyzeMirror(p);
        for (const node of ["gate", "drain", "source"] as const) expect(ap.nodes[node]).toBeCloseTo(-an.nodes[node]!, 12);
        expect(ap.op.id).toBeCloseTo(-an.op.id, 18);
        expect(ap.region).toBe(an.region);
        expect(ap.mirror.compliance).toBeCloseTo(-an.mirror.compliance, 12);
      }),
      { seed: 82, numRuns: 40 },
    );
  });

  it("an output transistor on another card mirrors by its own parameters and says so", () => {
    const a = analyzeMirror(mirror({ out: nmos({ name: "invented-n2", vt0: volts(0.8) }) }));
    const vov = a.mirror.gateSource - 0.8;
    expect(a.mirror.outputCurrent).toBeCloseTo(1e-3 * vov * vov, 18);
    expect(a.findings.some((f) => f.includes("different cards"))).toBe(true);
  });
});

describe("the mirror's record", () => {
  it("every recorded formula replays exactly; recording does not change the numbers; checks carry margins", () => {
    for (const components of [{ rref: 33e3, vout: 2.2 }, { rref: 33e3, vout: 0.05 }, { rref: 33e3, rload: 10e3 }]) {
      const st = mirror({ card: nmos({ lambda: perVolt(0.02) }), components, vdd: 3.3 });
      const rec = new Derivation("mirror");
      const a = analyzeMirror(st, rec);
      expect(expectStepsReplay(rec)).toBeGreaterThan(15);
      const b = analyzeMirror(st);
      expect(b.nodes).toEqual(a.nodes);
      expect(b.currents).toEqual(a.currents);
      expect(rec.checks.find((c) => c.title.startsWith("Output compliance"))!.margin).toBeCloseTo(a.mirror.complianceMargin, 15);
      expect(rec.findings.some((f) => f.text.startsWith("Hand analysis") && f.severity === "caution")).toBe(true);
    }
  });
  it("the SPICE deck holds both models, RREF with its ammeter, both instances and the held output", () => {
    const deck = spiceDeck(mirror({ card: pmosOf(nmos({ lambda: perVolt(0.02) })), components: { rref: 10e3, vout: 1 } }));
    expect(deck).toMatch(/^\.model modref pmos level=1 vto=-0\.7 kp=0\.0002 lambda=0\.02/m);
    expect(deck).toMatch(/^RREF vss y 10000$/m);
    expect(deck).toMatch(/^VIR y g 0$/m);
    expect(deck).toMatch(/^M1 g g vdd vdd modref W=0\.00001 L=0\.000001$/m);
    expect(deck).toMatch(/^M2 d g vdd vdd modout /m);
    expect(deck).toMatch(/^VOUT x 0 1$/m);
    expect(deck).toMatch(/^\.op$/m);
  });
});

describe("bad input to the mirror", () => {
  const err = (f: () => unknown) => {
    try {
      f();
    } catch (e) {
      return e as PinchoffError;
    }
    throw new Error("no error thrown");
  };
  it("zero or negative RREF names the field and what is expected", () => {
    for (const rref of [0, -1e3]) {
      const e = err(() => analyzeStage(mirror({ components: { rref, vout: 1 } })));
      expect(e).toBeInstanceOf(InputError);
      expect(e.message).toContain("components.rref");
      expect(e.message).toMatch(/RREF > 0|≥ 0 Ω/);
    }
    expect(err(() => analyzeStage(mirror({ components: { rref: NaN, vout: 1 } }))).message).toContain("components.rref");
  });
  it("a supply too low to turn M1 on is infeasible, explained in numbers", () => {
    const e = err(() => analyzeStage(mirror({ vdd: 0.6, components: { rref: 10e3, vout: 0.3 } })));
    expect(e).toBeInstanceOf(InfeasibleError);
    expect(e.message).toContain("0.6 V");
    expect(e.message).toContain("|Vt| = 0.7 V");
    expect(e.message).toContain("short by 0.1 V");
    expect(e.message).toContain("supplies");
  });
  it("unknown components, device roles and design fields are refused by name", () => {
    expect(err(() => analyzeStage({ ...mirror(), components: { rref: 1e4, vout: 1, rd: 5 } } as never)).message).toContain("components.rd");
    const e = err(() => analyzeStage({ ...mirror(), devices: { reference: mirror().devices!.reference!, cascode: mirror().device } } as never));
    expect(e.code).toBe("invalid-design");
    expect(e.message).toContain("devices.cascode");
    expect(err(() => analyzeStage({ ...mirror(), devices: undefined } as never)).message).toContain("devices");
  });
  it("exactly one of vout and rload; vout between the rails; one polarity; an enhancement reference", () => {
    expect(err(() => analyzeStage(mirror({ components: { rref: 1e4 } }))).message).toContain("neither vout nor rload");
    expect(err(() => analyzeStage(mirror({ components: { rref: 1e4, vout: 1, rload: 1e3 } }))).message).toContain("both vout and rload");
    expect(err(() => analyzeStage(mirror({ components: { rref: 1e4, vout: 3.5 } }))).message).toContain("components.vout");
    expect(err(() => analyzeStage(mirror({ components: { rref: 1e4, rload: -5 } }))).message).toContain("components.rload");
    expect(err(() => analyzeStage(mirror({ out: pmosOf(nmos()) }))).message).toContain("polarity");
    const dep = err(() => analyzeStage(mirror({ card: nmos({ vt0: volts(-0.5) }) })));
    expect(dep).toBeInstanceOf(InputError);
    expect(dep.message).toContain("devices.reference.card.vt0");
    expect(dep.message).toContain("enhancement");
  });
});

// Keep the analysis type in use for readers of this file.
export type { MirrorAnalysis };

describe("public API (issue 7 item 22)", () => {
  it("the package entry exports every built-in topology and the mirror's and diode load's own analyses", async () => {
    const api = await import("../lib/index.js");
    expect(Object.values(api.builtinTopologies).map((t) => t.id).sort()).toEqual([...api.topologyIds()].sort());
    expect(Object.keys(api.builtinTopologies)).toHaveLength(12); // seven single- and two-transistor stages, two pairs, two cascodes, the two-stage amplifier
    expect(typeof api.analyzeMirror).toBe("function");
    expect(typeof api.analyzeDiodeLoad).toBe("function");
    expect(typeof api.mirrorOutputCurve).toBe("function");
    const figures: keyof import("../lib/index.js").MirrorAnalysis = "mirror";
    expect(figures).toBe("mirror");
  });
});
