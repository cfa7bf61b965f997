/**
 * Differential pairs and cascodes: hand-calculated worked examples (written
 * out below; invented cards), the hand formulas against the nodal small-signal
 * figures, the recorded derivations, the SPICE deck and the typed errors.
 */
import { describe, expect, it } from "vitest";
import { analyzeStage, spiceDeck } from "../lib/bias/analyze.js";
import type { Stage } from "../lib/bias/topology.js";
import type { DeviceCard } from "../lib/device/card.js";
import { InfeasibleError, InputError } from "../lib/errors.js";
import { amperesPerVoltSquared, meters, perVolt, volts } from "../lib/quantity.js";
import { Derivation } from "../lib/record/derivation.js";
import { expectReevaluates } from "./support/reevaluate.js";

// Invented cards.
const n0: DeviceCard = { name: "hand-n (invented)", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.5) };
const n1: DeviceCard = { ...n0, name: "hand-n-lambda (invented)", lambda: perVolt(0.1) };
const p1: DeviceCard = { name: "hand-p (invented)", polarity: "pmos", kp: amperesPerVoltSquared(100e-6), vt0: volts(-0.6), lambda: perVolt(0.1) };
const d = (card: DeviceCard, w: number, l: number) => ({ card, w: meters(w), l: meters(l) });
type PairResult = { pair: { differentialGain: number; handDifferentialGain: number; commonModeRange: { lower: number; upper: number }; slewRate?: number; tailCurrent: number } };
type CascodeResult = { cascode: { gain: number; handGain: number; compliance: number; outputResistance: number; cascodeResistance: number } };

describe("resistively loaded pair, worked by hand", () => {
  // Hand calculation (square law, λ = γ = 0): k = 200 µA/V² · 10 = 2 mA/V²; ISS = 200 µA, 100 µA a side:
  // VOV = √(2·100 µA / 2 mA/V²) = √0.1 = 0.316228 V, VGS = 0.816228 V, so VS = 1.5 − 0.816228 = 0.683772 V;
  // VD = 3.3 − 10 kΩ·100 µA = 2.3 V; gm = 2·100 µA/0.316228 V = 632.456 µS; |Adm| = gm·RD = 6.32456;
  // VIC,min = 0 + 0.5 + 0.316228 = 0.816228 V; VIC,max = 3.3 − 1.0 + 0.5 = 2.8 V; SR = 200 µA / 1 pF = 200 V/µs.
  const st: Stage = { topology: "diff-pair", device: d(n0, 10e-6, 1e-6), components: { rd: 10e3, vcm: 1.5, itail: 200e-6, cload: 1e-12 }, supplies: { vdd: volts(3.3) } };
  it("operating point, gain, common-mode range and slew rate", () => {
    const rec = new Derivation("pair");
    const a = analyzeStage(st, rec) as ReturnType<typeof analyzeStage> & PairResult;
    expect(a.nodes.t).toBeCloseTo(0.683772, 6);
    expect(a.nodes.d1).toBeCloseTo(2.3, 9);
    expect(a.nodes.d2).toBeCloseTo(2.3, 9);
    expect(a.smallSignal.gm).toBeCloseTo(632.456e-6, 9);
    expect(a.pair.differentialGain).toBeCloseTo(-6.32456, 5);
    expect(a.pair.handDifferentialGain).toBeCloseTo(6.32456, 5);
    expect(a.pair.commonModeRange.lower).toBeCloseTo(0.816228, 6);
    expect(a.pair.commonModeRange.upper).toBeCloseTo(2.8, 9);
    expect(a.pair.slewRate).toBeCloseTo(2e8, 0);
    expect(a.metrics.checks.every((c) => c.passed)).toBe(true);
    expectReevaluates(rec);
  });
  it("the same pair in PMOS (mirror image about the rails) gives mirrored nodes", () => {
    const pm: DeviceCard = { ...n0, name: "hand-p0 (invented)", polarity: "pmos", vt0: volts(-0.5) };
    const a = analyzeStage({ ...st, device: d(pm, 10e-6, 1e-6), components: { rd: 10e3, vcm: 1.8, itail: 200e-6 } }) as ReturnType<typeof analyzeStage> & PairResult;
    expect(a.nodes.t).toBeCloseTo(3.3 - 0.683772, 6);
    expect(a.nodes.d1).toBeCloseTo(1.0, 9);
    expect(a.pair.commonModeRange.upper).toBeCloseTo(3.3 - 0.816228, 6);
  });
  it("one side driven off: the whole tail flows in M1, M2 is cut off", () => {
    const a = analyzeStage({ ...st, components: { rd: 10e3, vcm: 1.5, vid: 1, itail: 200e-6 } });
    expect(a.devices!.M2!.region).toBe("cutoff");
    expect(a.nodes.d1).toBeCloseTo(3.3 - 10e3 * 200e-6, 9);
    expect(a.nodes.d2).toBeCloseTo(3.3, 12);
    expect(a.findings.some((f) => /M2 is cut off/.test(f))).toBe(true);
  });
});

describe("five-transistor amplifier", () => {
  const st: Stage = {
    topology: "diff-pair-mirror-load",
    device: d(n1, 10e-6, 1e-6),
    devices: { load: d(p1, 10e-6, 1e-6), tail: d(n1, 20e-6, 1e-6) },
    components: { vcm: 1.5, vtail: 0.8, cload: 2e-12 },
    supplies: { vdd: volts(3.3) },
  };
  it("the hand gain gm1/(gds2 + gds4) is within 2 % of the nodal gain; every device saturated; the record re-evaluates", () => {
    const rec = new Derivation("5T");
    const a = analyzeStage(st, rec) as ReturnType<typeof analyzeStage> & PairResult;
    for (const m of ["M2", "M3", "M4", "M5"]) expect(a.devices![m]!.region).toBe("saturation");
    expect(Math.abs(a.pair.handDifferentialGain / a.pair.differentialGain - 1)).toBeLessThan(0.02);
    // Balanced: the output sits at the diode node (M4 copies M3 at equal VDS).
    expect(a.nodes.out).toBeCloseTo(a.nodes.d1!, 9);
    expect(a.pair.slewRate).toBeCloseTo(a.pair.tailCurrent / 2e-12, 0);
    expectReevaluates(rec);
  });
  it("the SPICE deck carries every device and the held inputs", () => {
    const deck = spiceDeck(st);
    for (const m of ["M1 ", "M2 ", "M3 ", "M4 ", "M5 ", "Vin1 ", "Vin2 ", "Vvb "]) expect(deck).toContain(m);
    expect(deck).toContain(".op");
  });
  it("λ = 0 leaves the open-loop output undetermined: a typed error on the card field", () => {
    expect(() => analyzeStage({ ...st, device: d(n0, 10e-6, 1e-6) })).toThrow(InputError);
    expect(() => analyzeStage({ ...st, device: d(n0, 10e-6, 1e-6) })).toThrow(/λ > 0/);
  });
});

describe("cascode stage, worked by hand", () => {
  // Hand calculation (λ = γ = 0): k = 2 mA/V², VG = 0.8 V: VOV1 = 0.3 V, ID = ½·2e-3·0.09 = 90 µA;
  // M2 (same card) carries it at VGS2 = 0.8 V, so VX = 1.5 − 0.8 = 0.7 V ≥ VOV1 (M1 saturated);
  // VOUT = 3.3 − 10 kΩ·90 µA = 2.4 V; compliance VG,cas − Vt = 1.0 V; Av = −gm1·RD = −(2·90 µA/0.3 V)·10 kΩ = −6.
  const st: Stage = { topology: "cascode-stage", device: d(n0, 10e-6, 1e-6), devices: { cascode: d(n0, 10e-6, 1e-6) }, components: { vg: 0.8, vcas: 1.5, rd: 10e3 }, supplies: { vdd: volts(3.3) } };
  it("nodes, gain and compliance", () => {
    const rec = new Derivation("cascode");
    const a = analyzeStage(st, rec) as ReturnType<typeof analyzeStage> & CascodeResult;
    expect(a.nodes.x).toBeCloseTo(0.7, 9);
    expect(a.nodes.out).toBeCloseTo(2.4, 9);
    expect(a.cascode.gain).toBeCloseTo(-6, 6);
    expect(a.cascode.handGain).toBeCloseTo(-6, 9);
    expect(a.cascode.compliance).toBeCloseTo(1.0, 12);
    expectReevaluates(rec);
  });
  it("with λ and body effect, ro1 + ro2 + (gm2 + gmb2)·ro1·ro2 in parallel with RD is the nodal output resistance", () => {
    const nb: DeviceCard = { ...n1, gamma: 0.45 as DeviceCard["gamma"] & number, phi: volts(0.7) };
    const a = analyzeStage({ ...st, device: d(nb, 10e-6, 1e-6), devices: { cascode: d(nb, 10e-6, 1e-6) }, body: "rail" }) as ReturnType<typeof analyzeStage> & CascodeResult;
    const par = 1 / (1 / 10e3 + 1 / a.cascode.cascodeResistance);
    expect(a.cascode.outputResistance / par).toBeCloseTo(1, 9);
  });
});

describe("cascode mirror", () => {
  const base: Stage = { topology: "cascode-mirror", device: d(n1, 10e-6, 1e-6), devices: { cascode: d(n1, 10e-6, 1e-6) }, components: { iref: 50e-6, vout: 2 }, supplies: { vdd: volts(3.3) } };
  it("the wide-swing bias (0.1 V above its minimum) lowers the compliance by Vt1 − 0.1 V", () => {
    type M = ReturnType<typeof analyzeStage> & { cascode: { compliance: number; wideSwingBias: number; wideSwingBiasLimit: number; ratio: number } };
    const stacked = analyzeStage(base) as M;
    const ws = stacked.cascode.wideSwingBias + 0.1;
    const wide = analyzeStage({ ...base, components: { iref: 50e-6, vout: 2, vcas: ws } }) as M;
    expect(ws).toBeLessThan(stacked.cascode.wideSwingBiasLimit);
    for (const m of ["M1", "M3", "M4"]) expect(wide.devices![m]!.region).toBe("saturation");
    expect(wide.region).toBe("saturation");
    // Stacked: VG4 = VGS1 + VGS3; wide swing: VG4 = VOV1 + VGS3 + 0.1 V; the compliance VG4 − Vt4 differs by VGS1 − VOV1 − 0.1 = Vt1 − 0.1 V.
    expect(stacked.cascode.compliance - wide.cascode.compliance).toBeCloseTo(0.5 - 0.1, 9);
    expect(Math.abs(wide.cascode.ratio - 1)).toBeLessThan(0.01);
  });
  it("a cascode bias too low to pass IREF is an InfeasibleError naming vcas", () => {
    expect(() => analyzeStage({ ...base, components: { iref: 50e-6, vout: 2, vcas: 0.4 } })).toThrow(InfeasibleError);
    expect(() => analyzeStage({ ...base, components: { iref: 50e-6, vout: 2, vcas: 0.4 } })).toThrow(/vcas/);
  });
});

describe("bad input", () => {
  const st: Stage = { topology: "diff-pair", device: d(n0, 10e-6, 1e-6), components: { rd: 10e3, vcm: 1.5, itail: 200e-6 }, supplies: { vdd: volts(3.3) } };
  it("a tail that cannot supply the pair: InfeasibleError naming itail and the room it lacks", () => {
    expect(() => analyzeStage({ ...st, components: { rd: 10e3, vcm: 0.6, itail: 200e-6 } })).toThrow(InfeasibleError);
    expect(() => analyzeStage({ ...st, components: { rd: 10e3, vcm: 0.6, itail: 200e-6 } })).toThrow(/tail cannot supply the pair.*components\.itail|components\.itail.*tail cannot supply/s);
  });
  it("a common-mode input outside the rails: InputError with the range", () => {
    expect(() => analyzeStage({ ...st, components: { rd: 10e3, vcm: 4, itail: 200e-6 } })).toThrow(/common-mode input from VSS = 0 V to VDD = 3.3 V/);
  });
  it("a common-mode input outside the saturation range is solved and flagged by a failed check with its margin", () => {
    const a = analyzeStage({ ...st, components: { rd: 10e3, vcm: 3.0, itail: 200e-6 } });
    const c = a.metrics.checks.find((x) => /below its highest/.test(x.name))!;
    expect(c.passed).toBe(false);
    expect(c.margin).toBeCloseTo(2.8 - 3.0, 6);
  });
  it("no tail, or both tails: InputError", () => {
    expect(() => analyzeStage({ ...st, components: { rd: 10e3, vcm: 1.5 } })).toThrow(/ideal tail current components.itail, or a tail transistor/);
    expect(() => analyzeStage({ ...st, devices: { tail: d(n0, 10e-6, 1e-6) }, components: { rd: 10e3, vcm: 1.5, itail: 1e-4, vtail: 1 } })).toThrow(InputError);
  });
  it("a load of the wrong polarity: InputError naming the role", () => {
    expect(() => analyzeStage({ topology: "diff-pair-mirror-load", device: d(n1, 10e-6, 1e-6), devices: { load: d(n1, 10e-6, 1e-6) }, components: { vcm: 1.5, itail: 1e-4 }, supplies: { vdd: volts(3.3) } })).toThrow(/devices.load.card.polarity/);
  });
});

describe("designing the five-transistor amplifier from a specification", () => {
  // Invented specification: 3.3 V, 100 µA tail, gain 40, input common mode 1.2–2.0 V, output up to 2.6 V.
  const spec = {
    input: { ...n1, lambda: perVolt(0.06) },
    load: { ...p1, lambda: perVolt(0.06) },
    supplies: { vdd: volts(3.3) },
    itail: 100e-6 as never,
    gain: 40 as never,
    commonModeMin: volts(1.2),
    commonModeMax: volts(2.0),
    outputMax: volts(2.6),
    lInput: meters(1e-6),
    lLoad: meters(1e-6),
  };
  it("sizes every device, and the re-solved stage meets the specification within the square law's first-order error", async () => {
    const { designMirrorLoadPair } = await import("../lib/bias/synthesis/mirror-load-pair.js");
    const rec = new Derivation("design");
    const dsg = designMirrorLoadPair(spec, rec);
    // VOV1 = 2/(40·0.12) = 0.41667 V (hand calculation).
    expect(dsg.overdrive.input).toBeCloseTo(2 / (40 * 0.12), 12);
    const a = dsg.analysis;
    for (const m of ["M2", "M3", "M4", "M5"]) expect(a.devices![m]!.region).toBe("saturation");
    expect(a.region).toBe("saturation");
    // (1 + λ·VDS) raises the currents and lowers the gain a little against the λ-free design: within 20 %.
    expect(Math.abs(a.pair.tailCurrent / 100e-6 - 1)).toBeLessThan(0.2);
    expect(Math.abs(a.pair.differentialGain / 40 - 1)).toBeLessThan(0.2);
    expect(a.pair.commonModeRange.lower).toBeLessThanOrEqual(1.2);
    expect(a.pair.commonModeRange.upper).toBeGreaterThanOrEqual(2.0);
    expectReevaluates(rec);
  });
  it("a common-mode range the supply cannot hold is an InfeasibleError in numbers", async () => {
    const { designMirrorLoadPair } = await import("../lib/bias/synthesis/mirror-load-pair.js");
    expect(() => designMirrorLoadPair({ ...spec, commonModeMin: volts(0.9) })).toThrow(InfeasibleError);
    expect(() => designMirrorLoadPair({ ...spec, commonModeMin: volts(0.9) })).toThrow(/lowest input common mode 0.9 V/);
    expect(() => designMirrorLoadPair({ ...spec, commonModeMax: volts(3.2) })).toThrow(/highest input common mode/);
  });
});

describe("pair transfer plot", () => {
  it("sweeps vid through the nodal solve: the five-transistor output rises monotonically through the bias point and saturates at both ends", async () => {
    const { pairTransferPlot } = await import("../lib/plot/pair.js");
    const st: Stage = { topology: "diff-pair-mirror-load", device: d(n1, 10e-6, 1e-6), devices: { load: d(p1, 10e-6, 1e-6), tail: d(n1, 20e-6, 1e-6) }, components: { vcm: 1.5, vtail: 0.8 }, supplies: { vdd: volts(3.3) } };
    const a = analyzeStage(st);
    const plot = pairTransferPlot(st, a, { range: 0.5, points: 41 });
    const curve = plot.figure.data[0]!;
    expect(curve.x.length).toBe(41);
    for (let i = 1; i < curve.y.length; i++) expect(curve.y[i]!).toBeGreaterThanOrEqual(curve.y[i - 1]! - 1e-9);
    // Ends: pulled toward the rail by M4 (high) and down to about VS + VDS(triode) of M2 (low); the middle is the bias point.
    expect(curve.y[40]!).toBeGreaterThan(3.0);
    expect(curve.y[0]!).toBeLessThan(a.nodes.out! - 0.5);
    expect(curve.y[20]!).toBeCloseTo(a.nodes.out!, 3);
    expect(plot.figure.data.some((t) => t.meta?.role === "operating-point")).toBe(true);
  });
});
