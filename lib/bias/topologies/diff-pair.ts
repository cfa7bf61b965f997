/**
 * Differential pairs, NMOS or PMOS input (the polarity of `device`, which is
 * M1 and M2):
 * - `diff-pair`: resistive loads `rd` from each drain to the drain-side rail;
 * - `diff-pair-mirror-load`: the five-transistor amplifier, a current-mirror
 *   load of the other polarity (`devices.load`: M3 diode-connected on M1's
 *   side, M4 the output on M2's side), single-ended output at M2/M4.
 * The tail is an ideal current `itail` or a transistor M5 (`devices.tail`)
 * with its gate held at `vtail`, which has its own compliance. The inputs are
 * held at vcm ± vid/2 (absolute volts). Solved by nodal analysis in every
 * region (one side driven off included); figures are read at the solved point.
 */
import { InfeasibleError, InputError } from "../../errors.js";
import * as pf from "../../formulas/pair.formulas.js";
import type { Amperes, AmperesPerVoltSquared, Farads, Ohms, Siemens, Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import type { Netlist, NetMosfet } from "../circuit.js";
import type { AmplifierMetrics, ComponentField, Stage, StageCheck, SwingLimits } from "../topology.js";
import { circuitTopology, requireWithinRails, type CircuitBuild, type CircuitTopologySpec, type Rails, type Solved } from "./multi-transistor.js";
import { fmt, stageCheck, swingInVolts } from "./two-transistor.js";
import type { Device } from "../../device/card.js";

export interface DiffPairComponents {
  readonly rd: Ohms;
  readonly vcm: Volts;
  readonly vid?: Volts;
  readonly itail?: Amperes;
  readonly vtail?: Volts;
  readonly cload?: Farads;
}

export interface MirrorLoadPairComponents {
  readonly vcm: Volts;
  readonly vid?: Volts;
  readonly itail?: Amperes;
  readonly vtail?: Volts;
  readonly cload?: Farads;
}

/** The pair's figures, beyond the common stage analysis (voltages absolute unless said). */
export interface PairFigures {
  readonly tailCurrent: Amperes;
  /** Differential gain by nodal analysis: output (vd1 − vd2 for resistive loads, the single output for a mirror load) over vid. */
  readonly differentialGain: number;
  /** Common-mode gain to the (first) output by nodal analysis. */
  readonly commonModeGain: number;
  /** |Adm|/|Acm| for one output (Infinity with an ideal tail). */
  readonly cmrr: number;
  /** Hand-formula gains (magnitude of Adm; Acm signed). */
  readonly handDifferentialGain: number;
  readonly handCommonModeGain: number;
  /** Input common-mode range with every device saturated (absolute volts, lower ≤ upper when it exists). */
  readonly commonModeRange: { readonly lower: Volts; readonly upper: Volts };
  /** Output resistance at the output node by nodal analysis. */
  readonly outputResistance: Ohms;
  /** ISS/CL when a load capacitance is given. */
  readonly slewRate?: number;
}

const tailFields: ComponentField[] = [
  { name: "vcm", dim: "voltage", required: true, meaning: "input common-mode voltage (absolute)" },
  { name: "vid", dim: "voltage", required: false, meaning: "differential input vin1 − vin2 (0 V when omitted)" },
  { name: "itail", dim: "current", required: false, meaning: "ideal tail current (give itail, or vtail with devices.tail)" },
  { name: "vtail", dim: "voltage", required: false, meaning: "gate voltage of the tail transistor devices.tail (absolute)" },
  { name: "cload", dim: "capacitance", required: false, meaning: "load capacitance at the output, for the slew rate" },
];

const tailRole = { meaning: "the tail current-source transistor M5 (same polarity as the pair)", required: false, polarity: "same" } as const;

function checkTail(c: MirrorLoadPairComponents, devs: Readonly<Record<string, Device>>, rails: Rails, o: string): void {
  const hasI = c.itail !== undefined;
  const hasT = devs.tail !== undefined;
  if (hasI === hasT || (hasT && c.vtail === undefined) || (hasI && c.vtail !== undefined))
    throw new InputError(
      hasI && hasT ? "both itail and devices.tail" : hasI ? "itail with vtail" : hasT ? "devices.tail without vtail" : "no tail",
      "an ideal tail current components.itail, or a tail transistor devices.tail with its gate voltage components.vtail",
      `${o}: components`,
      "invalid-design",
    );
  requireWithinRails(c.vcm, rails, `${o}: components.vcm`, "a common-mode input");
  const vid = c.vid ?? 0;
  requireWithinRails(c.vcm + vid / 2, rails, `${o}: components.vid`, "inputs vcm ± vid/2");
  requireWithinRails(c.vcm - vid / 2, rails, `${o}: components.vid`, "inputs vcm ± vid/2");
  if (c.vtail !== undefined) requireWithinRails(c.vtail, rails, `${o}: components.vtail`, "a tail gate voltage");
  if (c.cload !== undefined && !(c.cload > 0)) throw new InputError(c.cload, "a load capacitance > 0 F", `${o}: components.cload`);
}

/** Held inputs, the tail, M1 and M2 and the body ties. */
function pairCore(stage: Stage<string, unknown>, c: MirrorLoadPairComponents, main: Device, devs: Readonly<Record<string, Device>>, rails: Rails, d1: string, d2: string) {
  const vid = c.vid ?? 0;
  const fixed: Record<string, number> = { vdd: rails.vdd, vss: rails.vss, in1: c.vcm + vid / 2, in2: c.vcm - vid / 2 };
  const body = stage.body === "rail" ? rails.srail : "t";
  const mosfets: NetMosfet[] = [
    { name: "1", role: "input", device: main, d: d1, g: "in1", s: "t", b: body },
    { name: "2", role: "input", device: main, d: d2, g: "in2", s: "t", b: body },
  ];
  const sources = [];
  if (devs.tail) {
    fixed.vb = c.vtail!;
    mosfets.push({ name: "5", role: "tail", device: devs.tail, d: "t", g: "vb", s: rails.srail, b: rails.srail });
  } else sources.push(rails.sign > 0 ? { name: "SS", from: "t", to: rails.srail, i: c.itail! } : { name: "SS", from: rails.srail, to: "t", i: c.itail! });
  const vt = Math.abs(main.card.vt0);
  const guessT = c.vcm - rails.sign * (vt + 0.2);
  return { fixed, mosfets, sources, guessT };
}

const clampRail = (x: number, r: Rails) => Math.min(r.vdd, Math.max(r.vss, x));

/** Tail figures common to both pairs; throws when an ideal tail has no headroom. */
function tailFigures(s: Solved, c: MirrorLoadPairComponents, rec?: Derivation) {
  const r = s.rails;
  const sign = r.sign;
  const m5 = s.devices.M5;
  const itail = m5 ? Math.abs(m5.op.channelCurrent) : c.itail!;
  const vt = sign * s.sol.nodes.t!;
  if (!m5) {
    const headroom = vt - r.vsr;
    const need = s.stage.limits?.minSourceHeadroom ?? 0;
    if (headroom < 0)
      throw new InfeasibleError(
        `the tail cannot supply the pair: an ideal tail of ${fmt(itail)} A needs the common source at ${fmt(s.sol.nodes.t!)} V, ${fmt(-headroom)} V beyond the ${r.srail === "vss" ? "lower" : "upper"} rail (${fmt(sign * r.vsr)} V). Expected the common mode at least ${fmt(-headroom)} V further from that rail, or a tail current at most what the pair carries with its common source at the rail`,
        `${s.origin}: components.itail`,
      );
    rec?.check("Ideal tail headroom (common source to its rail)", headroom, "voltage", { min: need }, "an ideal source needs room for the real one that replaces it");
  }
  const gTail = m5 ? m5.smallSignal.gds : 0;
  return { itail, gTail };
}

function slew(itail: number, c: MirrorLoadPairComponents, rec?: Derivation): number | undefined {
  if (c.cload === undefined) return undefined;
  return rec ? rec.calc(pf.slewRate, [itail as Amperes, c.cload]) : pf.slewRate.fn(itail as Amperes, c.cload);
}

function rangeChecks(s: Solved, lower: number, upper: number, rec?: Derivation): StageCheck[] {
  const vic = s.rails.sign * (s.stage.components as unknown as MirrorLoadPairComponents).vcm;
  const m = s.stage.limits?.minSaturationMargin ?? 0;
  return [
    stageCheck("Input common mode above its lowest value (device polarity)", vic - lower, "voltage", { min: m }, rec, `VIC,min = ${fmt(s.rails.sign * lower)} V`),
    stageCheck("Input common mode below its highest value (device polarity)", upper - vic, "voltage", { min: m }, rec, `VIC,max = ${fmt(s.rails.sign * upper)} V`),
  ];
}

const absRange = (sign: number, lo: number, hi: number) => {
  const a = sign * lo;
  const b = sign * hi;
  return { lower: Math.min(a, b) as Volts, upper: Math.max(a, b) as Volts };
};

/** The `pair` block both pairs report, from their own gains, range and output resistance. */
function pairFigures(itail: number, ad: number, ac: number, cmrr: number, hAd: number, hAc: number, range: PairFigures["commonModeRange"], ro: number, sr: number | undefined): PairFigures {
  return {
    tailCurrent: itail as Amperes,
    differentialGain: ad,
    commonModeGain: ac,
    cmrr,
    handDifferentialGain: hAd,
    handCommonModeGain: hAc,
    commonModeRange: range,
    outputResistance: ro as Ohms,
    ...(sr !== undefined ? { slewRate: sr } : {}),
  };
}

export const diffPairSpec: CircuitTopologySpec<"diff-pair", DiffPairComponents, { pair: PairFigures }> = {
  id: "diff-pair",
  title: "Differential pair with resistive loads",
  description:
    "Source-coupled pair M1/M2 (device) with load resistors rd to the drain-side rail, inputs held at vcm ± vid/2, tail an ideal current itail or a transistor devices.tail with its gate at vtail. NMOS or PMOS input.",
  components: [{ name: "rd", dim: "resistance", required: true, meaning: "load resistor from each drain to the drain-side rail" }, ...tailFields],
  roles: { tail: tailRole },
  build(stage, c, main, devs, rails, clm, o): CircuitBuild {
    checkTail(c, devs, rails, o);
    if (!(c.rd > 0)) throw new InputError(c.rd, "a load resistance rd > 0 Ω", `${o}: components.rd`);
    const core = pairCore(stage, c, main, devs, rails, "d1", "d2");
    const idHalf = c.itail !== undefined ? c.itail / 2 : 0;
    const dGuess = clampRail(rails.sign * (rails.vdr - c.rd * idHalf), rails);
    const net: Netlist = {
      name: `${o} (diff-pair)`,
      fixed: core.fixed,
      unknown: ["t", "d1", "d2"],
      resistors: [
        { name: "D1", a: rails.drail, b: "d1", r: c.rd },
        { name: "D2", a: rails.drail, b: "d2", r: c.rd },
      ],
      sources: core.sources,
      mosfets: core.mosfets,
      clm,
      guess: { t: core.guessT, d1: dGuess, d2: dGuess },
    };
    return { net, main: "1", assumeSaturated: devs.tail ? ["M1", "M2", "M5"] : ["M1", "M2"] };
  },
  figures(s, c, rec) {
    const r = s.rails;
    const sign = r.sign;
    const { itail, gTail } = tailFigures(s, c, rec);
    const m1 = s.devices.M1!;
    const gm = m1.smallSignal.gm;
    const gds = m1.smallSignal.gds;
    rec?.note("Figures at the solved point", "Gains from the half circuit (hand) and from the nodal conductance matrix (exact small signal at this operating point, the value a SPICE .tf gives).");
    const hAd = rec ? rec.calc(pf.pairDifferentialGain, [gm, c.rd, gds]) : pf.pairDifferentialGain.fn(gm, c.rd, gds);
    const hAc = rec ? rec.calc(pf.pairCommonModeGain, [gm, c.rd, gTail as Siemens]) : pf.pairCommonModeGain.fn(gm, c.rd, gTail as Siemens);
    const dm = s.response({ in1: 0.5, in2: -0.5 });
    const cm = s.response({ in1: 1, in2: 1 });
    const ad = dm.d1! - dm.d2!;
    const ac = cm.d1!;
    const cmrr = ac === 0 ? Infinity : Math.abs(dm.d1! / ac);
    if (gTail > 0) {
      if (rec) rec.calc(pf.pairRejection, [gTail as Siemens, gm]);
    } else rec?.note("CMRR", "An ideal tail has no output conductance: the common-mode gain and hence the CMRR are unbounded in this model. A real tail's output resistance sets them.");
    rec?.note("Gains by nodal analysis", `Adm = ${fmt(ad)} (differential output), Acm = ${fmt(ac)} (one output), CMRR = ${fmt(cmrr)} for one output.`);
    const ro = s.response({}, { d1: 1 }).d1!;
    const sr = slew(itail, c, rec);
    // Ranges in device polarity.
    const vovTail = s.devices.M5 ? s.devices.M5.op.vov : 0;
    const vtIn = Math.abs(m1.op.vt);
    const vovIn = m1.op.vov;
    const lo = rec ? rec.calc(pf.pairCommonModeMin, [r.vsr as Volts, vovTail as Volts, vtIn as Volts, vovIn]) : pf.pairCommonModeMin.fn(r.vsr as Volts, vovTail as Volts, vtIn as Volts, vovIn);
    const hi = rec ? rec.calc(pf.pairCommonModeMaxResistive, [r.vdr as Volts, c.rd, itail as Amperes, vtIn as Volts]) : pf.pairCommonModeMaxResistive.fn(r.vdr as Volts, c.rd, itail as Amperes, vtIn as Volts);
    const vic = (sign * c.vcm) as Volts;
    const omin = pf.pairOutputMin.fn(vic, vtIn as Volts);
    rec?.step(pf.pairOutputMin, [vic, vtIn], omin, "the output may fall to one threshold below the input before M1 leaves saturation");
    const swing: SwingLimits[] = ["d1", "d2"].map((n) => swingInVolts(sign, n, sign * s.sol.nodes[n]!, r.vdr, omin, "drain-side rail (no drop in RD)", "input device leaves saturation (VD = VG − Vt)"));
    const amplifiers: AmplifierMetrics[] = [
      { kind: "differential", inputNode: "in1−in2", outputNode: "d1−d2", gain: ad as never, rin: Infinity as Ohms, rout: (2 * ro) as Ohms, note: "nodal analysis at the solved point; unloaded" },
      { kind: "common-mode", inputNode: "in1=in2", outputNode: "d1", gain: ac as never, rin: Infinity as Ohms, rout: ro as Ohms, note: "nodal analysis; set by the tail's output resistance" },
    ];
    const findings: string[] = [];
    for (const m of ["M1", "M2"] as const)
      if (s.devices[m]!.region === "cutoff") findings.push(`${m} is cut off: the differential input ${fmt(c.vid ?? 0)} V steers the whole tail current to the other side.`);
    if (!s.devices.M5) findings.push("The tail is an ideal current source: its compliance and output resistance are not modelled (CMRR unbounded).");
    return {
      metrics: { amplifiers, swing, checks: rangeChecks(s, lo, hi, rec) },
      findings,
      extra: {
        pair: pairFigures(itail, ad, ac, cmrr, hAd, hAc, absRange(sign, lo, hi), ro, sr),
      },
    };
  },
};

export const mirrorLoadPairSpec: CircuitTopologySpec<"diff-pair-mirror-load", MirrorLoadPairComponents, { pair: PairFigures }> = {
  id: "diff-pair-mirror-load",
  title: "Differential pair with a current-mirror load (five-transistor amplifier)",
  description:
    "Source-coupled pair M1/M2 (device), current-mirror load M3 (diode, on M1's side)/M4 (output) of the other polarity (devices.load), single-ended output at M2/M4; tail an ideal itail or devices.tail with its gate at vtail. λ > 0 on both cards sets the open-loop output.",
  components: tailFields,
  roles: { load: { meaning: "the current-mirror load M3/M4 (the other polarity)", required: true, polarity: "opposite" }, tail: tailRole },
  build(stage, c, main, devs, rails, clm, o): CircuitBuild {
    checkTail(c, devs, rails, o);
    for (const [where, card] of [["device", main.card], ["devices.load", devs.load!.card]] as const)
      if (!((card.lambda ?? 0) > 0))
        throw new InputError(card.lambda ?? 0, "λ > 0 on the pair and load cards: with λ = 0 the open-loop output of the five-transistor amplifier is not determined (both output devices are ideal current sources)", `${o}: ${where}.card.lambda`);
    const core = pairCore(stage, c, main, devs, rails, "d1", "out");
    const load = devs.load!;
    const guessD = clampRail(rails.sign * (rails.vdr - (Math.abs(load.card.vt0) + 0.2)), rails);
    core.mosfets.push(
      { name: "3", role: "load (diode)", device: load, d: "d1", g: "d1", s: rails.drail, b: rails.drail },
      { name: "4", role: "load (output)", device: load, d: "out", g: "d1", s: rails.drail, b: rails.drail },
    );
    const net: Netlist = {
      name: `${o} (diff-pair-mirror-load)`,
      fixed: core.fixed,
      unknown: ["t", "d1", "out"],
      resistors: [],
      sources: core.sources,
      mosfets: core.mosfets,
      clm,
      guess: { t: core.guessT, d1: guessD, out: guessD },
    };
    return { net, main: "1", assumeSaturated: devs.tail ? ["M1", "M2", "M3", "M4", "M5"] : ["M1", "M2", "M3", "M4"] };
  },
  figures(s, c, rec) {
    const r = s.rails;
    const sign = r.sign;
    const { itail, gTail } = tailFigures(s, c, rec);
    const m1 = s.devices.M1!;
    const m2 = s.devices.M2!;
    const m3 = s.devices.M3!;
    const m4 = s.devices.M4!;
    rec?.note("Figures at the solved point", "Gains from the half circuit (hand) and from the nodal conductance matrix (exact small signal at this operating point, the value a SPICE .tf gives).");
    const gm1 = m1.smallSignal.gm;
    const hAd = rec ? rec.calc(pf.mirrorLoadGain, [gm1, m2.smallSignal.gds, m4.smallSignal.gds]) : pf.mirrorLoadGain.fn(gm1, m2.smallSignal.gds, m4.smallSignal.gds);
    const hAc = rec ? rec.calc(pf.mirrorLoadCommonModeGain, [gTail as Siemens, m3.smallSignal.gm]) : pf.mirrorLoadCommonModeGain.fn(gTail as Siemens, m3.smallSignal.gm);
    if (gTail > 0) {
      if (rec) rec.calc(pf.mirrorLoadRejection, [gm1, m3.smallSignal.gm, gTail as Siemens, m2.smallSignal.gds, m4.smallSignal.gds]);
    } else rec?.note("CMRR", "An ideal tail has no output conductance: the common-mode gain and hence the CMRR are unbounded in this model.");
    const dm = s.response({ in1: 0.5, in2: -0.5 });
    const cm = s.response({ in1: 1, in2: 1 });
    const ad = dm.out!;
    const ac = cm.out!;
    const cmrr = ac === 0 ? Infinity : Math.abs(ad / ac);
    rec?.note("Gains by nodal analysis", `Adm = ${fmt(ad)}, Acm = ${fmt(ac)}, CMRR = ${fmt(cmrr)} at the output.`);
    const ro = s.response({}, { out: 1 }).out!;
    const sr = slew(itail, c, rec);
    const vovTail = s.devices.M5 ? s.devices.M5.op.vov : 0;
    const vtIn = Math.abs(m1.op.vt);
    const lo = rec ? rec.calc(pf.pairCommonModeMin, [r.vsr as Volts, vovTail as Volts, vtIn as Volts, m1.op.vov]) : pf.pairCommonModeMin.fn(r.vsr as Volts, vovTail as Volts, vtIn as Volts, m1.op.vov);
    const vt3 = Math.abs(m3.op.vt) as Volts;
    const hi = rec ? rec.calc(pf.pairCommonModeMaxMirror, [r.vdr as Volts, vt3, m3.op.vov, vtIn as Volts]) : pf.pairCommonModeMaxMirror.fn(r.vdr as Volts, vt3, m3.op.vov, vtIn as Volts);
    const vic = (sign * c.vcm) as Volts;
    const omin = rec ? rec.calc(pf.pairOutputMin, [vic, vtIn as Volts]) : pf.pairOutputMin.fn(vic, vtIn as Volts);
    const omax = rec ? rec.calc(pf.mirrorLoadOutputMax, [r.vdr as Volts, m4.op.vov]) : pf.mirrorLoadOutputMax.fn(r.vdr as Volts, m4.op.vov);
    const swing = [swingInVolts(sign, "out", sign * s.sol.nodes.out!, omax, omin, "load device M4 leaves saturation", "input device M2 leaves saturation (VD = VG − Vt)")];
    const amplifiers: AmplifierMetrics[] = [
      { kind: "differential", inputNode: "in1−in2", outputNode: "out", gain: ad as never, rin: Infinity as Ohms, rout: ro as Ohms, note: "nodal analysis at the solved point; unloaded" },
      { kind: "common-mode", inputNode: "in1=in2", outputNode: "out", gain: ac as never, rin: Infinity as Ohms, rout: ro as Ohms, note: "nodal analysis; set by the tail's output resistance and the mirror" },
    ];
    const findings: string[] = [];
    for (const m of ["M1", "M2", "M3", "M4"] as const) if (s.devices[m]!.region !== "saturation") findings.push(`${m} is in ${s.devices[m]!.region}: the small-signal figures hold only at this point.`);
    if (!s.devices.M5) findings.push("The tail is an ideal current source: its compliance and output resistance are not modelled (CMRR unbounded).");
    findings.push("The open-loop output of a high-gain stage moves with any offset: in use the amplifier sits in a feedback loop that sets it.");
    return {
      metrics: { amplifiers, swing, checks: rangeChecks(s, lo, hi, rec) },
      findings,
      extra: {
        pair: pairFigures(itail, ad, ac, cmrr, hAd, hAc, absRange(sign, lo, hi), ro, sr),
      },
    };
  },
};

export const diffPair = circuitTopology(diffPairSpec);
export const mirrorLoadPair = circuitTopology(mirrorLoadPairSpec);
export type { AmperesPerVoltSquared };
