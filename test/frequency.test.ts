/**
 * Frequency analysis: hand calculations written out (open-circuit time
 * constants, two-pole denominator, Miller approximation, short-circuit time
 * constants), the record re-evaluating with units, the datasheet path, the
 * capacitor design, and the typed errors for bad input.
 */
import { describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { analyzeFrequency, lowCornerOf, type FrequencySpec } from "../lib/bias/frequency.js";
import { acCircuit, acDeckText } from "../lib/bias/frequency-spice.js";
import type { Stage } from "../lib/bias/topology.js";
import { isStandard } from "../lib/bias/eseries.js";
import type { DeviceCard } from "../lib/device/card.js";
import { InfeasibleError, InputError } from "../lib/errors.js";
import * as ff from "../lib/formulas/frequency.formulas.js";
import { amperesPerVoltSquared, farads, hertz, meters, ohms, perVolt, volts } from "../lib/quantity.js";
import { Derivation } from "../lib/record/derivation.js";
import { expectReevaluates } from "./support/reevaluate.js";

// Invented card for the tests: a small-signal NMOS on a 20 nm oxide.
const card: DeviceCard = {
  name: "test-n",
  polarity: "nmos",
  kp: amperesPerVoltSquared(100e-6),
  vt0: volts(0.7),
  lambda: perVolt(0.02),
  capacitance: { tox: meters(20e-9), cgso: 2e-10 as never, cgdo: 2e-10 as never, cj: 5e-4 as never, cjsw: 2e-10 as never, diffusionLength: meters(3e-6) },
  provenance: "invented for the tests",
};
const stage: Stage = {
  topology: "four-resistor",
  name: "audio pre-stage (invented)",
  device: { card, w: meters(40e-6), l: meters(2e-6) },
  components: { rg1: ohms(680e3), rg2: ohms(220e3), rd: ohms(10e3), rs: ohms(1.5e3) },
  supplies: { vdd: volts(12) },
};
const spec: FrequencySpec = { source: { resistance: ohms(10e3) }, load: { resistance: ohms(100e3), capacitance: farads(10e-12) }, targets: { lowCorner: hertz(20) } };

describe("hand calculations written out", () => {
  // A common source with gm = 2 mS, Rsig' = 10 kΩ, RL' = 10 kΩ, Cgs' = 100 fF, Cgd = 20 fF, Cout = 50 fF (hand calculation):
  //   τ1 = 100 fF · 10 kΩ = 1 ns; τ2 = 20 fF · (10 kΩ · (1 + 2 mS · 10 kΩ) + 10 kΩ) = 20 fF · 220 kΩ = 4.4 ns;
  //   τ3 = 50 fF · 10 kΩ = 0.5 ns; b1 = 5.9 ns; fH = 1/(2π · 5.9 ns) = 26.975 MHz.
  //   b2² = 10 kΩ · 10 kΩ · (100·20 + 100·50 + 20·50) fF² = 8e-19 s²; fp1 = (b1 − √(b1² − 4 b2²)) / (4π b2²) = 27.62 MHz.
  //   Miller: CM = 100 fF + 20 fF · 21 = 520 fF; fin = 1/(2π · 10 kΩ · 520 fF) = 30.61 MHz.
  it("open-circuit time constants, two poles and the Miller input pole", () => {
    const gm = 2e-3, RSP = 10e3, RLP = 10e3, CGI = 100e-15, CGO = 20e-15, CO = 50e-15;
    const t1 = ff.gateTimeConstant.fn(CGI as never, RSP as never);
    const t2 = ff.bridgeTimeConstant.fn(CGO as never, RSP as never, gm as never, RLP as never);
    const t3 = ff.outputTimeConstant.fn(CO as never, RLP as never);
    expect(t1).toBeCloseTo(1e-9, 15);
    expect(t2).toBeCloseTo(4.4e-9, 15);
    expect(t3).toBeCloseTo(0.5e-9, 15);
    const b1 = ff.timeConstantSum.fn(t1, t2, t3);
    expect(ff.upperCorner.fn(b1) / 1e6).toBeCloseTo(26.975, 2);
    const b2 = ff.commonSourceB2.fn(RSP as never, RLP as never, CGI as never, CGO as never, CO as never);
    expect(b2 * b2).toBeCloseTo(8e-19, 30);
    expect(ff.dominantPole.fn(b1, b2) / 1e6).toBeCloseTo(27.62, 1);
    const CM = ff.millerCapacitance.fn(CGI as never, CGO as never, gm as never, RLP as never);
    expect(CM).toBeCloseTo(520e-15, 25);
    expect(ff.millerInputPole.fn(RSP as never, CM) / 1e6).toBeCloseTo(30.61, 1);
  });
  // Published worked example: Sedra & Smith, Microelectronic Circuits, 6th ed., Example 9.3 and its re-solution by
  // open-circuit time constants (example numbers and values from memory). A common source fed from Rsig = 100 kΩ with
  // RG = 4.7 MΩ, RD = RL = 15 kΩ, gm = 1 mA/V, ro = 150 kΩ, Cgs = 1 pF, Cgd = 0.4 pF, no load capacitance.
  // The book's answers: AM = −7 V/V, Cin = 4.26 pF, fH = 382 kHz by the Miller approximation; τH ≈ 419 ns, fH ≈ 380 kHz
  // by open-circuit time constants.
  it("reproduces a published common-source example: midband gain, Miller fH 382 kHz and the open-circuit estimate 380 kHz", () => {
    const RSP = ff.sourceSeenByGate.fn(100e3 as never, 4.7e6 as never);
    const RLP = ff.outputNodeResistance.fn((1 / 150e3) as never, 15e3 as never, 15e3 as never);
    expect(RLP).toBeCloseTo(7142.857, 2);
    const am = (4.7e6 / (4.7e6 + 100e3)) * 1e-3 * RLP;
    expect(am).toBeCloseTo(7, 0);
    const CM = ff.millerCapacitance.fn(1e-12 as never, 0.4e-12 as never, 1e-3 as never, RLP);
    expect(CM * 1e12).toBeCloseTo(4.26, 2);
    expect(ff.millerInputPole.fn(RSP, CM) / 1e3).toBeCloseTo(382, 0);
    const tgs = ff.gateTimeConstant.fn(1e-12 as never, RSP);
    const tgd = ff.bridgeTimeConstant.fn(0.4e-12 as never, RSP, 1e-3 as never, RLP);
    const b1 = ff.timeConstantSum.fn(tgs, tgd, 0 as never);
    expect(Math.abs(b1 / 419e-9 - 1)).toBeLessThan(0.005);
    expect(Math.abs(ff.upperCorner.fn(b1) / 380e3 - 1)).toBeLessThan(0.005);
  });
  // Two equal high-pass poles at 1 Hz: |H|² = (f²/(f²+1))² = 1/2 → f² = 1/(√2 − 1), f = 1.5538 Hz (hand calculation),
  // while the short-circuit sum says 2 Hz: the sum overstates the corner when no pole dominates.
  it("low corner of independent poles against the short-circuit sum", () => {
    expect(lowCornerOf([1, 1])).toBeCloseTo(Math.sqrt(1 / (Math.SQRT2 - 1)), 6);
    expect(lowCornerOf([1])).toBeCloseTo(1, 9);
    // A shelf: bypass zero at 0.8 × its pole never falls 3 dB.
    expect(lowCornerOf([1], 0.8)).toBe(0);
  });
});

describe("frequency analysis of a stage", () => {
  it("records every step so that it re-evaluates with units, and designs E12 capacitors for 20 Hz", () => {
    const rec = new Derivation("frequency");
    const dc = analyzeStage(stage as never);
    const fa = analyzeFrequency(stage, dc, spec, rec);
    expect(expectReevaluates(rec)).toBeGreaterThan(30);
    expect(fa.view).toBe("common-source");
    expect(fa.low!.capacitors.map((c) => c.role)).toEqual(["input", "output", "bypass"]);
    for (const c of fa.low!.capacitors) {
      expect(c.designed).toBe(true);
      // a single E12 value (snapped in pF) or, when none is within 5 %, a parallel pair
      expect(isStandard(c.value * 1e12, "E12") || Math.abs(c.value / c.ideal! - 1) < 0.05).toBe(true);
    }
    expect(Math.abs(fa.low!.corner / 20 - 1)).toBeLessThan(0.15);
    // bypass dominant: the largest pole
    const poles = Object.fromEntries(fa.low!.capacitors.map((c) => [c.role, c.pole]));
    expect(poles.bypass).toBeGreaterThan(5 * poles.input!);
    // the design rule leaves the record's own dominance check (largest ≥ 4 × the rest) a margin after E12 snapping
    expect(fa.low!.dominance).toBeGreaterThan(6);
    expect(rec.checks.find((c) => /Low corner: one pole dominates/.test(c.title))?.passed).toBe(true);
    expect(fa.high.dominantPoleHolds).toBe(true);
    expect(fa.high.miller).toBeDefined();
    const deck = acDeckText("test", acCircuit(stage, dc, fa));
    expect(deck).toMatch(/\.ac dec 50 /);
    expect(deck).toMatch(/tox=2e-8/);
    expect(Number(/AD=(\S+)/.exec(deck)![1])).toBeCloseTo(1.2e-10, 20);
  });

  it("takes a discrete part's datasheet capacitances and states their voltage dependence", () => {
    const discrete: DeviceCard = { name: "disc", polarity: "nmos", kp: amperesPerVoltSquared(50e-3), vt0: volts(2), datasheetCapacitances: { ciss: farads(400e-12), crss: farads(20e-12), coss: farads(80e-12), vds: volts(25) }, provenance: "invented for the tests" };
    const s: Stage = { ...stage, device: { card: discrete, w: meters(1e-6), l: meters(1e-6) }, components: { rg1: ohms(1e6), rg2: ohms(330e3), rd: ohms(1e3), rs: ohms(200) } };
    const rec = new Derivation("discrete");
    const dc = analyzeStage(s as never);
    const fa = analyzeFrequency(s, dc, { source: { resistance: ohms(600) }, capacitors: { input: farads(1e-6), bypass: farads(470e-6) } }, rec);
    expect(fa.capacitances.cgs).toBeCloseTo(380e-12, 20);
    expect(fa.capacitances.cgd).toBeCloseTo(20e-12, 20);
    expect(fa.capacitances.cds).toBeCloseTo(60e-12, 20);
    expect(rec.toJSON().assumptions.join(" ")).toMatch(/VDS = 25 V/);
    expectReevaluates(rec);
  });
});

describe("bad input", () => {
  const dc = analyzeStage(stage as never);
  it("names the missing capacitance data and where it is found", () => {
    const bare: Stage = { ...stage, device: { ...stage.device, card: { ...card, capacitance: undefined } } };
    const e = (() => {
      try {
        analyzeFrequency(bare, analyzeStage(bare as never), spec);
      } catch (x) {
        return x;
      }
    })();
    expect(e).toBeInstanceOf(InputError);
    expect(String((e as Error).message)).toMatch(/TOX.*CGSO.*CGDO.*Ciss.*Crss.*Coss/);
  });
  it("refuses a card capacitance block without TOX", () => {
    const c = { ...card, capacitance: { cgso: 1e-10 } as never };
    expect(() => analyzeStage({ ...stage, device: { ...stage.device, card: c } } as never)).toThrow(/capacitance\.tox.*TOX/);
  });
  it("refuses a source impedance that is not a resistance", () => {
    expect(() => analyzeFrequency(stage, dc, { source: { resistance: "50+10j" as never } })).toThrow(InputError);
    expect(() => analyzeFrequency(stage, dc, { source: { resistance: ohms(50), reactance: 10 } as never })).toThrow(/not a resistance/);
    expect(() => analyzeFrequency(stage, dc, { source: { resistance: ohms(-5) } })).toThrow(InputError);
  });
  it("refuses a target the stage cannot meet", () => {
    expect(() => analyzeFrequency(stage, dc, { ...spec, targets: { lowCorner: hertz(20), highCorner: hertz(1e12) } })).toThrow(InfeasibleError);
    // The given capacitors alone already put the corner above the target.
    expect(() => analyzeFrequency(stage, dc, { ...spec, capacitors: { input: farads(1e-12) }, targets: { lowCorner: hertz(20) } })).toThrow(InfeasibleError);
    // Bypass capacitor alone with a shelf above −3 dB: no corner exists.
    const shelf: Stage = { topology: "fixed-gate", device: stage.device, components: { vg: volts(1.6), rd: ohms(2e3), rs: ohms(100) }, supplies: { vdd: volts(12) } };
    expect(() => analyzeFrequency(shelf, analyzeStage(shelf as never), { targets: { lowCorner: hertz(20) } })).toThrow(InfeasibleError);
  });
  it("asks for capacitors or a target corner", () => {
    expect(() => analyzeFrequency(stage, dc, { source: { resistance: ohms(1e3) } })).toThrow(/targets\.lowCorner/);
  });
  it("refuses a topology it does not cover", () => {
    const fb: Stage = { topology: "drain-feedback", device: stage.device, components: { rf: ohms(1e6), rd: ohms(10e3) }, supplies: { vdd: volts(12) } };
    // A plain differential pair (resistor loads) has no frequency view yet.
    expect(() => analyzeFrequency({ ...fb, topology: "diff-pair" }, analyzeStage(fb as never), spec)).toThrow(/topology the frequency analysis covers/);
  });
});

describe("cascode stage poles", () => {
  // Invented: equal input and cascode devices, body at the source, RD far below ro (λ small).
  const cas: Stage = {
    topology: "cascode-stage",
    name: "cascode gain stage (invented)",
    device: { card, w: meters(40e-6), l: meters(2e-6) },
    devices: { cascode: { card, w: meters(40e-6), l: meters(2e-6) } },
    components: { vg: volts(1.2), vcas: volts(3), rd: ohms(10e3) },
    supplies: { vdd: volts(12) },
  } as never;
  const dc = analyzeStage(cas as never);
  it("M1's Miller factor is 1 + gm1·RX ≈ 1 + gm1/gm2 ≈ 2 (hand calculation), the output pole dominates", () => {
    const rec = new Derivation("cascode");
    const fa = analyzeFrequency(cas, dc, { source: { resistance: ohms(1e3) }, load: { capacitance: farads(5e-12) } }, rec);
    const gm1 = dc.smallSignal.gm;
    const gm2 = dc.devices!.M2!.smallSignal.gm;
    // Same current, same size, body at the source: gm2 = gm1 up to λ; RX ≈ (1 + gds2·RD)/gm2.
    expect(Math.abs(gm2 / gm1 - 1)).toBeLessThan(0.1); // differs only through λ·VDS
    expectReevaluates(rec);
    expect(1 + fa.cascode!.gainToX).toBeGreaterThan(1.9);
    expect(1 + fa.cascode!.gainToX).toBeLessThan(2.3);
    expect(fa.checks.find((c) => c.name.startsWith("Miller factor"))!.passed).toBe(true);
    // Output pole 1/(2π·RD'·(CL + Cgd2)) is the lowest node pole and the open-circuit estimate lies just below it.
    expect(fa.cascode!.outputPole).toBeLessThan(fa.cascode!.nodePole);
    expect(fa.high.octcCorner).toBeLessThan(fa.cascode!.outputPole);
    expect(fa.high.octcCorner / fa.cascode!.outputPole).toBeGreaterThan(0.8);
    expect(fa.high.dominantPoleHolds).toBe(true);
    expect(fa.midbandGain).toBeLessThan(0);
  });
  it("refuses a load resistor and capacitors (the stage is DC-coupled) and a cascode card without capacitances", () => {
    expect(() => analyzeFrequency(cas, dc, { load: { resistance: ohms(10e3) } })).toThrow(InputError);
    expect(() => analyzeFrequency(cas, dc, { targets: { lowCorner: hertz(20) } })).toThrow(InputError);
    const bare = { ...cas, devices: { cascode: { card: { ...card, capacitance: undefined }, w: meters(40e-6), l: meters(2e-6) } } } as Stage;
    expect(() => analyzeFrequency(bare, analyzeStage(bare as never), {})).toThrow(/TOX/);
    expect(() => analyzeFrequency(cas, dc, { targets: { highCorner: hertz(1e12) } })).toThrow(InfeasibleError);
  });
});

describe("differential pair with a mirror load", () => {
  // Invented: the test NMOS card as the pair, a PMOS of the same shape as the mirror.
  const pcard: DeviceCard = { ...card, name: "test-p", polarity: "pmos", vt0: volts(-0.7), kp: amperesPerVoltSquared(40e-6) };
  const amp: Stage = {
    topology: "diff-pair-mirror-load",
    name: "five-transistor amplifier (invented)",
    device: { card, w: meters(20e-6), l: meters(1e-6) },
    devices: { load: { card: pcard, w: meters(20e-6), l: meters(1e-6) } },
    components: { vcm: volts(2.5), itail: 100e-6 },
    supplies: { vdd: volts(5) },
  } as never;
  const dc = analyzeStage(amp as never);
  it("GBW = gm1/(2π·CO), the mirror pole gm3/(2π·Cm) with its zero at twice it, and the phase margin they imply (hand calculation)", () => {
    const rec = new Derivation("pair");
    const fa = analyzeFrequency(amp, dc, { load: { capacitance: farads(2e-12) } }, rec);
    const p = fa.pair!;
    expect(p.gainBandwidth).toBeCloseTo(dc.smallSignal.gm / (2 * Math.PI * fa.nodes.cOut), 6);
    expect(p.mirrorPole).toBeCloseTo(dc.devices!.M3!.smallSignal.gm / (2 * Math.PI * p.mirrorCapacitance), 3);
    expect(p.mirrorZero / p.mirrorPole).toBeCloseTo(2, 12);
    // Written out: PM = 180° − atan(fu/fp1) − atan(fu/fm) + atan(fu/2fm).
    const deg = (x: number) => (Math.atan(x) * 180) / Math.PI;
    expect(p.phaseMargin!).toBeCloseTo(180 - deg(p.unityGain! / p.outputPole) - deg(p.unityGain! / p.mirrorPole) + deg(p.unityGain! / p.mirrorZero), 9);
    // The crossing lies at GBW when the mirror pole is far above it.
    expect(Math.abs(p.unityGain! / p.gainBandwidth - 1)).toBeLessThan(0.1);
    expect(fa.checks.some((c) => c.name.startsWith("Phase margin"))).toBe(true);
    expectReevaluates(rec);
  });
  it("refuses a source resistance and a load resistor (ideal differential drive, DC-coupled output)", () => {
    expect(() => analyzeFrequency(amp, dc, { source: { resistance: ohms(1e3) } })).toThrow(InputError);
    expect(() => analyzeFrequency(amp, dc, { load: { resistance: ohms(1e3) } })).toThrow(InputError);
  });
});

describe("drain-feedback stage", () => {
  // Hand calculation of the two-node determinant with gm = 2 mS, Rsig' = 10 kΩ, RL' = 10 kΩ, RF = 1 MΩ:
  //   RN = RF + RL' + Rsig' + gm·Rsig'·RL' = 1 MΩ + 10 kΩ + 10 kΩ + 200 kΩ = 1.22 MΩ;
  //   Av = RL'·(1 − gm·RF)/RN = 10 kΩ · (1 − 2000)/1.22 MΩ = −16.385;
  //   τ(Cgd = 20 fF) = CGO·RF·(Rsig' + RL' + gm·Rsig'·RL')/RN = 20 fF · 1 MΩ · 220 kΩ / 1.22 MΩ = 3.6066 ns
  //   (4.4 ns without RF: the feedback resistor shunts the bridge).
  it("the determinant, midband gain and the bridge time constant (hand calculation)", () => {
    const RN = ff.feedbackDeterminant.fn(ohms(1e6), ohms(10e3), ohms(10e3), 2e-3 as never);
    expect(RN).toBeCloseTo(1.22e6, 3);
    expect(ff.feedbackMidband.fn(ohms(10e3), 2e-3 as never, ohms(1e6), RN)).toBeCloseTo(-16.385, 3);
    expect(ff.feedbackBridgeTimeConstant.fn(farads(20e-15), ohms(1e6), ohms(10e3), ohms(10e3), 2e-3 as never, RN)).toBeCloseTo(3.6066e-9, 12);
  });
  it("reduces to the common source as RF grows, records re-evaluating steps, and designs an input capacitor that is a short at the corner", () => {
    const fb: Stage = { topology: "drain-feedback", name: "feedback pre-stage (invented)", device: stage.device, components: { rf: ohms(2.2e6), rd: ohms(10e3), rs: ohms(470) }, supplies: { vdd: volts(12) } };
    const dc = analyzeStage(fb as never);
    const rec = new Derivation("drain feedback");
    const fa = analyzeFrequency(fb, dc, spec, rec);
    expect(fa.view).toBe("drain-feedback");
    expect(fa.low!.capacitors.map((c) => c.role).sort()).toEqual(["bypass", "input", "output"]);
    expect(fa.checks.find((c) => c.name.startsWith("Input coupling capacitor a short"))!.passed).toBe(true);
    expect(fa.checks.find((c) => c.name.startsWith("Low-frequency corner within"))!.passed).toBe(true);
    expectReevaluates(rec);
    // RF → ∞: the same bias network seen as a common source with an ideal gate bias has the same upper poles.
    const huge = analyzeFrequency({ ...fb, components: { ...fb.components, rf: ohms(1e15) } }, dc, { source: spec.source!, load: spec.load!, capacitors: { input: farads(1e-6), output: farads(1e-6), bypass: farads(1e-3) } });
    const cs = analyzeFrequency({ ...fb, topology: "fixed-gate", components: { vg: dc.nodes.gate, rd: ohms(10e3), rs: ohms(470) } }, dc, { source: spec.source!, load: spec.load!, capacitors: { output: farads(1e-6), bypass: farads(1e-3) } });
    expect(Math.abs(huge.high.b1 / cs.high.b1 - 1)).toBeLessThan(1e-6);
    expect(Math.abs(huge.midbandGain / cs.midbandGain - 1)).toBeLessThan(1e-6);
  });
});

describe("current mirror and diode-load stage", () => {
  // Invented on-chip cards: the 20 nm oxide NMOS above and a PMOS of the same process.
  const pcard: DeviceCard = { ...card, name: "test-p", polarity: "pmos", vt0: volts(-0.7), kp: amperesPerVoltSquared(40e-6) };
  const m: Stage = {
    topology: "current-mirror",
    name: "bias mirror (invented)",
    device: { card, w: meters(40e-6), l: meters(2e-6) },
    devices: { reference: { card, w: meters(10e-6), l: meters(2e-6) } },
    components: { rref: ohms(100e3), rload: ohms(20e3) },
    supplies: { vdd: volts(5) },
  } as never;
  it("mirror: Rm = 1/(gm1 + gds1 + 1/RREF), the mirror pole 1/(2π·Rm·Cgate), transimpedance −gm2·Rm·RL'", () => {
    const dc = analyzeStage(m as never);
    const rec = new Derivation("mirror");
    const fa = analyzeFrequency(m, dc, { load: { capacitance: farads(1e-12) } }, rec);
    const r = dc.devices!.reference!.smallSignal;
    const Rm = 1 / (r.gm + r.gds + 1 / 100e3);
    expect(fa.drive).toBe("current");
    expect(fa.mirror!.gateResistance / Rm - 1).toBeLessThan(1e-12);
    expect(Math.abs(fa.mirror!.mirrorPole * 2 * Math.PI * Rm * fa.mirror!.gateCapacitance - 1)).toBeLessThan(1e-12);
    const RLP = 1 / (1 / 20e3 + dc.smallSignal.gds);
    expect(Math.abs(fa.midbandGain / (-dc.smallSignal.gm * Rm * RLP) - 1)).toBeLessThan(1e-12);
    expectReevaluates(rec);
    const deck = acCircuit(m, dc, fa).lines.join("\n");
    expect(deck).toMatch(/^ISIG 0 g DC 0 AC 1$/m);
    expect(deck).toMatch(/AD=.*AS=.*PD=.*PS=/);
    // A source resistance has no meaning for a current drive.
    expect(() => analyzeFrequency(m, dc, { source: { resistance: ohms(50) } })).toThrow(InputError);
  });
  it("mirror load in one place: components.rload where the bias network holds it, else frequency.load.resistance returned to the vout source", () => {
    const dc = analyzeStage(m as never);
    const own = analyzeFrequency(m, dc, { load: { capacitance: farads(1e-12) } });
    // The same operating point with the output held at the drain voltage RLOAD gave, and RLOAD as the outside load:
    // the small-signal circuit is the same, so every figure is.
    const held = { ...m, components: { rref: ohms(100e3), vout: dc.nodes.drain } } as Stage;
    const hdc = analyzeStage(held as never);
    expect(Math.abs(hdc.op.channelCurrent / dc.op.channelCurrent - 1)).toBeLessThan(1e-9);
    const rec = new Derivation("held mirror");
    const fa = analyzeFrequency(held, hdc, { load: { resistance: ohms(20e3), capacitance: farads(1e-12) } }, rec);
    for (const [a, b] of [
      [fa.midbandGain, own.midbandGain],
      [fa.high.corner, own.high.corner],
      [fa.mirror!.mirrorPole, own.mirror!.mirrorPole],
      [fa.mirror!.outputPole, own.mirror!.outputPole],
    ] as const)
      expect(Math.abs(a / b - 1)).toBeLessThan(1e-9);
    expect(fa.load.resistance).toBe(20e3);
    expect(own.load.resistance).toBeUndefined();
    expect(rec.inputs.find((i) => i.name === "RLOAD")?.origin).toMatch(/frequency\.load\.resistance/);
    expectReevaluates(rec);
    // The AC deck returns RLOAD to the vout source, moved by IOUT·RLOAD so the bias is untouched.
    const deck = acCircuit(held, hdc, fa).lines.join("\n");
    const vb = Number(/^VOUT outb 0 (\S+)$/m.exec(deck)?.[1]);
    expect(Math.abs(vb - (dc.nodes.drain + Math.abs(hdc.op.channelCurrent) * 20e3))).toBeLessThan(1e-6);
    expect(deck).toMatch(/^RLOAD outb x 20000$/m);
    expect(deck).not.toMatch(/^COUT /m);
    // Neither, or both at once, is refused naming the field and where the load goes.
    for (const [f, msg] of [
      [() => analyzeFrequency(held, hdc, { load: { capacitance: farads(1e-12) } }), /frequency\.load\.resistance/],
      [() => analyzeFrequency(m, dc, { load: { resistance: ohms(20e3) } }), /frequency\.load\.resistance.*components\.rload/],
    ] as const) {
      expect(f).toThrow(InputError);
      expect(f).toThrow(msg);
    }
  });
  it("cascode mirror: RLOAD from frequency.load.resistance, required, recorded with its origin", () => {
    const cm: Stage = {
      topology: "cascode-mirror",
      name: "sensor bias mirror (invented)",
      device: { card, w: meters(20e-6), l: meters(2e-6) },
      devices: { cascode: { card, w: meters(20e-6), l: meters(1e-6) } },
      components: { iref: 50e-6, vout: volts(3) },
      supplies: { vdd: volts(5) },
    } as never;
    const dc = analyzeStage(cm as never);
    const rec = new Derivation("cascode mirror");
    const fa = analyzeFrequency(cm, dc, { load: { resistance: ohms(100e3), capacitance: farads(2e-12) } }, rec);
    expect(fa.load.resistance).toBe(100e3);
    expect(rec.inputs.find((i) => i.name === "RLOAD")?.origin).toMatch(/frequency\.load\.resistance/);
    expect(() => analyzeFrequency(cm, dc, { load: { capacitance: farads(2e-12) } })).toThrow(/frequency\.load\.resistance/);
  });
  it("diode load: the load's resistance and capacitances at the output, per load type and body tie", () => {
    const base = { topology: "diode-load", name: "gain cell (invented)", device: { card, w: meters(20e-6), l: meters(1e-6) }, components: { vg: volts(1.2) }, supplies: { vdd: volts(5) } };
    const comp = { ...base, devices: { load: { card: pcard, w: meters(10e-6), l: meters(1e-6) } } } as never as Stage;
    const same = { ...base, devices: { load: { card, w: meters(4e-6), l: meters(1e-6) } }, body: "rail" } as never as Stage;
    for (const s of [comp, same]) {
      const dc = analyzeStage(s as never);
      const rec = new Derivation("diode load");
      const fa = analyzeFrequency(s, dc, { source: { resistance: ohms(1e3) }, load: { capacitance: farads(0.5e-12) } }, rec);
      const l = dc.devices!.load!.smallSignal;
      const rdl = 1 / (l.gm + (s === same ? l.gmb : 0) + l.gds);
      expect(Math.abs(fa.nodes.rOut / (1 / (1 / rdl + dc.smallSignal.gds)) - 1)).toBeLessThan(1e-12);
      expect(fa.nodes.cOut).toBeGreaterThan(0.5e-12);
      expectReevaluates(rec);
      expect(() => analyzeFrequency(s, dc, { load: { resistance: ohms(1e3) } })).toThrow(/DC-coupled/);
    }
  });
});
