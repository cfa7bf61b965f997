/**
 * Frequency response of a single-transistor stage by hand analysis, from its
 * DC analysis and a frequency specification (signal source, load, coupling and
 * bypass capacitors or a target low corner).
 *
 * Method (each step a catalog formula, lib/formulas/frequency.catalog.ts):
 * - Low frequencies: the short-circuit time constant of each coupling and
 *   bypass capacitor (the others shorted), the corner by the short-circuit
 *   time-constant sum, and the −3 dB corner of the hand transfer function that
 *   takes those poles as independent (with the bypass capacitor's zero at
 *   1/(2π·RS·CB)). Capacitors for a target corner: the one seeing the smallest
 *   resistance (the bypass capacitor when there is one) dominant, the others a
 *   twentieth of the target each, all scaled so the hand corner lands on the target, then
 *   chosen as a set from the E6 or E12 series (IEC 60063).
 * - High frequencies: the open-circuit time-constant estimate, the two-pole
 *   denominator 1 + b1·s + b2²·s² with its dominant and non-dominant poles and
 *   the zero through the gate-to-output capacitance, and (common source) the
 *   Miller approximation. The methods assume one dominant pole; the record
 *   checks it (fp2 ≥ 10·fp1 and |fz| ≥ 10·fp1).
 *
 * Views: common source (four-resistor, fixed-gate, current-source-bias; gate
 * AC-coupled through a divider or DC-coupled in series with its bias source,
 * source bypassed when it has a resistor or current source) and source
 * follower (drain at its rail); drain feedback (the common source with RF from drain to gate, gate AC-coupled:
 * the exact two-node determinant for the upper poles, and for the low corner the condition that the input
 * coupling capacitor is a short at the corner beside Rsig + 1/gm, checked in the record and met by design);
 * the cascode stage in lib/bias/frequency-cascode.ts; the current mirror, the cascode mirror and the diode-load
 * stage in lib/bias/frequency-two-transistor.ts. Other topologies are refused with an InputError.
 * Small-signal values are the DC analysis's (square law); device capacitances
 * from lib/device/capacitance.ts. Not on a hot path; allocates its result.
 */
import { deviceCapacitances, evaluateFormula, hasCapacitanceData, missingCapacitanceHelp, type DeviceCapacitances } from "../device/capacitance.js";
import { InfeasibleError, InputError } from "../errors.js";
import * as bf from "../formulas/bias.formulas.js";
import * as ff from "../formulas/frequency.formulas.js";
import type { Farads, Hertz, Ohms, Ratio, Seconds } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { nearestStandard, standardValuesAround, type SeriesName } from "./eseries.js";
import { analyzeCascodeFrequency, type CascodeFrequencyNodes } from "./frequency-cascode.js";
import { analyzeMirrorPairFrequency, type MirrorPairFrequency } from "./frequency-pair.js";
import { analyzeTwoStageFrequency, checkCompensation, twoStageResponse, type CompensationSpec, type TwoStageFrequency } from "./frequency-two-stage.js";
import { analyzeCascodeMirrorFrequency, analyzeDiodeLoadFrequency, analyzeMirrorFrequency, type CascodeMirrorFrequencyNodes, type MirrorFrequencyNodes } from "./frequency-two-transistor.js";
import { stageCheck } from "./metrics.js";
import type { Stage, StageAnalysis, StageCheck } from "./topology.js";

/** What drives and loads the stage, and the capacitors or the corner wanted. */
export interface FrequencySpec {
  /** Signal source: its resistance (0 Ω, an ideal voltage source, when omitted). Only a resistance is accepted. */
  readonly source?: { readonly resistance: Ohms };
  /** Load: a resistor behind the output coupling capacitor (the cascode mirror: RLOAD returned to the source that holds vout) and/or a capacitance at the output. */
  readonly load?: { readonly resistance?: Ohms; readonly capacitance?: Farads };
  /** Coupling and bypass capacitors; omitted ones are designed for `targets.lowCorner` or taken as ideal. */
  readonly capacitors?: { readonly input?: Farads; readonly output?: Farads; readonly bypass?: Farads };
  readonly targets?: { readonly lowCorner?: Hertz; readonly highCorner?: Hertz };
  /** Series the designed capacitors are chosen from; E12 when omitted. */
  readonly series?: "E6" | "E12";
  /** Two-stage Miller amplifier only: the Miller capacitor (or a target phase margin) and the nulling resistor (or its rule). */
  readonly compensation?: CompensationSpec;
}

export type FrequencyView = "common-source" | "source-follower" | "cascode" | "differential-pair" | "two-stage" | "drain-feedback" | "current-mirror" | "diode-load" | "cascode-mirror";
export type CapacitorRole = "input" | "output" | "bypass";

export interface CouplingCapacitor {
  readonly role: CapacitorRole;
  readonly value: Farads;
  /** Resistance it sees with the other capacitors shorted. */
  readonly resistance: Ohms;
  readonly timeConstant: Seconds;
  readonly pole: Hertz;
  /** Designed for the target corner (then `ideal` is the unsnapped value) or given. */
  readonly designed: boolean;
  readonly ideal?: Farads;
}

export interface LowFrequencyResponse {
  readonly capacitors: readonly CouplingCapacitor[];
  /** Short-circuit time-constant estimate: the sum of the capacitors' poles. */
  readonly sctcCorner: Hertz;
  /** −3 dB corner of the hand transfer function (poles independent, bypass zero included). */
  readonly corner: Hertz;
  /** Zero of the bypass capacitor 1/(2π·RS·CB), when there is one with a source resistor. */
  readonly bypassZero?: Hertz;
  /** The largest pole over the sum of the others (∞ with one capacitor). */
  readonly dominance: number;
}

export interface HighFrequencyResponse {
  /** Open-circuit time constants: gate to AC ground, gate to output, output to AC ground. */
  readonly timeConstants: { readonly gate: Seconds; readonly bridge: Seconds; readonly output: Seconds };
  readonly b1: Seconds;
  /** √b2 of the denominator 1 + b1·s + b2·s² (0 with an ideal signal source in a common source). */
  readonly b2: Seconds;
  /** Open-circuit time-constant estimate of the upper corner, 1/(2π·b1). */
  readonly octcCorner: Hertz;
  /** Real poles of the two-pole denominator, or undefined when they are a complex pair. */
  readonly dominantPole?: Hertz;
  readonly nonDominantPole?: Hertz;
  readonly complexPair?: { readonly naturalFrequency: Hertz; readonly q: Ratio };
  /** The zero through the gate-to-output capacitance: right half plane (common source) or left (follower). */
  readonly zero: { readonly frequency: Hertz; readonly rightHalfPlane: boolean };
  /** Miller approximation (common source only). */
  readonly miller?: { readonly capacitance: Farads; readonly inputPole: Hertz; readonly outputPole: Hertz };
  /** −3 dB corner of the hand transfer function. */
  readonly corner: Hertz;
  /** Whether one pole dominates (fp2 ≥ 10·fp1 and |fz| ≥ 10·fp1): the OCTC and Miller estimates' own assumption. */
  readonly dominantPoleHolds: boolean;
}

/**
 * The upper-frequency block of an amplifier whose two real poles are known from its own analysis (the
 * five-transistor and two-stage amplifiers): the open-circuit view takes 1/ω of each pole, the second as the
 * bridge and the first as the output time constant.
 */
export function twoKnownPoles(fp1: number, fp2: number, zero: HighFrequencyResponse["zero"], corner: number, dominantPoleHolds: boolean): HighFrequencyResponse {
  const w1 = 2 * Math.PI * fp1;
  const w2 = 2 * Math.PI * fp2;
  const b1 = 1 / w1 + 1 / w2;
  return {
    timeConstants: { gate: 0 as Seconds, bridge: (1 / w2) as Seconds, output: (1 / w1) as Seconds },
    b1: b1 as Seconds,
    b2: Math.sqrt(1 / (w1 * w2)) as Seconds,
    octcCorner: (1 / (2 * Math.PI * b1)) as Hertz,
    dominantPole: fp1 as Hertz,
    nonDominantPole: fp2 as Hertz,
    zero,
    corner: corner as Hertz,
    dominantPoleHolds,
  };
}

/** Node capacitances and resistances the high-frequency formulas used. */
export interface FrequencyNodes {
  /** Signal source as the gate sees it. */
  readonly rsigSeen: Ohms;
  /** Total resistance at the output node. */
  readonly rOut: Ohms;
  readonly cGate: Farads;
  readonly cBridge: Farads;
  readonly cOut: Farads;
  readonly gm: number;
}

export interface FrequencyAnalysis {
  readonly view: FrequencyView;
  readonly outputNode: "drain" | "source";
  readonly capacitances: DeviceCapacitances;
  /**
   * Midband gain from the signal source to the output, with source and load resistances. With `drive: "current"`
   * (the current mirror, driven by a signal current into its reference node) it is the transimpedance in V/A.
   */
  readonly midbandGain: Ratio;
  /** What the signal source is: a voltage source with its resistance (every view but the mirror) or an ideal current. */
  readonly drive: "voltage" | "current";
  readonly source: { readonly resistance: Ohms };
  readonly load: { readonly resistance?: Ohms; readonly capacitance: Farads };
  /** Undefined when the stage has no coupling or bypass capacitor (gate and output DC-coupled, no source resistor). */
  readonly low?: LowFrequencyResponse;
  readonly high: HighFrequencyResponse;
  readonly nodes: FrequencyNodes;
  readonly checks: readonly StageCheck[];
  readonly findings: readonly string[];
  /** What the SPICE export needs: the gate coupling (divider: AC-coupled), the source resistor of the bypass zero. */
  readonly circuit: { readonly gateCoupled: boolean; readonly rs: number; readonly bypassToIdealSource: boolean };
  /** Cascode stage only: the node between the devices and the node poles (lib/bias/frequency-cascode.ts). */
  readonly cascode?: CascodeFrequencyNodes;
  /** Differential pair with a mirror load only: GBW, mirror pole, phase margin (lib/bias/frequency-pair.ts). */
  readonly pair?: MirrorPairFrequency;
  /** Two-stage Miller amplifier only: compensation, poles, zeros, GBW, phase margin (lib/bias/frequency-two-stage.ts). */
  readonly twoStage?: TwoStageFrequency;
  /** Current mirror only: the gate node and its pole (lib/bias/frequency-two-transistor.ts). */
  readonly mirror?: MirrorFrequencyNodes;
  /** Cascode current mirror only: node A (stacked), node X and the cascode's output resistance (lib/bias/frequency-two-transistor.ts). */
  readonly cascodeMirror?: CascodeMirrorFrequencyNodes;
}

/** Title of the note that opens every frequency record: the run report files such a record under its own heading. */
export const frequencyRecordNote = "Frequency response";

/** Whether a record (its JSON form) is a frequency analysis's: its first note is `frequencyRecordNote`. */
export function isFrequencyRecord(data: { readonly steps: ReadonlyArray<{ readonly kind: string; readonly title?: string }> }): boolean {
  return data.steps.some((st) => st.kind === "note" && st.title === frequencyRecordNote);
}

/** The pole-dominance ratio the OCTC and Miller estimates assume (common practice: a decade). */
export const dominanceRatio = 10;
/**
 * Share of the target corner given to each non-dominant capacitor. A decade below is common practice, but with
 * three capacitors 0.8 : 0.1 : 0.1 sits exactly on the low-corner dominance check (largest ≥ 4 × the rest) and
 * E-series snapping pushes it under; a twentieth each leaves the dominant pole ≥ 9 × the rest before snapping.
 */
export const nonDominantShare = 0.05;
/** Drain feedback: the largest impedance of the input coupling capacitor at the low corner, over Rsig + 1/gm, for independent poles. */
export const feedbackInputShortLimit = 0.1;

const supported = ["four-resistor", "fixed-gate", "current-source-bias", "drain-feedback", "source-follower", "current-mirror", "diode-load", "cascode-stage", "cascode-mirror", "diff-pair-mirror-load", "two-stage-miller"] as const;

const origin = (stage: Stage) => (stage.name ? `stage "${stage.name}"` : `${stage.topology} stage`);

function requireResistance(v: unknown, at: string, allowZero: boolean): number {
  if (typeof v !== "number" || !Number.isFinite(v) || v < 0 || (!allowZero && v === 0))
    throw new InputError(v, `a resistance ${allowZero ? "≥ 0" : "> 0"} Ω as a plain number in SI units (a complex or reactive impedance is not supported: model its capacitance as load.capacitance)`, at, "invalid-value");
  return v;
}
function requireCapacitance(v: unknown, at: string): number {
  if (typeof v !== "number" || !Number.isFinite(v) || v <= 0) throw new InputError(v, "a capacitance > 0 F in SI units", at);
  return v;
}

/** Validate a frequency spec against a stage; returns the spec. */
export function checkFrequencySpec(spec: FrequencySpec, o = "frequency"): FrequencySpec {
  if (!spec || typeof spec !== "object") throw new InputError(spec, "a frequency specification { source?, load?, capacitors?, targets?, series? }", o, "invalid-design");
  if (spec.source !== undefined) {
    if (typeof spec.source !== "object" || spec.source === null || Array.isArray(spec.source))
      throw new InputError(spec.source, "a signal source { resistance } with the resistance in Ω", `${o}.source`, "invalid-design");
    const extra = Object.keys(spec.source).filter((k) => k !== "resistance");
    if (extra.length) throw new InputError(extra[0], "only `resistance` (a source impedance that is not a resistance is not supported)", `${o}.source.${extra[0]}`, "invalid-design");
    requireResistance(spec.source.resistance, `${o}.source.resistance`, true);
  }
  if (spec.load !== undefined) {
    if (typeof spec.load !== "object" || spec.load === null) throw new InputError(spec.load, "a load { resistance?, capacitance? }", `${o}.load`, "invalid-design");
    if (spec.load.resistance !== undefined) requireResistance(spec.load.resistance, `${o}.load.resistance`, false);
    if (spec.load.capacitance !== undefined && (typeof spec.load.capacitance !== "number" || !(spec.load.capacitance >= 0) || !Number.isFinite(spec.load.capacitance)))
      throw new InputError(spec.load.capacitance, "a load capacitance ≥ 0 F", `${o}.load.capacitance`);
  }
  for (const k of ["input", "output", "bypass"] as const) {
    const v = spec.capacitors?.[k];
    if (v !== undefined) requireCapacitance(v, `${o}.capacitors.${k}`);
  }
  const t = spec.targets;
  if (t?.lowCorner !== undefined && (typeof t.lowCorner !== "number" || !Number.isFinite(t.lowCorner) || t.lowCorner <= 0))
    throw new InputError(t.lowCorner, "a low-frequency corner > 0 Hz", `${o}.targets.lowCorner`);
  if (t?.highCorner !== undefined && (typeof t.highCorner !== "number" || !Number.isFinite(t.highCorner) || t.highCorner <= 0))
    throw new InputError(t.highCorner, "an upper corner > 0 Hz", `${o}.targets.highCorner`);
  if (spec.series !== undefined && spec.series !== "E6" && spec.series !== "E12") throw new InputError(spec.series, `"E6" or "E12"`, `${o}.series`);
  if (spec.compensation !== undefined) checkCompensation(spec.compensation, `${o}.compensation`);
  return spec;
}

/** Small-signal values the frequency steps share, and the record. */
export interface FrequencyContext {
  rec?: Derivation;
  gm: number;
  gmb: number;
  gds: number;
}

/**
 * The frequency response of a stage at its operating point. `analysis` is the
 * stage's DC analysis (`analyzeStage`), `spec` the source, load and capacitors.
 */
export function analyzeFrequency(anyStage: Stage<string, object>, analysis: StageAnalysis, spec: FrequencySpec = {}, rec?: Derivation): FrequencyAnalysis {
  // Any topology's typed stage (a synthesis result's included); its components are read by name below.
  const stage = anyStage as unknown as Stage;
  const o = origin(stage);
  checkFrequencySpec(spec, `${o}: frequency`);
  if (!(supported as readonly string[]).includes(stage.topology))
    throw new InputError(stage.topology, `a topology the frequency analysis covers (${supported.join(", ")})`, `${o}: topology`, "invalid-design");
  if (!hasCapacitanceData(stage.device.card)) throw new InputError(undefined, missingCapacitanceHelp, `${o}: device.card "${stage.device.card.name}"`, "invalid-design");
  if (analysis.region !== "saturation")
    throw new InfeasibleError(`the device is in ${analysis.region}, not saturation: there is no amplifier to analyse; fix the bias first`, o);
  if (spec.compensation !== undefined && stage.topology !== "two-stage-miller")
    throw new InputError(spec.compensation, "no compensation section: only the two-stage-miller topology has a Miller capacitor", `${o}: frequency.compensation`, "invalid-design");
  if (stage.topology === "two-stage-miller") return analyzeTwoStageFrequency(stage, analysis, spec, o, rec);
  if (stage.topology === "diff-pair-mirror-load") {
    const ld = (stage.devices as Record<string, Stage["device"]> | undefined)?.load;
    if (ld && !hasCapacitanceData(ld.card)) throw new InputError(undefined, missingCapacitanceHelp, `${o}: devices.load.card "${ld.card.name}"`, "invalid-design");
    return analyzeMirrorPairFrequency(stage, analysis, spec, o, rec);
  }
  if (stage.topology === "current-mirror" || stage.topology === "diode-load") {
    const role = stage.topology === "current-mirror" ? "reference" : "load";
    const other = (stage.devices as Record<string, Stage["device"]> | undefined)?.[role];
    if (other && !hasCapacitanceData(other.card)) throw new InputError(undefined, missingCapacitanceHelp, `${o}: devices.${role}.card "${other.card.name}"`, "invalid-design");
    const fa = stage.topology === "current-mirror" ? analyzeMirrorFrequency(stage, analysis, spec, o, rec) : analyzeDiodeLoadFrequency(stage, analysis, spec, o, rec);
    requireHighTarget(fa, spec, o);
    return fa;
  }
  if (stage.topology === "cascode-mirror") {
    const cas = (stage.devices as Record<string, Stage["device"]> | undefined)?.cascode;
    if (cas && !hasCapacitanceData(cas.card)) throw new InputError(undefined, missingCapacitanceHelp, `${o}: devices.cascode.card "${cas.card.name}"`, "invalid-design");
    const fa = analyzeCascodeMirrorFrequency(stage, analysis, spec, o, rec);
    requireHighTarget(fa, spec, o);
    return fa;
  }
  if (stage.topology === "cascode-stage") {
    const cas = (stage.devices as Record<string, Stage["device"]> | undefined)?.cascode;
    if (cas && !hasCapacitanceData(cas.card)) throw new InputError(undefined, missingCapacitanceHelp, `${o}: devices.cascode.card "${cas.card.name}"`, "invalid-design");
    const fa = analyzeCascodeFrequency(stage, analysis, spec, o, rec);
    requireHighTarget(fa, spec, o);
    return fa;
  }
  const c = stage.components as Record<string, number | undefined>;
  const follower = stage.topology === "source-follower";
  // Drain feedback: RF from drain to gate; the gate is AC-coupled (RF holds its DC) and sees Rsig alone.
  const rf = stage.topology === "drain-feedback" ? c.rf! : undefined;
  if (follower && (c.rd ?? 0) > 0)
    throw new InputError(c.rd, "no drain resistor (rd = 0) for the follower's frequency analysis: a drain resistor needs its own bypass capacitor, which is not modelled", `${o}: components.rd`, "invalid-design");
  const rsig = spec.source?.resistance ?? 0;
  const rl = spec.load?.resistance;
  const cl = spec.load?.capacitance ?? 0;
  const gateCoupled = (c.rg1 !== undefined && c.rg2 !== undefined) || rf !== undefined;
  const rs = c.rs ?? 0;
  const idealSource = stage.topology === "current-source-bias";
  const hasBypass = !follower && (rs > 0 || idealSource);
  const { gm, gds } = analysis.smallSignal;
  const gmb = stage.body === "rail" ? analysis.smallSignal.gmb : 0;
  const ctx: FrequencyContext = { rec, gm, gmb, gds };
  const findings: string[] = [];
  const checks: StageCheck[] = [];
  if (rec) {
    rec.note(frequencyRecordNote, `${follower ? "Source follower: input at the gate, output at the source, drain at AC ground" : "Common source: input at the gate, output at the drain, source at AC ground at signal frequencies"}; small-signal values at the operating point.`);
    rec.input("Rsig", rsig, "resistance", spec.source ? `${o}: frequency.source.resistance` : `${o}: no source given (ideal voltage source)`);
    if (rl !== undefined) rec.input("RL", rl, "resistance", `${o}: frequency.load.resistance`);
    rec.input("CL", cl, "capacitance", spec.load?.capacitance !== undefined ? `${o}: frequency.load.capacitance` : `${o}: no load capacitance given`);
    rec.assume("Coupling and bypass capacitors are ideal capacitors; the device capacitances are constant at the operating point (small signal).");
  }
  const caps = deviceCapacitances(stage.device, analysis.op, `${o}: device`, rec);
  // Gate bias resistance and the Thevenin source.
  const divider = c.rg1 !== undefined && c.rg2 !== undefined;
  const RG = divider ? evaluateFormula(bf.dividerResistance, { RG1: c.rg1!, RG2: c.rg2! }, rec, "the gate divider loads the signal source") : Infinity;
  const RSP = divider ? evaluateFormula(ff.sourceSeenByGate, { Rsig: rsig, RG }, rec) : rsig;
  if (!gateCoupled) rec?.note("Gate drive", "The gate is DC-coupled: the signal source sits in series with the gate bias source, so the gate sees Rsig alone.");
  if (rf !== undefined)
    rec?.note("Gate drive", "The gate is AC-coupled and has no bias resistor to ground: RF from the drain holds its DC, so the signal source drives the gate alone and RF bridges the gate and the output at all frequencies.");
  const RS = rs;
  let RLP: number;
  let av: number;
  let RSL = 0;
  if (!follower) {
    const RD = c.rd!;
    RLP = rl !== undefined ? evaluateFormula(ff.outputNodeResistance, { gds, RD, RL: rl }, rec) : evaluateFormula(bf.commonSourceOutput, { RD, gds }, rec, "no load resistor: the output node sees RD ∥ ro");
    if (rf !== undefined) {
      const RN = evaluateFormula(ff.feedbackDeterminant, { RF: rf, RLP, RSP, gm }, rec, "RF is left out of RL': it appears in the determinant");
      av = evaluateFormula(ff.feedbackMidband, { RLP, gm, RF: rf, RN }, rec);
    } else av = divider ? evaluateFormula(ff.commonSourceMidband, { gm, RLP, RG, Rsig: rsig }, rec) : evaluateFormula(ff.commonSourceMidbandDirect, { gm, RLP }, rec);
  } else {
    RSL = rl !== undefined ? evaluateFormula(ff.followerNodeResistance, { gds, gmb, RS, RL: rl }, rec) : evaluateFormula(ff.followerNodeResistanceUnloaded, { gds, gmb, RS }, rec);
    av = evaluateFormula(ff.followerMidband, { gm, RSL, RG, Rsig: rsig }, rec);
    RLP = RSL;
  }
  // ---- low frequencies
  const low = lowFrequency(spec, { follower, gateCoupled, hasBypass, idealSource, rsig, rl, RG, RS, RLP, c, ...(rf !== undefined ? { rf } : {}) }, ctx, o, checks, findings);
  // ---- high frequencies
  const nodes = follower ? followerNodes(stage, caps, cl, RSP, RSL, ctx) : commonSourceNodes(caps, cl, RSP, RLP, ctx);
  const high = highFrequency(nodes, follower, ctx, checks, findings, low?.corner, rf);
  const cout = low?.capacitors.find((k) => k.role === "output")?.value;
  if (cout !== undefined && cl > 0) {
    // CL sits behind the output coupling capacitor: above the low corner they divide the signal by Cout/(Cout + CL).
    const chk = stageCheck("Output coupling capacitor ≥ 50 × load capacitance", cout / cl, "dimensionless", { min: 50 }, rec, "the hand model puts CL at the output node with the coupling capacitor shorted; the midband loss is CL/(Cout + CL)");
    checks.push(chk);
    if (!chk.passed) findings.push(`The output coupling capacitor (${fmt(cout)} F) is not much larger than the load capacitance (${fmt(cl)} F): together they divide the signal by ${fmt(cout / (cout + cl))} above the low corner, which this hand model leaves out.`);
  }
  const tHigh = spec.targets?.highCorner;
  if (tHigh !== undefined) {
    const chk = stageCheck("Upper corner at or above its target", high.corner, "frequency", { min: tHigh }, rec, "−3 dB corner of the hand transfer function");
    checks.push(chk);
    if (!chk.passed)
      throw new InfeasibleError(
        `the upper corner is ${fmt(high.corner)} Hz (open-circuit time constants: ${fmt(high.octcCorner)} Hz), below the target ${fmt(tHigh)} Hz; the largest time constant is ${largest(high.timeConstants)}: lower the source resistance, the load capacitance or the gain, or use a smaller device`,
        `${o}: frequency.targets.highCorner`,
      );
  }
  for (const f of findings) rec?.find("caution", f);
  return {
    view: follower ? "source-follower" : rf !== undefined ? "drain-feedback" : "common-source",
    outputNode: follower ? "source" : "drain",
    capacitances: caps,
    midbandGain: av as Ratio,
    drive: "voltage",
    source: { resistance: rsig as Ohms },
    load: { ...(rl !== undefined ? { resistance: rl as Ohms } : {}), capacitance: cl as Farads },
    ...(low ? { low } : {}),
    high,
    nodes,
    checks,
    findings,
    circuit: { gateCoupled, rs: RS, bypassToIdealSource: idealSource },
  };
}

/** A target upper corner the stage misses is an InfeasibleError (the views that do not check it themselves). */
function requireHighTarget(fa: FrequencyAnalysis, spec: FrequencySpec, o: string): void {
  const t = spec.targets?.highCorner;
  if (t !== undefined && fa.high.corner < t)
    throw new InfeasibleError(
      `the upper corner is ${fmt(fa.high.corner)} Hz (open-circuit time constants: ${fmt(fa.high.octcCorner)} Hz), below the target ${fmt(t)} Hz: lower the source resistance, the load capacitance or the gain, or use smaller devices`,
      `${o}: frequency.targets.highCorner`,
    );
}

function largest(t: HighFrequencyResponse["timeConstants"]): string {
  const e = Object.entries(t).sort((a, b) => b[1] - a[1])[0]!;
  return `the ${e[0] === "gate" ? "gate-to-ground" : e[0] === "bridge" ? "gate-to-output" : "output-node"} one (${fmt(e[1])} s)`;
}

interface LowInputs {
  follower: boolean;
  gateCoupled: boolean;
  hasBypass: boolean;
  idealSource: boolean;
  rsig: number;
  rl?: number;
  RG: number;
  RS: number;
  RLP: number;
  c: Record<string, number | undefined>;
  /** Drain-feedback resistor, when the stage has one. */
  rf?: number;
}

function lowFrequency(spec: FrequencySpec, x: LowInputs, ctx: FrequencyContext, o: string, checks: StageCheck[], findings: string[]): LowFrequencyResponse | undefined {
  const { rec, gm, gmb, gds } = ctx;
  const roles: Array<{ role: CapacitorRole; rx: number; rsZero?: number }> = [];
  if (rec && (x.gateCoupled || x.rl !== undefined || x.hasBypass)) rec.note("Low-frequency corner", "Short-circuit time constants: each coupling or bypass capacitor with the others shorted.");
  if (x.gateCoupled && x.rf !== undefined) {
    const Rin = evaluateFormula(ff.feedbackInputResistance, { RF: x.rf, RLP: x.RLP, gm }, rec, "the output coupling and bypass capacitors shorted");
    roles.push({ role: "input", rx: evaluateFormula(ff.feedbackInputCouplingResistance, { Rsig: x.rsig, Rin }, rec, "input coupling capacitor") });
  } else if (x.gateCoupled) roles.push({ role: "input", rx: evaluateFormula(ff.inputCouplingResistance, { Rsig: x.rsig, RG: x.RG }, rec, "input coupling capacitor: the gate draws no current") });
  if (x.rl !== undefined) {
    const Rout = x.follower
      ? evaluateFormula(bf.followerOutput, { RS: x.RS, gm, gmb, gds }, rec, "output resistance of the follower, gate at AC ground")
      : x.rf !== undefined
        ? evaluateFormula(ff.feedbackOutputResistance, { RD: x.c.rd!, gds, gm, Rsig: x.rsig, RF: x.rf }, rec, "output resistance with the input coupling and bypass capacitors shorted")
        : evaluateFormula(bf.commonSourceOutput, { RD: x.c.rd!, gds }, rec, "output resistance with the source bypassed");
    roles.push({ role: "output", rx: evaluateFormula(ff.outputCouplingResistance, { Rout, RL: x.rl }, rec, "output coupling capacitor") });
  }
  if (x.hasBypass) {
    const RD = x.c.rd!;
    const RDL = x.rl !== undefined ? evaluateFormula(ff.drainWithLoad, { RD, RL: x.rl }, rec, "the output coupling capacitor shorted") : RD;
    const rx = x.idealSource
      ? evaluateFormula(ff.bypassResistanceIdeal, { gds, RDL, gm, gmb }, rec, "bypass capacitor across the ideal current source")
      : x.rf !== undefined
        ? evaluateFormula(ff.feedbackBypassResistance, { RS: x.RS, gm, gmb, gds, RDL, RF: x.rf, Rsig: x.rsig }, rec, "bypass capacitor across RS; the input coupling capacitor shorted")
        : evaluateFormula(ff.bypassResistance, { RS: x.RS, gm, gmb, gds, RDL }, rec, "bypass capacitor across RS; the gate at AC ground");
    roles.push({ role: "bypass", rx, ...(x.idealSource ? {} : { rsZero: x.RS }) });
  }
  if (roles.length === 0) {
    rec?.note("Low-frequency corner", "No coupling or bypass capacitor: the stage is DC-coupled, so the response extends to DC.");
    return undefined;
  }
  const given = spec.capacitors ?? {};
  const target = spec.targets?.lowCorner;
  const series: SeriesName = spec.series ?? "E12";
  const missing = roles.filter((r) => given[r.role] === undefined);
  const values = new Map<CapacitorRole, number>();
  for (const r of roles) if (given[r.role] !== undefined) values.set(r.role, given[r.role]!);
  const ideals = new Map<CapacitorRole, number>();
  if (missing.length > 0 && target !== undefined) {
    designCapacitors(roles, missing, values, ideals, target, series, ctx, o, x.rf !== undefined ? x.rsig + 1 / gm : undefined);
  } else if (missing.length > 0) {
    throw new InputError(
      undefined,
      `a value for each of the stage's coupling and bypass capacitors (${missing.map((m) => m.role).join(", ")}) or a target low corner (targets.lowCorner) to design them for`,
      `${o}: frequency.capacitors`,
      "invalid-design",
    );
  }
  const caps = roles.map((r) => {
    const C = values.get(r.role)!;
    if (rec) rec.input(`C_${r.role}`, C, "capacitance", ideals.has(r.role) ? `designed, ${series} value` : `${o}: frequency.capacitors.${r.role}`);
    const tau = evaluateFormula(ff.timeConstant, { Cx: C, Rx: r.rx }, rec, `${r.role} capacitor`);
    const pole = evaluateFormula(ff.poleOfTimeConstant, { tau }, rec);
    return { role: r.role, value: C as Farads, resistance: r.rx as Ohms, timeConstant: tau as Seconds, pole: pole as Hertz, designed: ideals.has(r.role), ...(ideals.has(r.role) ? { ideal: ideals.get(r.role)! as Farads } : {}) };
  });
  const p = [0, 0, 0];
  caps.forEach((k, i) => (p[i] = k.pole));
  const sctc = evaluateFormula(ff.lowCorner, { f1: p[0]!, f2: p[1]!, f3: p[2]! }, rec, caps.length < 3 ? "absent capacitors contribute 0 Hz" : undefined);
  const bypass = roles.find((r) => r.role === "bypass" && r.rsZero !== undefined);
  let zero: number | undefined;
  if (bypass) {
    const tauZ = evaluateFormula(ff.timeConstant, { Cx: values.get("bypass")!, Rx: bypass.rsZero! }, rec, "the bypass capacitor with RS alone sets a zero");
    zero = evaluateFormula(ff.poleOfTimeConstant, { tau: tauZ }, rec, "zero of the bypassed source");
  }
  const corner = lowCornerOf(caps.map((k) => k.pole), zero);
  if (corner === 0) findings.push(`The unbypassed gain is within 3 dB of midband (bypass zero ${fmt(zero!)} Hz against its pole ${fmt(caps[0]!.pole)} Hz): the response has a shelf, not a −3 dB corner; the corner is reported as 0 Hz.`);
  const sorted = caps.map((k) => k.pole).sort((a, b) => b - a);
  const rest = sorted.slice(1).reduce((a, b) => a + b, 0);
  const dominance = rest > 0 ? sorted[0]! / rest : Infinity;
  rec?.note("Low-frequency corner of the hand transfer function", `Taking the poles as independent (each capacitor's loop barely loads the others) and the bypass zero into account, |H| falls to 1/√2 of midband at ${fmt(corner)} Hz; the short-circuit sum ${fmt(sctc)} Hz is an upper estimate that is close only when one pole dominates.`);
  const cin = caps.find((k) => k.role === "input");
  if (x.rf !== undefined && cin && caps.length > 1) {
    // Drain feedback: the output and bypass loops see the gate's impedance to ground through gm (RF closes the loop),
    // so the capacitors' poles are independent only while the input coupling capacitor is a short at the corner.
    const rho = evaluateFormula(ff.feedbackInputShort, { fL: corner, Cx: cin.value, Rsig: x.rsig, gm }, rec);
    checks.push(stageCheck(`Input coupling capacitor a short at the low corner (≤ ${feedbackInputShortLimit} × (Rsig + 1/gm))`, rho, "dimensionless", { max: feedbackInputShortLimit }, rec, "drain feedback: the poles are independent only then"));
    if (rho > feedbackInputShortLimit) findings.push(`The input coupling capacitor (${fmt(cin.value)} F) is not a short at the low corner beside Rsig + 1/gm: through RF its impedance enters the output and bypass loops, so the corner ${fmt(corner)} Hz is only approximate; enlarge it.`);
  }
  checks.push(stageCheck("Low corner: one pole dominates (largest ≥ 4 × the sum of the others)", Number.isFinite(dominance) ? dominance : 1e12, "dimensionless", { min: 4 }, rec, "the short-circuit time-constant sum's own assumption"));
  if (dominance < 4) findings.push(`No single low-frequency pole dominates (ratio ${fmt(dominance)}): the short-circuit sum ${fmt(sctc)} Hz overstates the corner; the hand transfer function gives ${fmt(corner)} Hz.`);
  if (target !== undefined) {
    const chk = stageCheck("Low-frequency corner within 15 % of its target", corner, "frequency", { min: target / 1.15, max: target * 1.15 }, rec);
    checks.push(chk);
  }
  return { capacitors: caps, sctcCorner: sctc as Hertz, corner: corner as Hertz, ...(zero !== undefined ? { bypassZero: zero as Hertz } : {}), dominance };
}

/**
 * −3 dB corner of Π s/(s+pᵢ) · (s+z)/(s+p_bypass): bisection on a log scale, to
 * 1e-12 relative. 0 when the response never falls 3 dB: a bypass capacitor
 * alone whose zero z/p ≥ 1/√2 (the unbypassed gain is within 3 dB of midband).
 */
export function lowCornerOf(poles: readonly number[], bypassZero?: number): number {
  if (bypassZero !== undefined && poles.length === 1 && (bypassZero / poles[0]!) ** 2 >= 0.5) return 0;
  const mag2 = (f: number) => {
    let m = 1;
    poles.forEach((p) => (m *= (f * f) / (f * f + p * p)));
    if (bypassZero !== undefined) m *= 1 + (bypassZero * bypassZero) / (f * f);
    return m;
  };
  // |H|² rises from 0 to 1; with the bypass zero, the last pole's factor is (f² + z²)/(f² + p²).
  let lo = Math.min(...poles) * 1e-3;
  let hi = Math.max(...poles) * poles.length * 10;
  for (let i = 0; i < 200 && hi / lo > 1 + 1e-12; i++) {
    const mid = Math.sqrt(lo * hi);
    if (mag2(mid) < 0.5) lo = mid;
    else hi = mid;
  }
  return Math.sqrt(lo * hi);
}

function designCapacitors(
  roles: Array<{ role: CapacitorRole; rx: number; rsZero?: number }>,
  missing: Array<{ role: CapacitorRole; rx: number }>,
  values: Map<CapacitorRole, number>,
  ideals: Map<CapacitorRole, number>,
  target: number,
  series: SeriesName,
  ctx: FrequencyContext,
  o: string,
  /** Drain feedback: Rsig + 1/gm, beside which the input coupling capacitor must be a short at the corner. */
  inputShortAgainst?: number,
): void {
  const { rec } = ctx;
  // Given capacitors use up part of the corner; the rest goes to the missing ones.
  const givenPoles = roles.filter((r) => values.has(r.role)).map((r) => 1 / (2 * Math.PI * r.rx * values.get(r.role)!));
  const givenSum = givenPoles.reduce((a, b) => a + b, 0);
  if (givenSum >= target)
    throw new InfeasibleError(
      `the given capacitors alone put the low corner at ${fmt(lowCornerOf(givenPoles))} Hz or more, above the target ${fmt(target)} Hz: enlarge them or raise the target`,
      `${o}: frequency.targets.lowCorner`,
    );
  const only = roles.length === 1 ? roles[0]! : undefined;
  if (only?.rsZero !== undefined && (only.rx / only.rsZero) ** 2 >= 0.5)
    throw new InfeasibleError(
      `the only low-frequency element is the bypass capacitor, and without it the gain falls by only ${fmt(-20 * Math.log10(only.rx / only.rsZero))} dB (resistance seen ${fmt(only.rx)} Ω against RS = ${fmt(only.rsZero)} Ω), so no capacitor gives a −3 dB corner at ${fmt(target)} Hz: add a coupling capacitor or a larger RS`,
      `${o}: frequency.targets.lowCorner`,
    );
  const dominant = missing.reduce((a, b) => (b.rx < a.rx ? b : a));
  rec?.note(
    "Capacitor design",
    `Target low corner ${fmt(target)} Hz. The ${dominant.role} capacitor sees the smallest resistance (${fmt(dominant.rx)} Ω), so it takes the dominant pole (a small resistance needs the largest capacitor, and making it dominant keeps the others small); the other capacitors each take a twentieth of the target, so the dominant pole keeps a margin over the rest after snapping. All are then scaled together so the hand transfer function's corner lands on the target, and chosen from the ${series} series as a set.`,
  );
  // Drain feedback: the input capacitor's pole goes low enough that its impedance at the corner is half the
  // limit beside Rsig + 1/gm (margin for snapping and the final scaling).
  const inputShare = (rx: number) => (inputShortAgainst !== undefined ? Math.min(nonDominantShare, (feedbackInputShortLimit / 2) * (inputShortAgainst / rx)) : nonDominantShare);
  const share = (r: { role: CapacitorRole; rx: number }) =>
    r.role === dominant.role ? 1 - missing.filter((m) => m.role !== dominant.role).reduce((a, m) => a + (m.role === "input" ? inputShare(m.rx) : nonDominantShare), 0) - givenSum / target : r.role === "input" ? inputShare(r.rx) : nonDominantShare;
  const ideal = new Map<CapacitorRole, number>();
  for (const m of missing) {
    const fx = evaluateFormula(ff.poleShare, { share: share(m), fL: target }, rec, `${m.role} capacitor${m.role === dominant.role ? " (dominant)" : m.role === "input" && inputShortAgainst !== undefined ? " (low enough to be a short at the corner beside Rsig + 1/gm)" : " (a twentieth of the target)"}`);
    ideal.set(m.role, evaluateFormula(ff.capacitorForPole, { Rx: m.rx, fx }, rec));
  }
  const bypass = roles.find((r) => r.role === "bypass");
  const cornerWith = (v: Map<CapacitorRole, number>) => {
    const poles = roles.map((r) => 1 / (2 * Math.PI * r.rx * (v.get(r.role) ?? values.get(r.role)!)));
    const z = bypass?.rsZero !== undefined ? 1 / (2 * Math.PI * bypass.rsZero * (v.get("bypass") ?? values.get("bypass")!)) : undefined;
    return lowCornerOf(poles, z);
  };
  // Scaling all missing capacitors by k scales their poles by 1/k; with given ones present the corner is not exactly
  // proportional, so iterate the scale a few times (converges fast: the missing ones dominate by construction).
  let k = 1;
  for (let i = 0; i < 30; i++) {
    const scaled = new Map([...ideal].map(([r, v]) => [r, v * k] as const));
    const f = cornerWith(scaled);
    if (Math.abs(f / target - 1) < 1e-9) break;
    k *= f / target;
  }
  rec?.note("Scaling", `All designed capacitors × ${fmt(k)} so the hand corner equals the target.`);
  for (const [r, v] of ideal) ideal.set(r, v * k);
  // Standard values as a set: the nearest candidates each, the combination whose corner is nearest the target.
  // When single values miss by more than 5 % (E6 steps are ~47 %), two standard values in parallel may be used.
  let cands = missing.map((m) => capsAround(ideal.get(m.role)!, series, 3, `${m.role} capacitor`));
  let best: { v: Map<CapacitorRole, number>; err: number; sum: number } | undefined;
  const walk = (i: number, acc: Map<CapacitorRole, number>) => {
    if (i === missing.length) {
      const err = Math.abs(Math.log(cornerWith(acc) / target));
      const sum = [...acc.values()].reduce((a, b) => a + b, 0);
      if (!best || err < best.err - 1e-12 || (Math.abs(err - best.err) <= 1e-12 && sum < best.sum)) best = { v: new Map(acc), err, sum };
      return;
    }
    for (const c of cands[i]!) {
      acc.set(missing[i]!.role, c);
      walk(i + 1, acc);
    }
    acc.delete(missing[i]!.role);
  };
  walk(0, new Map());
  if (best!.err > Math.log(1.05)) {
    cands = missing.map((m, i) => [...cands[i]!, ...parallelPairs(ideal.get(m.role)!, series)]);
    walk(0, new Map());
  }
  for (const m of missing) {
    values.set(m.role, best!.v.get(m.role)!);
    ideals.set(m.role, ideal.get(m.role)!);
    const v = best!.v.get(m.role)!;
    const single = Math.abs(nearestCap(v, series, "capacitor") / v - 1) < 1e-9;
    rec?.note(`${m.role} capacitor`, `ideal ${fmt(ideal.get(m.role)!)} F → ${single ? `${series} ${fmt(v)} F` : `${fmt(v)} F as two ${series} values in parallel`} (nearest single value ${fmt(nearestCap(ideal.get(m.role)!, series, "capacitor"))} F)`);
  }
}

// The E-series helpers take values from 1e-6 up (resistors); capacitors are snapped in picofarads.
const pF = 1e12;
const capsAround = (v: number, series: SeriesName, n: number, origin: string) => standardValuesAround(v * pF, series, n, origin).map((x) => x / pF);
const nearestCap = (v: number, series: SeriesName, origin: string) => nearestStandard(v * pF, series, origin) / pF;

/** Sums of two standard values (a ≥ b) within 5 % of a value: a parallel pair. */
export function parallelPairs(value: number, series: SeriesName): number[] {
  const out: number[] = [];
  for (const a of capsAround(value * 0.75, series, 6, "parallel pair")) {
    if (a >= value) continue;
    const b = nearestCap(value - a, series, "parallel pair");
    if (b <= a && Math.abs((a + b) / value - 1) <= 0.05) out.push(a + b);
  }
  return out;
}

function commonSourceNodes(caps: DeviceCapacitances, cl: number, RSP: number, RLP: number, ctx: FrequencyContext): FrequencyNodes {
  const { rec, gm } = ctx;
  rec?.note("Upper corner", "Node capacitances of the common source: the source and body at AC ground, so Cgb joins Cgs and the drain junction joins the load.");
  const CGI = evaluateFormula(ff.gateToGround, { Cgs: caps.cgs, Cgb: caps.cgb }, rec);
  const CGO = evaluateFormula(ff.gateToOutput, { Cgd: caps.cgd }, rec);
  const CO = evaluateFormula(ff.outputCapacitance, { CL: cl, Cdb: caps.cdb, Cds: caps.cds }, rec);
  return { rsigSeen: RSP as Ohms, rOut: RLP as Ohms, cGate: CGI as Farads, cBridge: CGO as Farads, cOut: CO as Farads, gm };
}

function followerNodes(stage: Stage, caps: DeviceCapacitances, cl: number, RSP: number, RSL: number, ctx: FrequencyContext): FrequencyNodes {
  const { rec, gm } = ctx;
  const rail = stage.body === "rail";
  rec?.note("Upper corner", `Node capacitances of the follower: the drain at AC ground; ${rail ? "the body at its rail, so Cgb goes to ground and the source junction loads the output" : "the body at the source, so Cgb bridges gate and source and the drain junction loads the output"}.`);
  const CGI = rail ? evaluateFormula(ff.followerGateToGround, { Cgd: caps.cgd, Cgb: caps.cgb }, rec) : evaluateFormula(ff.followerTiedGateToGround, { Cgd: caps.cgd }, rec);
  const CGO = rail ? evaluateFormula(ff.followerGateToOutput, { Cgs: caps.cgs }, rec) : evaluateFormula(ff.followerTiedGateToOutput, { Cgs: caps.cgs, Cgb: caps.cgb }, rec);
  const CO = rail
    ? evaluateFormula(ff.followerOutputCapacitance, { CL: cl, Csb: caps.csb, Cds: caps.cds }, rec)
    : evaluateFormula(ff.outputCapacitance, { CL: cl, Cdb: caps.cdb, Cds: caps.cds }, rec, "body at the source: the drain junction sits between AC ground and the output");
  return { rsigSeen: RSP as Ohms, rOut: RSL as Ohms, cGate: CGI as Farads, cBridge: CGO as Farads, cOut: CO as Farads, gm };
}

/**
 * Upper corner of a common-source or follower node mapping: open-circuit time constants, the two-pole denominator,
 * the zero, the Miller approximation (common source) and the dominance checks. `rf`: a resistor from the output
 * back to the gate (drain feedback), handled exactly by the two-node determinant.
 */
export function highFrequency(n: FrequencyNodes, follower: boolean, ctx: FrequencyContext, checks: StageCheck[], findings: string[], lowCorner?: number, rf?: number): HighFrequencyResponse {
  const { rec, gm } = ctx;
  const RSP = n.rsigSeen;
  const CGI = n.cGate;
  const CGO = n.cBridge;
  const CO = n.cOut;
  rec?.note("Open-circuit time constants", "Each device and load capacitance with the others open.");
  let tau1 = rf === undefined ? evaluateFormula(ff.gateTimeConstant, { CGI, RSP }, rec) : 0;
  let tau2: number;
  let tau3: number;
  let b2: number;
  let RN = 0;
  if (rf !== undefined) {
    const RLP = n.rOut;
    RN = evaluateFormula(ff.feedbackDeterminant, { RF: rf, RLP, RSP, gm }, rec);
    tau1 = evaluateFormula(ff.feedbackGateTimeConstant, { CGI, RSP, RF: rf, RLP, RN }, rec, "RF carries part of the gate node's charge to the output: the gate capacitance sees Rsig' in parallel with the feedback path");
    tau2 = evaluateFormula(ff.feedbackBridgeTimeConstant, { CGO, RF: rf, RSP, RLP, gm, RN }, rec);
    tau3 = evaluateFormula(ff.feedbackOutputTimeConstant, { CO, RLP, RF: rf, RSP, RN }, rec);
  } else if (!follower) {
    const RLP = n.rOut;
    tau2 = evaluateFormula(ff.bridgeTimeConstant, { CGO, RSP, gm, RLP }, rec);
    tau3 = evaluateFormula(ff.outputTimeConstant, { CO, RLP }, rec);
  } else {
    const RSL = n.rOut;
    tau2 = evaluateFormula(ff.followerBridgeTimeConstant, { CGO, RSP, RSL, gm }, rec);
    tau3 = evaluateFormula(ff.followerOutputTimeConstant, { CO, RSL, gm }, rec);
  }
  const b1 = evaluateFormula(ff.timeConstantSum, { tau1, tau2, tau3 }, rec);
  const fOctc = evaluateFormula(ff.upperCorner, { b1 }, rec);
  b2 =
    rf !== undefined
      ? evaluateFormula(ff.feedbackB2, { RSP, RLP: n.rOut, RF: rf, CGI, CGO, CO, RN }, rec)
      : follower
        ? evaluateFormula(ff.followerB2, { RSP, RSL: n.rOut, CGI, CGO, CO, gm }, rec)
        : evaluateFormula(ff.commonSourceB2, { RSP, RLP: n.rOut, CGI, CGO, CO }, rec);
  const fz =
    rf !== undefined
      ? evaluateFormula(ff.feedbackZero, { gm, RF: rf, CGO }, rec)
      : evaluateFormula(ff.bridgeZero, { gm, CGO }, rec, follower ? "left half plane: the gate-source capacitance feeds the signal forward in phase" : "right half plane: the gate-drain capacitance feeds the signal forward, inverted");
  let fp1: number | undefined;
  let fp2: number | undefined;
  let complexPair: HighFrequencyResponse["complexPair"];
  if (b2 === 0) {
    fp1 = fOctc;
    rec?.note("Poles", "b2 = 0 (ideal signal source): one pole, at the open-circuit estimate exactly.");
  } else if (b1 * b1 >= 4 * b2 * b2) {
    fp1 = evaluateFormula(ff.dominantPole, { b1, b2 }, rec);
    fp2 = evaluateFormula(ff.nonDominantPole, { b1, b2 }, rec);
    evaluateFormula(ff.nonDominantEstimate, { b1, b2 }, rec, "for comparison: the widely separated estimate");
  } else {
    const fn = evaluateFormula(ff.naturalFrequency, { b2 }, rec, "b1² < 4·b2: the poles are a complex pair");
    const q = evaluateFormula(ff.poleQuality, { b2, b1 }, rec);
    complexPair = { naturalFrequency: fn as Hertz, q: q as Ratio };
    findings.push(`The two poles are a complex pair (Q = ${fmt(q)} at ${fmt(fn)} Hz): no single dominant pole; the open-circuit estimate ${fmt(fOctc)} Hz is rough${q > 0.707 ? " and the response peaks" : ""}.`);
  }
  let sep = Infinity;
  if (fp1 !== undefined && fp2 !== undefined) sep = evaluateFormula(ff.poleSeparation, { fp2, fp1 }, rec);
  else if (complexPair) sep = 1;
  const zRatio = fp1 !== undefined ? fz / fp1 : complexPair ? fz / complexPair.naturalFrequency : Infinity;
  let miller: HighFrequencyResponse["miller"];
  if (!follower) {
    rec?.note("Miller approximation", "Cgd reflected to the input by the midband gain across it, 1 + gm·RL'; it assumes the output pole lies well above the input pole.");
    const RLP = n.rOut;
    const CM = evaluateFormula(ff.millerCapacitance, { CGI, CGO, gm, RLP }, rec, rf !== undefined ? "RF ≫ RL' assumed for the gain across Cgd" : undefined);
    let fin = Infinity;
    if (RSP > 0 && rf !== undefined) {
      const Rin = evaluateFormula(ff.feedbackInputResistance, { RF: rf, RLP, gm }, rec);
      fin = evaluateFormula(ff.feedbackMillerInputPole, { RSP, Rin, CM }, rec);
    } else if (RSP > 0) fin = evaluateFormula(ff.millerInputPole, { RSP, CM }, rec);
    const fout = evaluateFormula(ff.millerOutputPole, { RLP, CO, CGO, gm }, rec);
    miller = { capacitance: CM as Farads, inputPole: fin as Hertz, outputPole: fout as Hertz };
  }
  const corner = highCornerOf(b1, b2, fz, !follower);
  if (corner === Infinity) findings.push(`The response levels off above the zero ${fmt(fz)} Hz instead of falling 3 dB (the gate-to-output capacitance feeds the signal through; ideal signal source): there is no upper −3 dB corner in this model.`);
  const holds = sep >= dominanceRatio && zRatio >= dominanceRatio;
  checks.push(stageCheck("Upper poles: one dominates (fp2/fp1 ≥ 10)", Number.isFinite(sep) ? sep : 1e12, "dimensionless", { min: dominanceRatio }, rec, "the open-circuit time-constant and Miller estimates' own assumption"));
  checks.push(stageCheck("Zero well above the dominant pole (fz/fp1 ≥ 10)", Number.isFinite(zRatio) ? zRatio : 1e12, "dimensionless", { min: dominanceRatio }, rec));
  if (rec) {
    rec.note("Upper corner of the hand transfer function", `|H| falls to 1/√2 of midband at ${fmt(corner)} Hz (two-pole denominator with the zero).`);
  }
  if (!holds && !complexPair) findings.push(`The upper poles are not widely separated (fp2/fp1 = ${fmt(sep)}, fz/fp1 = ${fmt(zRatio)}): the open-circuit and Miller estimates are rough; use the two-pole corner ${fmt(corner)} Hz and verify by simulation.`);
  if (lowCorner !== undefined && corner < 10 * lowCorner) findings.push(`The upper corner ${fmt(corner)} Hz is within a decade of the low corner ${fmt(lowCorner)} Hz: there is no flat midband, and both corners interact.`);
  return {
    timeConstants: { gate: tau1 as Seconds, bridge: tau2 as Seconds, output: tau3 as Seconds },
    b1: b1 as Seconds,
    b2: b2 as Seconds,
    octcCorner: fOctc as Hertz,
    ...(fp1 !== undefined ? { dominantPole: fp1 as Hertz } : {}),
    ...(fp2 !== undefined ? { nonDominantPole: fp2 as Hertz } : {}),
    ...(complexPair ? { complexPair } : {}),
    zero: { frequency: fz as Hertz, rightHalfPlane: !follower },
    ...(miller ? { miller } : {}),
    corner: corner as Hertz,
    dominantPoleHolds: holds,
  };
}

/** |H(jω)|² / |H(0)|² of (1 ∓ s/ωz)/(1 + b1·s + b2²·s²) at frequency f. */
export function upperMagnitude2(f: number, b1: number, b2: number, fz: number): number {
  const w = 2 * Math.PI * f;
  const re = 1 - b2 * b2 * w * w;
  const im = b1 * w;
  const num = 1 + (f / fz) ** 2;
  return num / (re * re + im * im);
}

/** −3 dB corner of the two-pole hand transfer function (first crossing of 1/2 in |H|², bisection). */
export function highCornerOf(b1: number, b2: number, fz: number, _rhp: boolean): number {
  let lo = 1e-6 / (2 * Math.PI * b1);
  let hi = 1 / (2 * Math.PI * b1);
  while (upperMagnitude2(hi, b1, b2, fz) >= 0.5) {
    hi *= 2;
    if (hi * b1 > 1e9) return Infinity; // levels off above 1/√2: no −3 dB corner
  }
  // Scan up from lo for the first crossing (a peaked response crosses above 1 first).
  for (let i = 0; i < 200 && hi / lo > 1 + 1e-12; i++) {
    const mid = Math.sqrt(lo * hi);
    if (upperMagnitude2(mid, b1, b2, fz) >= 0.5) lo = mid;
    else hi = mid;
  }
  return Math.sqrt(lo * hi);
}

const fmt = (x: number) => (Number.isFinite(x) ? String(+x.toPrecision(4)) : String(x));



/**
 * The hand transfer function at each frequency: midband gain × each low-frequency
 * factor jf/(p + jf) (the bypass capacitor's (z + jf)/(p + jf)) × (1 ∓ jf/fz)/(1 + b1·s + b2²·s²).
 * Magnitude as |vout/vsig|, phase in degrees (an inverting stage starts at ±180°).
 */
export function handResponse(fa: FrequencyAnalysis, freqs: readonly number[]): { magnitude: number[]; phaseDeg: number[] } {
  if (fa.twoStage) return twoStageResponse(fa, freqs);
  const magnitude: number[] = [];
  const phaseDeg: number[] = [];
  const { b1, b2 } = fa.high;
  const fz = fa.high.zero.frequency;
  const sz = fa.high.zero.rightHalfPlane ? -1 : 1;
  for (const f of freqs) {
    let mag = Math.abs(fa.midbandGain);
    let ph = fa.midbandGain < 0 ? 180 : 0;
    for (const c of fa.low?.capacitors ?? []) {
      const z = c.role === "bypass" ? (fa.low?.bypassZero ?? 0) : 0;
      mag *= Math.hypot(z, f) / Math.hypot(c.pole, f);
      ph += (Math.atan2(f, z) - Math.atan2(f, c.pole)) * (180 / Math.PI);
    }
    const w = 2 * Math.PI * f;
    mag *= Math.hypot(1, f / fz) / Math.hypot(1 - b2 * b2 * w * w, b1 * w);
    ph += (Math.atan2(sz * f, fz) - Math.atan2(b1 * w, 1 - b2 * b2 * w * w)) * (180 / Math.PI);
    magnitude.push(mag);
    phaseDeg.push(ph);
  }
  return { magnitude, phaseDeg };
}
