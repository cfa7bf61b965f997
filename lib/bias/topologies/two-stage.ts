/**
 * The two-stage Miller-compensated amplifier (`two-stage-miller`), NMOS or
 * PMOS input (the polarity of `device`, which is M1 and M2):
 * - first stage: the five-transistor amplifier of `diff-pair-mirror-load`
 *   (its netlist built by that topology: M1/M2, mirror load M3/M4 of the
 *   other polarity, tail M5), its output at node o1 (M2/M4 drains);
 * - second stage: the common-source device M6 (`devices.second`, the load's
 *   polarity) from o1 to the output `out`, with the current sink M7
 *   (`devices.sink`, the input's polarity) as its load;
 * - bias: M5 and M7 mirror the diode-connected reference M8
 *   (`devices.reference`, the tail's device when omitted) fed by `iref`;
 * - the Miller capacitor `cc` (and its nulling resistor `rz`) from o1 to out
 *   and the load `cload` carry no DC current: they enter the slew rate here
 *   and the frequency response (lib/bias/frequency-two-stage.ts).
 * Solved by nodal analysis (lib/bias/circuit.ts) in every region; the
 * figures are read at the solved point. The open-loop output of a gain of
 * thousands moves with any offset, so `inputForOutput` finds the differential
 * input that puts the output where a feedback loop would hold it (the
 * systematic offset, by bisection on the solved circuit).
 */
import { evaluateFormula } from "../../device/capacitance.js";
import { ConvergenceError, InputError } from "../../errors.js";
import * as pf from "../../formulas/pair.formulas.js";
import * as tf from "../../formulas/two-stage.formulas.js";
import type { Amperes, Farads, Ohms, Ratio, Volts, VoltsPerSecond, Watts } from "../../quantity.js";
import type { NetMosfet, Netlist } from "../circuit.js";
import type { AmplifierMetrics, ComponentField, Stage, StageAnalysis, StageCheck } from "../topology.js";
import { mirrorLoadPairSpec, type MirrorLoadPairComponents } from "./diff-pair.js";
import { circuitTopology, requireWithinRails, type CircuitBuild, type CircuitTopologySpec, type Solved } from "./multi-transistor.js";
import { fmt, stageCheck, swingInVolts } from "./two-transistor.js";
import { spiceNumber } from "../spice.js";

export interface TwoStageComponents {
  /** Reference current into the diode-connected M8. */
  readonly iref: Amperes;
  readonly vcm: Volts;
  readonly vid?: Volts;
  /** Miller compensation capacitor from the first stage's output to the output. */
  readonly cc?: Farads;
  /** Nulling resistor in series with cc. */
  readonly rz?: Ohms;
  /** Load capacitance at the output. */
  readonly cload?: Farads;
}

/** The two-stage amplifier's figures (voltages absolute, gains signed where said). */
export interface TwoStageFigures {
  readonly referenceCurrent: Amperes;
  readonly tailCurrent: Amperes;
  /** Current of the second stage (M6, M7). */
  readonly secondStageCurrent: Amperes;
  /** Gains by nodal analysis at the solved point (signed): vid → o1, o1 → out, vid → out. */
  readonly firstStageGain: number;
  readonly secondStageGain: number;
  readonly gain: number;
  /** Hand formulas (magnitudes). */
  readonly handFirstStageGain: number;
  readonly handSecondStageGain: number;
  readonly handGain: number;
  readonly commonModeGain: number;
  readonly cmrr: number;
  /** Input common-mode range with every device saturated. */
  readonly commonModeRange: { readonly lower: Volts; readonly upper: Volts };
  /** Output range with M6 and M7 saturated. */
  readonly outputRange: { readonly lower: Volts; readonly upper: Volts };
  readonly outputResistance: Ohms;
  /** (W/L)6·(W/L)5 / (2·(W/L)4·(W/L)7): 1 without systematic offset. */
  readonly systematicBalance: number;
  /** Slew rate min(ISS/Cc, I7/(Cc + CL)) when cc is given (ISS/Cc alone without cload). */
  readonly slewRate?: VoltsPerSecond;
  readonly power: Watts;
}

/** Off-balance of (W/L)6/(W/L)4 against 2·(W/L)7/(W/L)5 reported as a finding (common practice: a few per cent). */
export const balanceTolerance = 0.02;

const fields: ComponentField[] = [
  { name: "iref", dim: "current", required: true, meaning: "reference current into the diode-connected M8 (mirrored by the tail M5 and the sink M7)" },
  { name: "vcm", dim: "voltage", required: true, meaning: "input common-mode voltage (absolute)" },
  { name: "vid", dim: "voltage", required: false, meaning: "differential input vin1 − vin2 (0 V when omitted)" },
  { name: "cc", dim: "capacitance", required: false, meaning: "Miller compensation capacitor from the first stage's output to the output" },
  { name: "rz", dim: "resistance", required: false, meaning: "nulling resistor in series with cc (0 Ω when omitted)" },
  { name: "cload", dim: "capacitance", required: false, meaning: "load capacitance at the output, for the slew rate" },
];

const aspect = (d: { readonly w: number; readonly l: number }) => d.w / d.l;

export const twoStageSpec: CircuitTopologySpec<"two-stage-miller", TwoStageComponents, { twoStage: TwoStageFigures }> = {
  id: "two-stage-miller",
  title: "Two-stage Miller-compensated amplifier",
  description:
    "Five-transistor first stage (pair M1/M2 = device, mirror load M3/M4 = devices.load, tail M5 = devices.tail), common-source second stage M6 (devices.second, the load's polarity) with the current sink M7 (devices.sink), M5 and M7 mirrored from the diode M8 (devices.reference, the tail's device when omitted) fed by iref; Miller capacitor cc with an optional nulling resistor rz from the first stage's output to the output; load cload. NMOS or PMOS input.",
  components: fields,
  roles: {
    load: { meaning: "the first stage's current-mirror load M3/M4 (the other polarity)", required: true, polarity: "opposite" },
    tail: { meaning: "the tail current-source transistor M5 (same polarity as the pair)", required: true, polarity: "same" },
    second: { meaning: "the second stage's common-source device M6 (the other polarity)", required: true, polarity: "opposite" },
    sink: { meaning: "the second stage's current sink M7 (same polarity as the pair)", required: true, polarity: "same" },
    reference: { meaning: "the diode-connected reference M8 (same polarity as the pair)", required: false, polarity: "same" },
  },
  build(stage, c, main, devs, rails, clm, o): CircuitBuild {
    if (!(c.iref > 0) || !Number.isFinite(c.iref)) throw new InputError(c.iref, "a reference current iref > 0 A", `${o}: components.iref`);
    if (c.cc !== undefined && !(c.cc > 0)) throw new InputError(c.cc, "a Miller capacitor cc > 0 F", `${o}: components.cc`);
    if (c.rz !== undefined && !(c.rz >= 0)) throw new InputError(c.rz, "a nulling resistor rz ≥ 0 Ω", `${o}: components.rz`);
    if (c.cload !== undefined && !(c.cload > 0)) throw new InputError(c.cload, "a load capacitance > 0 F", `${o}: components.cload`);
    for (const role of ["second", "sink"] as const)
      if (!((devs[role]!.card.lambda ?? 0) > 0))
        throw new InputError(devs[role]!.card.lambda ?? 0, "λ > 0 on the second stage's cards: with λ = 0 the open-loop output is not determined (M6 and M7 are ideal current sources)", `${o}: devices.${role}.card.lambda`);
    const ref = devs.reference ?? devs.tail!;
    // M8's gate voltage: the first stage is built by the five-transistor amplifier with its tail gate held there,
    // then that node is freed and tied to M8.
    const vgs8 = Math.abs(ref.card.vt0) + Math.sqrt((2 * c.iref) / (ref.card.kp * aspect(ref)));
    const vb = Math.min(rails.vdd, Math.max(rails.vss, rails.sign * (rails.vsr + vgs8)));
    requireWithinRails(c.vcm, rails, `${o}: components.vcm`, "a common-mode input");
    const first: MirrorLoadPairComponents = { vcm: c.vcm, ...(c.vid !== undefined ? { vid: c.vid } : {}), vtail: vb as Volts };
    const pair = mirrorLoadPairSpec.build(stage as never, first, main, { load: devs.load!, tail: devs.tail! }, rails, clm, o).net;
    const rename = (n: string) => (n === "out" ? "o1" : n);
    const mosfets: NetMosfet[] = pair.mosfets.map((m) => ({ ...m, d: rename(m.d), g: rename(m.g), s: rename(m.s), b: rename(m.b) }));
    mosfets.push(
      { name: "6", role: "second stage", device: devs.second!, d: "out", g: "o1", s: rails.drail, b: rails.drail },
      { name: "7", role: "second-stage sink", device: devs.sink!, d: "out", g: "vb", s: rails.srail, b: rails.srail },
      { name: "8", role: "reference diode", device: ref, d: "vb", g: "vb", s: rails.srail, b: rails.srail },
    );
    const { vb: _held, ...fixed } = pair.fixed;
    const iref = rails.sign > 0 ? { name: "REF", from: rails.drail, to: "vb", i: c.iref } : { name: "REF", from: "vb", to: rails.drail, i: c.iref };
    const net: Netlist = {
      name: `${o} (two-stage-miller)`,
      fixed,
      unknown: ["t", "d1", "o1", "out", "vb"],
      resistors: [],
      sources: [...pair.sources, iref],
      mosfets,
      clm,
      guess: { ...pair.guess, o1: pair.guess!.out!, out: (rails.vdd + rails.vss) / 2, vb },
    };
    return { net, main: "1", assumeSaturated: ["M1", "M2", "M3", "M4", "M5", "M6", "M7", "M8"] };
  },
  figures(s: Solved, c, rec) {
    const r = s.rails;
    const sign = r.sign;
    const d = s.devices;
    const [m1, m2, m3, m4, m5, m6, m7] = [d.M1!, d.M2!, d.M3!, d.M4!, d.M5!, d.M6!, d.M7!];
    const i5 = Math.abs(m5.op.channelCurrent);
    const i7 = Math.abs(m7.op.channelCurrent);
    rec?.note("Figures at the solved point", "Gains from the stage formulas (hand) and from the nodal conductance matrix (exact small signal at this operating point, the value a SPICE .tf gives).");
    const gm1 = m1.smallSignal.gm;
    const av1 = evaluateFormula(pf.mirrorLoadGain, { gmIn: gm1, gdsIn: m2.smallSignal.gds, gdsLd: m4.smallSignal.gds }, rec, "the first stage is the five-transistor amplifier");
    const av2 = evaluateFormula(tf.secondStageGain, { gm6: m6.smallSignal.gm, gds6: m6.smallSignal.gds, gds7: m7.smallSignal.gds }, rec);
    const av = evaluateFormula(tf.twoStageGain, { Av1: av1, Av2: av2 }, rec);
    const dm = s.response({ in1: 0.5, in2: -0.5 });
    const cm = s.response({ in1: 1, in2: 1 });
    const g1 = dm.o1!;
    const g = dm.out!;
    const g2 = g1 === 0 ? 0 : g / g1;
    const acm = cm.out!;
    const cmrr = acm === 0 ? Infinity : Math.abs(g / acm);
    rec?.note("Gains by nodal analysis", `first stage ${fmt(g1)}, second stage ${fmt(g2)}, total ${fmt(g)} (in1 − in2 to the output), common mode ${fmt(acm)}, CMRR ${fmt(cmrr)}.`);
    const ro = s.response({}, { out: 1 }).out!;
    // Ranges in device polarity.
    const vtIn = Math.abs(m1.op.vt);
    const lo = evaluateFormula(pf.pairCommonModeMin, { VSR: r.vsr, VOVtail: m5.op.vov, VtIn: vtIn, VOVin: m1.op.vov }, rec);
    const hi = evaluateFormula(pf.pairCommonModeMaxMirror, { VDR: r.vdr, VtLd: Math.abs(m3.op.vt), VOVld: m3.op.vov, VtIn: vtIn }, rec);
    const vic = sign * c.vcm;
    const m = s.stage.limits?.minSaturationMargin ?? 0;
    const checks: StageCheck[] = [
      stageCheck("Input common mode above its lowest value (device polarity)", vic - lo, "voltage", { min: m }, rec, `VIC,min = ${fmt(sign * lo)} V`),
      stageCheck("Input common mode below its highest value (device polarity)", hi - vic, "voltage", { min: m }, rec, `VIC,max = ${fmt(sign * hi)} V`),
    ];
    const omax = evaluateFormula(pf.mirrorLoadOutputMax, { VDR: r.vdr, VOVld: m6.op.vov }, rec, "M6 sits at the drain-side rail like the mirror's load device: the output may rise to one M6 overdrive below it");
    const omin = evaluateFormula(tf.secondStageOutputMin, { VSR: r.vsr, VOV7: m7.op.vov }, rec);
    const vout = sign * s.sol.nodes.out!;
    const swing = [swingInVolts(sign, "out", vout, omax, omin, "M6 leaves saturation", "the sink M7 leaves saturation")];
    checks.push(
      stageCheck("Output below its highest value with M6 saturated (device polarity)", omax - vout, "voltage", { min: m }, rec),
      stageCheck("Output above its lowest value with M7 saturated (device polarity)", vout - omin, "voltage", { min: m }, rec),
    );
    const roles = s.stage.devices!;
    const [s4, s5, s6, s7] = [aspect(roles.load!), aspect(roles.tail!), aspect(roles.second!), aspect(roles.sink!)];
    const kBal = evaluateFormula(tf.systematicBalance, { S6: s6, S5: s5, S4: s4, S7: s7 }, rec);
    checks.push(stageCheck("Systematic balance (W/L)6/(W/L)4 = 2·(W/L)7/(W/L)5, as a ratio", kBal, "dimensionless", { min: 1 - balanceTolerance, max: 1 + balanceTolerance }, rec, "no systematic offset when 1"));
    let sr: number | undefined;
    if (c.cc !== undefined) {
      const sr1 = evaluateFormula(tf.slewInternal, { ITAIL: i5, Cc: c.cc }, rec);
      sr = sr1;
      if (c.cload !== undefined) {
        const sr2 = evaluateFormula(tf.slewOutput, { I7: i7, Cc: c.cc, CL: c.cload }, rec);
        sr = Math.min(sr1, sr2);
        rec?.note("Slew rate", `The smaller of the two limits: ${fmt(sr)} V/s (${sr1 <= sr2 ? "the tail current charging Cc" : "the second stage's current charging Cc and CL"}).`);
      } else rec?.note("Slew rate", "No load capacitance given: only the internal limit ISS/Cc is known.");
    }
    const supply = s.stage.supplies;
    const power = evaluateFormula(tf.twoStagePower, { VDD: supply.vdd, VSS: supply.vss ?? 0, IREF: c.iref, ITAIL: i5, I7: i7 }, rec);
    const amplifiers: AmplifierMetrics[] = [
      { kind: "differential", inputNode: "in1−in2", outputNode: "out", gain: g as never, rin: Infinity as Ohms, rout: ro as Ohms, note: "nodal analysis at the solved point; open loop, unloaded" },
      { kind: "differential", inputNode: "in1−in2", outputNode: "o1", gain: g1 as never, rin: Infinity as Ohms, rout: s.response({}, { o1: 1 }).o1! as Ohms, note: "first stage alone, by nodal analysis" },
      { kind: "common-mode", inputNode: "in1=in2", outputNode: "out", gain: acm as never, rin: Infinity as Ohms, rout: ro as Ohms, note: "nodal analysis; set by the tail's output resistance and the mirror" },
    ];
    const findings: string[] = [];
    if (Math.abs(kBal - 1) > balanceTolerance)
      findings.push(
        `Systematic offset: (W/L)6/(W/L)4 = ${fmt(s6 / s4)} but 2·(W/L)7/(W/L)5 = ${fmt((2 * s7) / s5)} (ratio ${fmt(kBal)}): M6's current at VGS6 = VGS4 differs from what M7 sinks, so the output rails without an input offset. Size M6 or M7 so the ratio is 1.`,
      );
    // Each device out of saturation is already a finding of the common path; the tail's meaning is said here.
    if (m5.region !== "saturation") findings.push(`The tail M5 cannot supply the pair (${m5.region}): the common source sits too close to its rail; raise the common mode or lower M5's overdrive.`);
    findings.push("The open-loop output of a two-stage amplifier moves with any offset: in use a feedback loop holds it (inputForOutput finds the input that centres it).");
    return {
      metrics: { amplifiers, swing, checks },
      findings,
      extra: {
        twoStage: {
          referenceCurrent: c.iref,
          tailCurrent: i5 as Amperes,
          secondStageCurrent: i7 as Amperes,
          firstStageGain: g1,
          secondStageGain: g2,
          gain: g,
          handFirstStageGain: av1,
          handSecondStageGain: av2,
          handGain: av,
          commonModeGain: acm,
          cmrr,
          commonModeRange: { lower: Math.min(sign * lo, sign * hi) as Volts, upper: Math.max(sign * lo, sign * hi) as Volts },
          outputRange: { lower: Math.min(sign * omin, sign * omax) as Volts, upper: Math.max(sign * omin, sign * omax) as Volts },
          outputResistance: ro as Ohms,
          systematicBalance: kBal as Ratio,
          ...(sr !== undefined ? { slewRate: sr as VoltsPerSecond } : {}),
          power: power as Watts,
        },
      },
    };
  },
};

/** The lines of the compensation network and load the components give: Cc (behind Rz) from o1 to out, CL at out. */
export function compensationLines(c: { readonly cc?: number; readonly rz?: number; readonly cload?: number }, nodes: Readonly<Record<string, string>>, prefix = ""): string[] {
  const lines: string[] = [];
  const p = prefix;
  if (c.cc !== undefined) {
    if (c.rz !== undefined && c.rz > 0) lines.push(`R${p}Z ${nodes.o1} ${p}cz ${spiceNumber(c.rz)}`, `C${p}C ${p}cz ${nodes.out} ${spiceNumber(c.cc)}`);
    else lines.push(`C${p}C ${nodes.o1} ${nodes.out} ${spiceNumber(c.cc)}`);
  }
  if (c.cload !== undefined) lines.push(`C${p}L ${nodes.out} 0 ${spiceNumber(c.cload)}`);
  return lines;
}

const circuit = circuitTopology(twoStageSpec);

/** The topology; its deck carries the compensation network and load when the components give them (no DC current flows in them). */
export const twoStageMiller: typeof circuit = {
  ...circuit,
  spice(stage, prefix = "") {
    const dc = circuit.spice(stage, prefix);
    return { ...dc, lines: [...dc.lines, ...compensationLines(stage.components, dc.nodes, prefix)] };
  },
};

export type TwoStageStage = Stage<"two-stage-miller", TwoStageComponents>;
export type TwoStageAnalysis = StageAnalysis & { readonly twoStage: TwoStageFigures };

/**
 * The differential input that puts the open-loop output at `vout` (absolute; the middle of the
 * output range when omitted): the systematic plus any mismatch-free offset of the sized circuit, found
 * by bisection on the solved circuit (the output is monotonic in the input) to 1 nV of input; allocates a stage per step. Throws InputError when `vout` is outside the rails and ConvergenceError when no input
 * within the supplies reaches it.
 */
export function inputForOutput(stage: TwoStageStage, vout?: number): { readonly vid: Volts; readonly analysis: TwoStageAnalysis } {
  const o = stage.name ? `stage "${stage.name}"` : "two-stage-miller stage";
  const vdd = stage.supplies.vdd;
  const vss = stage.supplies.vss ?? 0;
  const at = (vid: number) => twoStageMiller.analyze({ ...stage, components: { ...stage.components, vid: vid as Volts } }) as TwoStageAnalysis;
  const target = vout ?? (() => {
    const r = at(0).twoStage.outputRange;
    return (r.lower + r.upper) / 2;
  })();
  if (!(target > vss && target < vdd)) throw new InputError(target, `an output voltage between VSS = ${vss} V and VDD = ${vdd} V`, `${o}: inputForOutput`);
  const room = Math.min(vdd - stage.components.vcm, stage.components.vcm - vss);
  let lo = -Math.min(0.5, room);
  let hi = Math.min(0.5, room);
  let flo = at(lo).nodes.out! - target;
  const fhi = at(hi).nodes.out! - target;
  if (Math.sign(flo) === Math.sign(fhi)) throw new ConvergenceError(`no differential input within ±${fmt(hi)} V puts the output at ${fmt(target)} V (it stays ${flo > 0 ? "above" : "below"})`, `${o}: inputForOutput`);
  for (let i = 0; i < 80 && hi - lo > 1e-9; i++) {
    const mid = (lo + hi) / 2;
    const f = at(mid).nodes.out! - target;
    if (Math.sign(f) === Math.sign(flo)) {
      lo = mid;
      flo = f;
    } else hi = mid;
  }
  const vid = (lo + hi) / 2;
  return { vid: vid as Volts, analysis: at(vid) };
}
