/**
 * Common source with a diode-connected load: the textbook gain relation, the
 * closed forms against the numeric solve, cutoff, swing limits, the record,
 * the SPICE deck and bad input. Agreement with ngspice is in
 * bias-diode-load-ngspice.test.ts.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { analyzeStage, spiceDeck } from "../lib/bias/analyze.js";
import type { DiodeLoadStage } from "../lib/bias/topologies/diode-load.js";
import type { BodyTie } from "../lib/bias/topology.js";
import type { DeviceCard } from "../lib/device/card.js";
import { thresholdMagnitude } from "../lib/device/threshold.js";
import { InfeasibleError, InputError, type PinchoffError } from "../lib/errors.js";
import * as bf from "../lib/formulas/bias.formulas.js";
import * as df from "../lib/formulas/device.formulas.js";
import * as mf from "../lib/formulas/mirror.formulas.js";
import { amperesPerVoltSquared, meters, perVolt, sqrtVolts, volts, type SqrtVolts, type Volts } from "../lib/quantity.js";
import { Derivation, type FormulaStep } from "../lib/record/derivation.js";

// Invented cards for the tests.
const n = (over: Partial<DeviceCard> = {}): DeviceCard => ({ name: "invented-n", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.6), lambda: perVolt(0), gamma: sqrtVolts(0), phi: volts(0.7), ...over });
const p = (over: Partial<DeviceCard> = {}): DeviceCard => ({ name: "invented-p", polarity: "pmos", kp: amperesPerVoltSquared(80e-6), vt0: volts(-0.7), lambda: perVolt(0), gamma: sqrtVolts(0), phi: volts(0.7), ...over });

function stage(o: { drv?: DeviceCard; load?: DeviceCard; w1?: number; w2?: number; vg?: number; vdd?: number; vss?: number; body?: BodyTie } = {}): DiodeLoadStage {
  return {
    topology: "diode-load",
    name: "invented diode-load stage",
    device: { card: o.drv ?? n(), w: meters(o.w1 ?? 20e-6), l: meters(1e-6) },
    devices: { load: { card: o.load ?? p(), w: meters(o.w2 ?? 5e-6), l: meters(1e-6) } },
    components: { vg: volts(o.vg ?? 1) },
    supplies: { vdd: volts(o.vdd ?? 3.3), vss: volts(o.vss ?? 0) },
    ...(o.body ? { body: o.body } : {}),
  };
}

const byId = new Map<string, { fn: (...a: number[]) => number }>();
for (const mod of [bf, df, mf]) for (const f of Object.values(mod)) byId.set(f.id, f as never);
function expectStepsReplay(rec: Derivation): number {
  const steps = rec.steps.filter((s): s is FormulaStep => s.kind === "formula");
  for (const s of steps) expect(byId.get(s.formula)!.fn(...s.inputs.map((i) => i.value)), `${s.formula} replayed`).toBe(s.result.value);
  return steps.length;
}

describe("gain of a common source with a diode-connected load (Razavi, Design of Analog CMOS Integrated Circuits, 1st ed., McGraw-Hill 2001, section 3.3.2; from memory)", () => {
  // The book's relations for λ = 0 and a saturated driver:
  //   PMOS diode load:  Av = −√(µn·Cox·(W/L)1 / (µp·Cox·(W/L)2))
  //   NMOS diode load:  Av = −√((W/L)1/(W/L)2) · 1/(1 + η),  η = gmb2/gm2 = γ/(2·√(2φF + VSB2)).
  it("complementary load: Av = −√(k1/k2)", () => {
    const a = analyzeStage(stage());
    expect(a.region).toBe("saturation");
    const expected = -Math.sqrt((200e-6 * 20) / (80e-6 * 5));
    expect(a.metrics.amplifiers[0]!.gain).toBeCloseTo(expected, 12);
  });
  it("same-type load with body effect: Av = −√((W/L)1/(W/L)2)/(1 + η) at the solved VSB", () => {
    const st = stage({ load: n({ gamma: sqrtVolts(0.45) }), w2: 2e-6, vg: 0.9, body: "rail" });
    const a = analyzeStage(st);
    expect(a.nodes.drain).toBeDefined();
    const vsb = a.nodes.drain! - 0;
    const eta = 0.45 / (2 * Math.sqrt(0.7 + vsb));
    expect(a.region).toBe("saturation");
    expect(a.metrics.amplifiers[0]!.gain).toBeCloseTo(-Math.sqrt(20 / 2) / (1 + eta), 9);
    expect(a.devices!.load!.op.vsbDevice).toBeCloseTo(vsb, 12);
  });
});

describe("operating point", () => {
  it("λ = 0, no body effect: VOUT = VDD − |Vt2| − √(k1/k2)·VOV1, equal currents, both saturated", () => {
    const a = analyzeStage(stage());
    const k1 = 200e-6 * 20;
    const k2 = 80e-6 * 5;
    expect(a.solver.method).toBe("closed-form");
    expect(a.nodes.drain).toBeCloseTo(3.3 - 0.7 - Math.sqrt(k1 / k2) * 0.4, 12);
    expect(a.currents.drainMagnitude).toBeCloseTo((k1 / 2) * 0.4 ** 2, 15);
    expect(a.devices!.load!.region).toBe("saturation");
  });
  it("the closed forms (driver saturated or in triode) agree with the numeric solve at vanishing λ", () => {
    fc.assert(
      fc.property(fc.double({ min: 0.61, max: 3.3, noNaN: true }), fc.double({ min: 1e-6, max: 50e-6, noNaN: true }), fc.boolean(), (vg, w2, same) => {
        const load = same ? n({ name: "invented-n-load" }) : p();
        const exact = analyzeStage(stage({ vg, w2, load }));
        const numeric = analyzeStage(stage({ vg, w2, load: { ...load, lambda: perVolt(1e-13) }, drv: n({ lambda: perVolt(1e-13) }) }));
        expect(exact.solver.method).toBe("closed-form");
        expect(numeric.solver.method).toBe("bracketed-regula-falsi");
        expect(numeric.region).toBe(exact.region);
        expect(numeric.nodes.drain).toBeDefined();
        expect(exact.nodes.drain).toBeDefined();
        expect(Math.abs(numeric.nodes.drain! - exact.nodes.drain!)).toBeLessThan(1e-9);
      }),
      { seed: 91, numRuns: 80 },
    );
    // Both branches were exercised by that range: a weak load drives the driver into triode.
    expect(analyzeStage(stage({ vg: 3, w2: 50e-6 })).region).toBe("triode");
    expect(analyzeStage(stage({ vg: 0.8, w2: 1e-6 })).region).toBe("saturation");
  });
  it("with λ and body effect, the load and driver currents balance (KCL) and the record shows the iteration", () => {
    const rec = new Derivation("diode load");
    const a = analyzeStage(stage({ drv: n({ lambda: perVolt(0.08) }), load: n({ name: "invented-n-load", lambda: perVolt(0.05), gamma: sqrtVolts(0.5) }), w2: 3e-6, vg: 1.1, body: "rail" }), rec);
    expect(a.currents.drainMagnitude).toBeDefined();
    expect(Math.abs(Math.abs(a.devices!.load!.op.channelCurrent) - a.currents.drainMagnitude!)).toBeLessThan(1e-12 * a.currents.drainMagnitude!);
    expect(rec.checks.find((c) => c.title.startsWith("Solver: load current equals"))!.passed).toBe(true);
    expect(rec.steps.some((s) => s.kind === "note" && s.title === "Exact solution")).toBe(true);
    expect(expectStepsReplay(rec)).toBeGreaterThan(20);
  });
  it("a PMOS driver with an NMOS diode load is the NMOS stage reflected through the rails", () => {
    const a = analyzeStage(stage({ drv: n({ lambda: perVolt(0.03) }), load: p({ lambda: perVolt(0.02) }), vg: 1.2 }));
    const b = analyzeStage(stage({ drv: p({ ...n({ lambda: perVolt(0.03) }), polarity: "pmos", vt0: volts(-0.6), name: "invented-p-drv" }), load: n({ ...p({ lambda: perVolt(0.02) }), polarity: "nmos", vt0: volts(0.7), name: "invented-n-load" }), vg: -1.2, vdd: 0, vss: -3.3 }));
    expect(a.nodes.drain).toBeDefined();
    expect(b.nodes.drain).toBeCloseTo(-a.nodes.drain!, 12);
    expect(b.op.id).toBeCloseTo(-a.op.id, 17);
    expect(b.metrics.amplifiers[0]!.gain).toBeCloseTo(a.metrics.amplifiers[0]!.gain, 10);
  });
});

describe("cutoff and swing", () => {
  it("driver cut off: no current, output at the load's conduction edge VDD − |Vt2|, no gain, and the finding says it floats", () => {
    const a = analyzeStage(stage({ vg: 0.5 }));
    expect(a.region).toBe("cutoff");
    expect(a.currents.drainMagnitude).toBe(0);
    expect(a.nodes.drain).toBeCloseTo(3.3 - 0.7, 14);
    expect(a.devices!.load!.region).toBe("cutoff");
    expect(a.metrics.amplifiers).toEqual([]);
    expect(a.findings.some((f) => f.includes("cutoff") && f.includes("leakage"))).toBe(true);
  });
  it("with a body-affected load the edge satisfies VDD − VOUT = Vt2(VSB = VOUT)", () => {
    const a = analyzeStage(stage({ vg: 0.2, load: n({ name: "invented-n-load", gamma: sqrtVolts(0.6) }), body: "rail" }));
    const vout = a.nodes.drain;
    expect(vout).toBeDefined();
    const vt2 = thresholdMagnitude(0.6 as Volts, 0.6 as SqrtVolts, 0.7 as Volts, vout!);
    expect(3.3 - vout!).toBeCloseTo(vt2, 12);
    expect(a.devices!.load!.region).toBe("cutoff");
  });
  it("swing: up to the load's edge, down to the driver's triode edge where (k1/2)·VOUT² = load current", () => {
    for (const st of [stage({ vg: 1 }), stage({ vg: 1, drv: n({ lambda: perVolt(0.05) }), load: n({ name: "invented-n-load", gamma: sqrtVolts(0.4), lambda: perVolt(0.05) }), w2: 2e-6, body: "rail" })]) {
      const a = analyzeStage(st);
      const sw = a.metrics.swing[0]!;
      const k1 = 200e-6 * 20;
      const lambda1 = st.device.card.lambda ?? 0;
      const edge = (k1 / 2) * sw.lower ** 2 * (1 + lambda1 * sw.lower);
      const loadAt = analyzeStage({ ...st, components: { vg: volts(sw.lower + 0.6) } }); // gate where the driver sits at its triode edge
      expect(loadAt.currents.drainMagnitude).toBeDefined();
      expect(Math.abs(loadAt.currents.drainMagnitude! - edge) / edge).toBeLessThan(1e-9);
      const upperEdge = analyzeStage({ ...st, components: { vg: volts(0) } }).nodes.drain;
      expect(upperEdge).toBeDefined();
      expect(sw.upper).toBeCloseTo(upperEdge!, 12);
      expect(sw.lower).toBeLessThan(sw.quiescent);
      expect(sw.upper).toBeGreaterThan(sw.quiescent);
    }
  });
});

describe("deck and bad input", () => {
  it("the SPICE deck: same-type load with its body at the rail, driver ammeter, gate source", () => {
    const deck = spiceDeck(stage({ load: n({ name: "invented-n-load", gamma: sqrtVolts(0.4) }), body: "rail" }));
    expect(deck).toMatch(/^VG g 0 1$/m);
    expect(deck).toMatch(/^VID out d 0$/m);
    expect(deck).toMatch(/^M1 d g vss vss moddrv /m);
    expect(deck).toMatch(/^M2 vdd vdd out vss modload /m);
    expect(spiceDeck(stage())).toMatch(/^M2 out out vdd vdd modload /m);
  });
  const err = (f: () => unknown) => {
    try {
      f();
    } catch (e) {
      return e as PinchoffError;
    }
    throw new Error("no error thrown");
  };
  it("a load that can never conduct, a depletion load, unknown fields and a missing load are refused by name", () => {
    const low = err(() => analyzeStage(stage({ vdd: 0.65 })));
    expect(low).toBeInstanceOf(InfeasibleError);
    expect(low.message).toContain("0.65 V");
    expect(low.message).toContain("|Vt| = 0.7 V");
    const dep = err(() => analyzeStage(stage({ load: n({ vt0: volts(-0.4) }) })));
    expect(dep).toBeInstanceOf(InputError);
    expect(dep.message).toContain("devices.load.card.vt0");
    expect(err(() => analyzeStage({ ...stage(), components: { vg: 1, rd: 1e3 } } as never)).message).toContain("components.rd");
    expect(err(() => analyzeStage({ ...stage(), components: { vg: NaN } } as never)).message).toContain("components.vg");
    expect(err(() => analyzeStage({ ...stage(), devices: {} } as never)).message).toContain("devices.load");
    expect(err(() => analyzeStage({ ...stage(), devices: { ...stage().devices, reference: stage().device } } as never)).message).toContain("devices.reference");
  });
});
