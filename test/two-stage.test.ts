/**
 * The two-stage Miller amplifier (`two-stage-miller`): a published worked
 * example reproduced, the record (every step re-evaluates with units), the
 * systematic-offset finding, the centred output, compensation design, the
 * typed errors, mismatch through the Pelgrom machinery, the Bode plot, and
 * `pinchoff op` with a design file's compensation section. The comparisons
 * with ngspice are in test/bias-pairs-ngspice.test.ts (DC) and
 * test/two-stage-ngspice.test.ts (.ac).
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { analyzeStage, stageCircuit } from "../lib/bias/analyze.js";
import { acCircuit } from "../lib/bias/frequency-spice.js";
import { analyzeFrequency, isFrequencyRecord } from "../lib/bias/frequency.js";
import { frequencyRows } from "../lib/bias/frequency-summary.js";
import { simulateFrequency } from "../lib/bias/frequency-sim.js";
import { mismatchMonteCarlo, pairOffset } from "../lib/bias/mismatch.js";
import { inputForOutput, type TwoStageAnalysis, type TwoStageStage } from "../lib/bias/topologies/two-stage.js";
import type { DeviceCard } from "../lib/device/card.js";
import { InfeasibleError, InputError } from "../lib/errors.js";
import * as pf from "../lib/formulas/pair.formulas.js";
import * as tf from "../lib/formulas/two-stage.formulas.js";
import { main as op } from "../lib/cli/op.js";
import { bodePlot } from "../lib/plot/bode.js";
import { pairTransferPlot } from "../lib/plot/pair.js";
import { amperes, amperesPerVoltSquared, farads, meters, ohms, perVolt, siemens, voltMeters, volts } from "../lib/quantity.js";
import { Derivation } from "../lib/record/derivation.js";
import { captureCli } from "./support/cli.js";
import { expectReevaluates } from "./support/reevaluate.js";

// Allen & Holberg, "CMOS Analog Circuit Design", 2nd ed., Oxford University Press 2002, Example 6.3-1
// (design of a two-stage op amp), with the Level 1 parameters of its Table 3.1-2 and the capacitance
// parameters of its Table 3.2-1 — all from memory. The example's specification: VDD = 2.5 V, VSS = −2.5 V,
// GB = 5 MHz, CL = 10 pF, SR ≥ 10 V/µs, ICMR −1 … 2 V, output ±2 V; its results: Cc = 3 pF (≥ 0.22·CL),
// I5 = 30 µA, (W/L)1,2 = 3, (W/L)3,4 = 15, (W/L)5 = 4.5, (W/L)6 = 94, (W/L)7 = 14, gm6 = 942.5 µS,
// I6 = 95 µA, Av = 7,696, dissipation 0.625 mW.
const capN = { tox: meters(14e-9), cgso: 220e-12, cgdo: 220e-12, cgbo: 700e-12, cj: 770e-6, mj: 0.5, pb: volts(0.99), cjsw: 380e-12, mjsw: 0.38, diffusionLength: meters(1.5e-6) };
const capP = { ...capN, cj: 560e-6, cjsw: 350e-12, mjsw: 0.35 };
const nA: DeviceCard = { name: "A&H n (from memory)", polarity: "nmos", kp: amperesPerVoltSquared(110e-6), vt0: volts(0.7), lambda: perVolt(0.04), gamma: 0.4 as never, phi: volts(0.7), capacitance: capN as never, avt: voltMeters(10e-9) };
const pA: DeviceCard = { name: "A&H p (from memory)", polarity: "pmos", kp: amperesPerVoltSquared(50e-6), vt0: volts(-0.7), lambda: perVolt(0.05), gamma: 0.57 as never, phi: volts(0.8), capacitance: capP as never, avt: voltMeters(12e-9) };
const um = (x: number) => meters(x * 1e-6);
const sized = (s: number, card: DeviceCard) => ({ card, w: um(s), l: um(1) });

function example(over: Partial<TwoStageStage["components"]> = {}, devices: Partial<Record<string, ReturnType<typeof sized>>> = {}): TwoStageStage {
  return {
    topology: "two-stage-miller",
    name: "Example 6.3-1",
    device: sized(3, nA),
    devices: { load: sized(15, pA), tail: sized(4.5, nA), second: sized(94, pA), sink: sized(14, nA), ...devices } as TwoStageStage["devices"],
    components: { iref: amperes(30e-6), vcm: volts(0), cc: farads(3e-12), cload: farads(10e-12), ...over },
    supplies: { vdd: volts(2.5), vss: volts(-2.5) },
    body: "rail",
  };
}

describe("Allen & Holberg, CMOS Analog Circuit Design, 2nd ed., Example 6.3-1 (from memory)", () => {
  it("the catalog's gain formulas give the example's 7,696 from its own small-signal values (gds = λ·ID)", () => {
    // gm2 = 94.25 µS, gm6 = 942.5 µS, I5 = 30 µA, I6 = 95 µA, λN = 0.04, λP = 0.05.
    const av1 = pf.mirrorLoadGain.fn(siemens(94.25e-6), siemens(0.04 * 15e-6), siemens(0.05 * 15e-6));
    const av2 = tf.secondStageGain.fn(siemens(942.5e-6), siemens(0.05 * 95e-6), siemens(0.04 * 95e-6));
    expect(tf.twoStageGain.fn(av1, av2)).toBeCloseTo(7696, -1);
    // The rule of thumb: Cc ≥ 0.22·CL = 2.2 pF for CL = 10 pF.
    expect(tf.millerRuleOfThumb.fn(farads(10e-12))).toBeCloseTo(2.2e-12, 18);
  });

  it("the sized circuit reproduces the example's currents, slew rate, ranges and GB; the gain differs by the CLM convention", () => {
    const rec = new Derivation("Example 6.3-1");
    const a = analyzeStage(example(), rec) as TwoStageAnalysis;
    expect(expectReevaluates(rec)).toBeGreaterThan(10);
    const t = a.twoStage;
    expect(Math.abs(t.tailCurrent / 30e-6 - 1)).toBeLessThan(0.03);
    // I6 = 95 µA in the example (with (W/L)7 = 14.25); here 14 and the drain voltages' (1 + λ·VDS).
    expect(Math.abs(t.secondStageCurrent / 95e-6 - 1)).toBeLessThan(0.1);
    // SR = I5/Cc = 10 V/µs internally; the output limit I6/(Cc + CL) is the smaller one here.
    expect(Math.abs(tf.slewInternal.fn(t.tailCurrent, farads(3e-12)) / 10e6 - 1)).toBeLessThan(0.03);
    expect(t.slewRate).toBeCloseTo(Math.min(t.tailCurrent / 3e-12, t.secondStageCurrent / 13e-12), 0);
    // Nominal thresholds: the ICMR −1 … 2 V and the ±2 V output the example designed for worst-case thresholds are met.
    expect(t.commonModeRange.lower).toBeLessThan(-0.9);
    expect(t.commonModeRange.upper).toBeGreaterThan(2);
    expect(t.outputRange.lower).toBeLessThan(-2);
    expect(t.outputRange.upper).toBeGreaterThan(2);
    // Dissipation 0.625 mW without the reference branch.
    expect(Math.abs((t.power - 5 * 30e-6) / 0.625e-3 - 1)).toBeLessThan(0.1);
    // The example's balance: (W/L)6/(W/L)4 = 94/15 against 2·14/4.5: within a per cent, so no finding.
    expect(Math.abs(t.systematicBalance - 1)).toBeLessThan(0.01);
    expect(a.findings.some((f) => f.startsWith("Systematic offset"))).toBe(false);
    // The hand gain with gds = λ·ID/(1 + λ·VDS) (continuous CLM, as SPICE Level 1) is above the example's 7,696,
    // which takes gds = λ·ID; the nodal gain agrees with the hand product within 2 %.
    expect(t.handGain).toBeGreaterThan(7696);
    expect(t.handGain).toBeLessThan(1.5 * 7696);
    expect(Math.abs(Math.abs(t.gain) / t.handGain - 1)).toBeLessThan(0.02);
  });

  it("GB = gm1/Cc near 5 MHz with Cc = 3 pF, and Cc designed for 60° lands beside the rule of thumb's 2.2 pF", () => {
    const st = example();
    const c = inputForOutput(st);
    const centred = { ...st, components: { ...st.components, vid: c.vid } };
    const rec = new Derivation("Example 6.3-1, frequency");
    const fa = analyzeFrequency(centred, c.analysis, {}, rec);
    expect(expectReevaluates(rec)).toBeGreaterThan(10);
    const t = fa.twoStage!;
    // gm1 here carries (W/L)1 = 3 rounded up from 2.86 and (1 + λ·VDS): GB within 15 % of the example's 5 MHz.
    expect(Math.abs(t.gainBandwidth / 5e6 - 1)).toBeLessThan(0.15);
    expect(t.phaseMargin).toBeGreaterThan(60);
    const design = analyzeFrequency({ ...centred, components: { ...centred.components, cc: undefined } }, c.analysis, { compensation: { targetPhaseMargin: 60 } });
    expect(design.twoStage!.ccDesigned).toBe(true);
    expect(design.twoStage!.phaseMargin).toBeCloseTo(60, 6);
    expect(Math.abs(design.twoStage!.cc / 2.2e-12 - 1)).toBeLessThan(0.2);
    // the report's frequency table carries the compensation and its figures, and the record files under the frequency heading
    const rows = frequencyRows(design);
    expect(rows.find((r) => r.name === "Miller capacitor Cc")!.value).toBe(design.twoStage!.cc);
    expect(rows.find((r) => r.name === "phase margin")!.value).toBe(design.twoStage!.phaseMargin);
    expect(rows.find((r) => r.name === "gain-bandwidth product")!.value).toBe(design.twoStage!.gainBandwidth);
    expect(isFrequencyRecord(rec.toJSON())).toBe(true);
  });
});

describe("two-stage-miller analysis", () => {
  it("PMOS input mirrors the NMOS one: the same figures with the rails and polarities swapped", () => {
    const mirror = (c: DeviceCard): DeviceCard => ({ ...c, polarity: c.polarity === "nmos" ? "pmos" : "nmos", vt0: volts(-c.vt0) });
    const st = example();
    const pst: TwoStageStage = { ...st, device: { ...st.device, card: mirror(nA) }, devices: Object.fromEntries(Object.entries(st.devices!).map(([k, d]) => [k, { ...d, card: mirror(d.card) }])) as never };
    const an = analyzeStage(st) as TwoStageAnalysis;
    const ap = analyzeStage(pst) as TwoStageAnalysis;
    expect(ap.polarity).toBe("pmos");
    expect(ap.nodes.out!).toBeCloseTo(-an.nodes.out!, 6);
    expect(ap.twoStage.gain).toBeCloseTo(an.twoStage.gain, 0);
    expect(ap.twoStage.commonModeRange.upper).toBeCloseTo(-an.twoStage.commonModeRange.lower, 9);
  });

  it("reports a systematic offset when (W/L)6/(W/L)4 ≠ 2·(W/L)7/(W/L)5, and the output then rails", () => {
    const a = analyzeStage(example({}, { sink: sized(28, nA) })) as TwoStageAnalysis;
    expect(a.twoStage.systematicBalance).toBeCloseTo((94 * 4.5) / (2 * 15 * 28), 12);
    expect(a.findings.find((f) => f.startsWith("Systematic offset"))).toMatch(/ratio 0\.50/);
    expect(a.metrics.checks.find((c) => c.name.startsWith("Systematic balance"))!.passed).toBe(false);
    expect(a.devices!.M7!.region).toBe("triode");
  });

  it("the deck carries Cc (behind Rz) and CL from the components; the AC deck carries the ones the analysis used, once", () => {
    const st = example({ rz: ohms(1e3) });
    const dc = stageCircuit(st, "a_").lines;
    expect(dc).toEqual(expect.arrayContaining(["Ra_Z a_o1 a_cz 1000", "Ca_C a_cz a_out 3e-12", "Ca_L a_out 0 1e-11"]));
    const c = inputForOutput(st);
    const centred = { ...st, components: { ...st.components, vid: c.vid, cc: undefined, rz: undefined } };
    const fa = analyzeFrequency(centred, c.analysis, { compensation: { targetPhaseMargin: 60 } });
    const ac = acCircuit(centred as never, c.analysis, fa, "a_").lines;
    const cc = ac.filter((l) => /^Ca_C /.test(l));
    expect(cc).toHaveLength(1);
    expect(cc[0]).toMatch(/^Ca_C a_o1 a_out /);
    expect(Number(cc[0]!.split(" ")[3]) / fa.twoStage!.cc).toBeCloseTo(1, 9);
    expect(ac.filter((l) => /^Ra_Z /.test(l))).toEqual([]);
    expect(ac.filter((l) => /^Ca_L /.test(l))).toHaveLength(1);
  });

  it("inputForOutput finds the input that centres the open-loop output", () => {
    const c = inputForOutput(example(), 0.5);
    expect(c.analysis.nodes.out!).toBeCloseTo(0.5, 3);
    expect(Math.abs(c.vid)).toBeLessThan(1e-3);
    expect(() => inputForOutput(example(), 3)).toThrow(InputError);
  });

  it("the DC transfer plot sweeps about the centring input: the output crosses its range, the first stage's output moves gently", () => {
    const st = example();
    const c = inputForOutput(st);
    const centred = { ...st, components: { ...st.components, vid: c.vid } };
    const plot = pairTransferPlot(centred, c.analysis, { points: 41 });
    const out = plot.figure.data.find((d) => d.meta?.role === "curve" && d.meta.node === "out")!.y as number[];
    const o1 = plot.figure.data.find((d) => d.meta?.role === "curve" && d.meta.node === "o1")!.y as number[];
    const scale = plot.axes.y.divisor;
    expect(out[0]! * scale).toBeGreaterThan(2);
    expect(out[out.length - 1]! * scale).toBeLessThan(-2);
    expect(Math.abs(o1[0]! - o1[o1.length - 1]!) * scale).toBeLessThan(0.5);
  });

  it("bad input: typed errors naming the value and where it came from", () => {
    expect(() => analyzeStage(example({ cc: farads(0) }))).toThrow(/Miller capacitor cc > 0/);
    expect(() => analyzeStage(example({ iref: amperes(-1e-6) }))).toThrow(InputError);
    expect(() => analyzeStage(example({}, { second: { card: { ...pA, lambda: perVolt(0) }, w: um(94), l: um(1) } }))).toThrow(/devices\.second\.card\.lambda/);
    expect(() => analyzeStage({ ...example(), devices: { load: sized(15, pA), tail: sized(4.5, nA), sink: sized(14, nA) } } as never)).toThrow(/devices\.second/);
    const st = example();
    const c = inputForOutput(st);
    const centred = { ...st, components: { ...st.components, vid: c.vid } };
    const noCl = { ...centred, components: { ...centred.components, cload: undefined } };
    expect(() => analyzeFrequency(noCl, c.analysis, {})).toThrow(/load capacitance CL > 0 F/);
    expect(() => analyzeFrequency(centred, c.analysis, { compensation: { cc: farads(-1e-12) } })).toThrow(/Miller capacitor Cc > 0 F/);
    expect(() => analyzeFrequency(centred, c.analysis, { compensation: { cc: farads(2e-12) } })).toThrow(/disagree/);
    const noCc = { ...centred, components: { ...centred.components, cc: undefined } };
    expect(() => analyzeFrequency(noCc, c.analysis, {})).toThrow(/target phase margin/);
    // With Rz = 0 the right-half-plane zero tracks GBW: 89° cannot be reached.
    expect(() => analyzeFrequency(noCc, c.analysis, { compensation: { targetPhaseMargin: 89 } })).toThrow(InfeasibleError);
    expect(() => analyzeFrequency(noCc, c.analysis, { compensation: { targetPhaseMargin: 95 } })).toThrow(/between 0° and 90°/);
    // The tail cannot supply the pair: the common mode so low that M5 leaves saturation.
    const low = { ...centred, components: { ...centred.components, vcm: volts(-1.8) } };
    expect(() => analyzeFrequency(low, analyzeStage(low), {})).toThrow(/tail cannot supply the pair/);
    // A compensation section on another topology.
    const pair = { topology: "diff-pair-mirror-load", device: sized(3, nA), devices: { load: sized(15, pA) }, components: { vcm: volts(0), itail: amperes(30e-6) }, supplies: { vdd: volts(2.5), vss: volts(-2.5) } };
    expect(() => analyzeFrequency(pair, analyzeStage(pair as never), { load: { capacitance: farads(1e-12) }, compensation: { cc: farads(1e-12) } })).toThrow(/only the two-stage-miller/);
  });

  it("nulling rules: Rz = 1/gm6 moves the zero to infinity; the cancel-pole rule puts it on the second pole", () => {
    const st = example();
    const c = inputForOutput(st);
    const centred = { ...st, components: { ...st.components, vid: c.vid } };
    const z = analyzeFrequency(centred, c.analysis, { compensation: { nulling: "cancel-zero" } }).twoStage!;
    expect(z.rz).toBeCloseTo(1 / c.analysis.devices!.M6!.smallSignal.gm, 6);
    expect(Math.abs(z.zero)).toBeGreaterThan(1e15);
    const p = analyzeFrequency(centred, c.analysis, { compensation: { nulling: "cancel-pole" } }).twoStage!;
    expect(p.zero).toBeLessThan(0);
    expect(-p.zero / p.secondPole).toBeCloseTo(1, 9);
    expect(p.phaseMargin!).toBeGreaterThan(z.phaseMargin! - 20);
    expect(() => analyzeFrequency(centred, c.analysis, { compensation: { rz: ohms(1e3), nulling: "cancel-zero" } })).toThrow(/not both/);
  });

  it("the Bode plot draws the hand response from the DC gain, marks the second pole and overlays ngspice", () => {
    const st = example();
    const c = inputForOutput(st);
    const fa = analyzeFrequency({ ...st, components: { ...st.components, vid: c.vid } }, c.analysis, {});
    const plot = bodePlot(fa, { from: 1e-2, to: 1e9 });
    const mag = plot.figure.data.find((d) => d.meta?.role === "magnitude")!;
    expect(10 ** ((mag.y as number[])[0]! / 20)).toBeCloseTo(Math.abs(c.analysis.twoStage.gain), -1);
    expect(plot.figure.data.some((d) => String(d.name).startsWith("f<sub>p2</sub>"))).toBe(true);
    // The overlay: ngspice 39 Level 1 .ac on the exported deck, its DC gain the nodal one.
    const sim = simulateFrequency({ ...st, components: { ...st.components, vid: c.vid } }, c.analysis, fa, { pointsPerDecade: 20, start: 1e-2, stop: 1e9 });
    const withSim = bodePlot(fa, { from: 1e-2, to: 1e9, simulated: sim });
    expect(withSim.figure.data.filter((d) => d.meta?.source === sim.source)).toHaveLength(2);
    expect(sim.magnitude[0]! / Math.abs(c.analysis.twoStage.gain)).toBeCloseTo(1, 3);
  }, 30_000);
});

describe("mismatch of the two-stage amplifier (Pelgrom; invented AVt on the example's cards)", () => {
  it("offset from the first stage: the closed form agrees with the Monte Carlo core within 3 % at 10⁵ samples", () => {
    const st = example();
    const c = inputForOutput(st);
    const rec = new Derivation("offset");
    const closed = pairOffset(st, c.analysis, rec);
    expectReevaluates(rec);
    expect(closed.shares.loadVt).toBeGreaterThan(0);
    const mc = mismatchMonteCarlo({ ...st, components: { ...st.components, vid: c.vid } } as never, c.analysis, { samples: 100_000, seed: 5 });
    expect(Math.abs(mc.figures[0]!.sigma / closed.sigma - 1)).toBeLessThan(0.03);
  });
});

describe("mismatch of the two-stage amplifier: the second stage and the bias mirror (Pelgrom; invented AVt and Aβ)", () => {
  // Only M5–M8 mismatched: the pair and the load carry AVt = Aβ = 0, so the offset is the second stage's alone.
  const quiet = (c: DeviceCard): DeviceCard => ({ ...c, name: `${c.name}, matched`, avt: voltMeters(0), abeta: meters(0) });
  const noisy = (c: DeviceCard): DeviceCard => ({ ...c, name: `${c.name}, mismatched`, avt: voltMeters(c.polarity === "nmos" ? 10e-9 : 12e-9), abeta: meters(2e-8) });
  const second = (m6Width = 94): TwoStageStage => ({
    ...example(),
    device: sized(3, quiet(nA)),
    devices: { load: sized(15, quiet(pA)), tail: sized(4.5, noisy(nA)), second: sized(m6Width, noisy(pA)), sink: sized(14, noisy(nA)), reference: sized(4.5, noisy(nA)) } as TwoStageStage["devices"],
  });

  it("closed form (second stage over the first stage's gain) against the Monte Carlo: within 3 % at 10⁵ samples when M6 is sized for no systematic offset, within 15 % with one of 0.3 mV", () => {
    // The closed form is linearised about a balanced point; a systematic offset adds the product of itself and
    // the first stage's gain change with the tail current (10 % here), which the Monte Carlo solves.
    for (const [w, within] of [[94, 0.03], [120, 0.15]] as const) {
      const st = second(w);
      const c = inputForOutput(st);
      const rec = new Derivation("offset");
      const closed = pairOffset(st, c.analysis, rec);
      expectReevaluates(rec);
      expect(closed.shares.secondStage).toBeCloseTo(1, 12);
      const mc = mismatchMonteCarlo({ ...st, components: { ...st.components, vid: c.vid } } as never, c.analysis, { samples: 100_000, seed: 7 });
      expect(Math.abs(mc.figures[0]!.sigma / closed.sigma - 1)).toBeLessThan(within);
      // the second stage's own devices lead the ranking
      expect(mc.figures[0]!.sensitivity[0]!.variable).toMatch(/^M[5-8] /);
    }
  });

  it("PMOS input (the circuit mirrored, sized for no systematic offset): closed form against the Monte Carlo within 3 % at 10⁵ samples", () => {
    // (W/L)6/(W/L)4 = 2·(W/L)7/(W/L)5 with the input, tail and sink on the PMOS card and the load and M6 on the NMOS card.
    const [s4, s5, s7] = [6.8, 9.9, 30.8];
    const st: TwoStageStage = {
      ...example(),
      device: sized(6.6, quiet(pA)),
      devices: { load: sized(s4, quiet(nA)), tail: sized(s5, noisy(pA)), second: sized((2 * s4 * s7) / s5, noisy(nA)), sink: sized(s7, noisy(pA)), reference: sized(s5, noisy(pA)) } as TwoStageStage["devices"],
    };
    const c = inputForOutput(st);
    const closed = pairOffset(st, c.analysis);
    const mc = mismatchMonteCarlo({ ...st, components: { ...st.components, vid: c.vid } } as never, c.analysis, { samples: 100_000, seed: 9 });
    expect(Math.abs(mc.figures[0]!.sigma / closed.sigma - 1)).toBeLessThan(0.03);
  });

  it("each device's threshold moves the offset as the nodal solution of the whole circuit does (inputForOutput on shifted cards), within 3 %", () => {
    // A 3 mV threshold shift on one device, all else nominal: the change of the input that holds the output
    // where it was, from the circuit solved in full (its DC solution checked against ngspice 39 Level 1 in test/bias-pairs-ngspice.test.ts),
    // against the linear coefficient the closed form uses.
    const st = second(94);
    const c0 = inputForOutput(st);
    const a = c0.analysis;
    const eff = (m: string) => a.devices![m]!.smallSignal.gm / Math.abs(a.devices![m]!.op.channelCurrent);
    const gain = Math.abs(a.twoStage.firstStageGain);
    const out = a.nodes.out!;
    const shifted = (role: "second" | "sink" | "reference" | "tail", dv: number): TwoStageStage => {
      const d = st.devices![role]!;
      const s = d.card.polarity === "nmos" ? 1 : -1;
      return { ...st, devices: { ...st.devices, [role]: { ...d, card: { ...d.card, vt0: volts(d.card.vt0 + s * dv) } } } as TwoStageStage["devices"] };
    };
    const dv = 3e-3;
    const coefficient = {
      second: 1 / gain,
      sink: eff("M7") / eff("M6") / gain,
      reference: Math.abs(eff("M7") / eff("M6") - eff("M5") / eff("M3")) / gain,
      tail: eff("M5") / eff("M3") / gain,
    };
    for (const role of ["second", "sink", "tail"] as const) {
      const moved = Math.abs(inputForOutput(shifted(role, dv), out).vid - c0.vid);
      expect(Math.abs(moved / (coefficient[role] * dv) - 1)).toBeLessThan(0.03);
    }
    // M8 feeds M5 and M7 alike: its share is the difference of the two paths, far below either
    const moved8 = Math.abs(inputForOutput(shifted("reference", dv), out).vid - c0.vid);
    expect(moved8).toBeLessThan(0.25 * coefficient.sink * dv);
    expect(Math.abs(moved8 - coefficient.reference * dv)).toBeLessThan(0.03 * coefficient.sink * dv);
  });
});

describe("pinchoff op with a two-stage design file", () => {
  const dir = mkdtempSync(join(tmpdir(), "pinchoff-two-stage-"));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  // Invented: a sensor buffer's amplifier on invented cards.
  const card = (polarity: string, vt0: string, kp: string) => ({ name: `demo-${polarity}`, polarity, kp, vt0, lambda: "0.05 1/V", capacitance: { tox: "14 nm", cgso: "0.22 fF/um", cgdo: "0.22 fF/um", cj: "0.6 fF/um^2", cjsw: "0.3 fF/um", diffusionLength: "1.5 um" }, provenance: "invented for the tests" });
  const n = card("nmos", "0.7 V", "110 uA/V^2");
  const p = card("pmos", "-0.7 V", "50 uA/V^2");
  const design = {
    name: "sensor buffer amplifier (invented)",
    topology: "two-stage-miller",
    device: { card: n, w: "3 um", l: "1 um" },
    devices: { load: { card: p, w: "15 um", l: "1 um" }, tail: { card: n, w: "4.5 um", l: "1 um" }, second: { card: p, w: "94 um", l: "1 um" }, sink: { card: n, w: "14 um", l: "1 um" } },
    components: { iref: "30 uA", vcm: "0 V", vid: "35.3 uV" },
    supplies: { vdd: "2.5 V", vss: "-2.5 V" },
    frequency: { load: { capacitance: "10 pF" }, compensation: { targetPhaseMargin: 60, nulling: "cancel-zero" } },
  };
  it("reads the compensation section, designs Cc and Rz, and prints them", async () => {
    const path = join(dir, "amp.json");
    writeFileSync(path, JSON.stringify(design));
    const r = await captureCli(op, [path, "--json"]);
    expect(r.err).toBe("");
    const j = JSON.parse(r.out);
    expect(j.frequency.twoStage.ccDesigned).toBe(true);
    expect(j.frequency.twoStage.phaseMargin).toBeCloseTo(60, 4);
    expect(j.frequency.twoStage.rzDesigned).toBe(true);
    const t = await captureCli(op, [path, "--text"]);
    expect(t.out).toMatch(/compensation: Cc .* \(designed for the target phase margin\)/);
    writeFileSync(path, JSON.stringify({ ...design, frequency: { ...design.frequency, compensation: { cc: "0 pF" } } }));
    await expect(captureCli(op, [path, "--json"])).rejects.toThrow(/amp\.json: frequency\.compensation\.cc: got 0, expected a Miller capacitor Cc > 0 F/);
  }, 60_000);

  it("reads a mismatch section: the closed form with the second stage, the Monte Carlo ranking M5–M8 beside the pair; refuses a railed output", async () => {
    const path = join(dir, "amp-mismatch.json");
    const mismatch = { nmos: { avt: "10 mV*um", abeta: "2e-8 m" }, pmos: { avt: "12 mV*um", abeta: "2e-8 m" }, samples: 4000, seed: 3 };
    writeFileSync(path, JSON.stringify({ ...design, mismatch }));
    const j = JSON.parse((await captureCli(op, [path, "--json"])).out);
    expect(j.mismatch.closedForm.shares.secondStage).toBeGreaterThan(0);
    expect(j.mismatch.closedForm.shares.secondStage).toBeLessThan(0.2);
    const names = j.mismatch.monteCarlo.figures[0].sensitivity.map((x: { variable: string }) => x.variable);
    expect(names).toContain("M1 Vt");
    expect(names.some((v: string) => /^M[5-8] /.test(v))).toBe(true);
    expect(Math.abs(j.mismatch.monteCarlo.figures[0].sigma / j.mismatch.closedForm.offsetSigma - 1)).toBeLessThan(0.1);
    // 5 mV of differential input rails the open-loop output: no amplifying point to sample around
    const { frequency: _f, ...dcOnly } = design;
    writeFileSync(path, JSON.stringify({ ...dcOnly, components: { ...design.components, vid: "5 mV" }, mismatch }));
    await expect(captureCli(op, [path, "--json"])).rejects.toThrow(/not saturation: the offset is defined about an amplifying point\. Balance the open-loop output first/);
  }, 60_000);
});
