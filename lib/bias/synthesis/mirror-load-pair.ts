/**
 * Design of the five-transistor amplifier (`diff-pair-mirror-load`) from a
 * specification: tail current, differential gain, input common-mode range,
 * highest output, supply, channel lengths → sizes of M1/M2, M3/M4, M5 and the
 * tail gate bias (square law, λ from the cards at the given lengths). Each
 * overdrive is taken at its limit less a margin, the widths follow from the
 * currents (`aspectRatioFor`), then the designed stage is re-solved through
 * the registered topology and its achieved figures reported beside the
 * specification. No discrete resistors: on-chip devices are drawn to any size.
 * Failure mode: InfeasibleError, in numbers, when a range leaves no overdrive.
 */
import type { DeviceCard } from "../../device/card.js";
import { aspectRatioFor } from "../../device/inverse.js";
import { InfeasibleError, InputError, PinchoffError } from "../../errors.js";
import * as pf from "../../formulas/pair.formulas.js";
import type { Amperes, Meters, PerVolt, Ratio, Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import { analyzeStage } from "../analyze.js";
import type { Stage, StageAnalysis, Supplies } from "../topology.js";
import { figure, type SynthesisResult } from "./common.js";
import { netlistResult } from "./netlist-design.js";
import type { PairFigures } from "../topologies/diff-pair.js";
import { fmt } from "../topologies/two-transistor.js";

export interface MirrorLoadPairSpec {
  readonly input: DeviceCard;
  readonly load: DeviceCard;
  readonly supplies: Supplies;
  readonly itail: Amperes;
  /** Target differential gain (magnitude). */
  readonly gain: Ratio;
  /** Input common-mode range to cover (absolute volts). */
  readonly commonModeMin: Volts;
  readonly commonModeMax: Volts;
  /** Output voltage the amplifier must reach toward the load's rail (absolute); optional. */
  readonly outputMax?: Volts;
  /** Channel lengths (one for the input pair and tail, one for the load); λ on the cards belongs to these. */
  readonly lInput: Meters;
  readonly lLoad: Meters;
  /** Saturation margin kept at each limit; 0.1 V when omitted (common practice). */
  readonly margin?: Volts;
}

export interface MirrorLoadPairDesign {
  readonly stage: Stage;
  readonly overdrive: { readonly input: Volts; readonly load: Volts; readonly tail: Volts };
  readonly analysis: StageAnalysis & { readonly pair: PairFigures };
}

/** Size the five-transistor amplifier for a specification, recorded when `rec` is given. */
export function designMirrorLoadPair(spec: MirrorLoadPairSpec, rec?: Derivation): MirrorLoadPairDesign {
  const o = "designMirrorLoadPair";
  const sign = spec.input.polarity === "nmos" ? 1 : -1;
  if (spec.load.polarity === spec.input.polarity) throw new InputError(spec.load.polarity, `the other polarity than the input pair ("${spec.input.polarity}")`, `${o}: load.polarity`);
  for (const [k, v] of [["itail", spec.itail], ["gain", spec.gain], ["lInput", spec.lInput], ["lLoad", spec.lLoad]] as const)
    if (!(v > 0) || !Number.isFinite(v)) throw new InputError(v, "a finite value > 0", `${o}: ${k}`);
  const lamN = (spec.input.lambda ?? 0) as PerVolt;
  const lamP = (spec.load.lambda ?? 0) as PerVolt;
  if (!(lamN + lamP > 0)) throw new InputError(lamN + lamP, "λ > 0 on the input or load card: the gain is set by the output conductances", `${o}: input.lambda + load.lambda`);
  const vdd = spec.supplies.vdd;
  const vss = spec.supplies.vss ?? 0;
  const vdr = (sign > 0 ? vdd : -vss) as Volts;
  const vsr = (sign > 0 ? vss : -vdd) as Volts;
  const lo = Math.min(sign * spec.commonModeMin, sign * spec.commonModeMax) as Volts;
  const hi = Math.max(sign * spec.commonModeMin, sign * spec.commonModeMax) as Volts;
  const m = spec.margin ?? 0.1;
  const vt1 = Math.abs(spec.input.vt0) as Volts;
  const vt3 = Math.abs(spec.load.vt0) as Volts;
  rec?.assume("Square law with λ from the cards at the given lengths; the body effect of the input pair is left to the re-solve.");
  const vov1 = rec ? rec.calc(pf.mirrorLoadOverdriveForGain, [spec.gain, lamN, lamP]) : pf.mirrorLoadOverdriveForGain.fn(spec.gain, lamN, lamP);
  let vov3 = rec ? rec.calc(pf.mirrorLoadOverdriveForRange, [vdr, vt3, vt1, hi]) : pf.mirrorLoadOverdriveForRange.fn(vdr, vt3, vt1, hi);
  if (spec.outputMax !== undefined) vov3 = Math.min(vov3, vdr - sign * spec.outputMax) as Volts;
  vov3 = (vov3 - m) as Volts;
  if (!(vov3 > 0.05))
    throw new InfeasibleError(
      `the highest input common mode ${fmt(sign * hi)} V${spec.outputMax !== undefined ? ` and the output ${fmt(spec.outputMax)} V` : ""} leave the load only ${fmt(vov3)} V of overdrive after the ${fmt(m)} V margin; expected at least 0.05 V: lower the highest common mode or the output, or use a load with a smaller threshold`,
      `${o}: commonModeMax`,
    );
  const vov5 = ((rec ? rec.calc(pf.tailOverdriveForRange, [lo, vsr, vt1, vov1]) : pf.tailOverdriveForRange.fn(lo, vsr, vt1, vov1)) - m) as Volts;
  if (!(vov5 > 0.05))
    throw new InfeasibleError(
      `the lowest input common mode ${fmt(sign * lo)} V leaves the tail only ${fmt(vov5)} V of overdrive after Vt1 = ${fmt(vt1)} V, VOV1 = ${fmt(vov1)} V (set by the gain ${fmt(spec.gain)}) and the ${fmt(m)} V margin; expected at least 0.05 V: raise the lowest common mode or lower the gain`,
      `${o}: commonModeMin`,
    );
  const half = (spec.itail / 2) as Amperes;
  const wl1 = aspectRatioFor(spec.input, half, vov1, {}, rec);
  const wl3 = aspectRatioFor(spec.load, half, vov3, {}, rec);
  const wl5 = aspectRatioFor(spec.input, spec.itail, vov5, {}, rec);
  const dev = (card: DeviceCard, wl: number, l: Meters) => ({ card, w: (wl * l) as Meters, l });
  const vtail = (sign * (vsr + vt1 + vov5)) as Volts;
  const stage: Stage = {
    topology: "diff-pair-mirror-load",
    name: "designed five-transistor amplifier",
    device: dev(spec.input, wl1, spec.lInput),
    devices: { load: dev(spec.load, wl3, spec.lLoad), tail: dev(spec.input, wl5, spec.lInput) },
    components: { vcm: (spec.commonModeMin + spec.commonModeMax) / 2, vtail },
    supplies: spec.supplies,
  };
  rec?.note("Re-solve", "The sized stage is solved by nodal analysis at the middle of the common-mode range; its figures follow.");
  const analysis = analyzeStage(stage, rec) as StageAnalysis & { pair: PairFigures };
  return { stage, overdrive: { input: vov1, load: vov3, tail: vov5 }, analysis };
}

/** The five-transistor amplifier's specification in the shared (design-file) form: the input card is the stage's device; the load's card and length in `load`. */
export interface MirrorLoadPairSynthesisSpec {
  readonly topology: "diff-pair-mirror-load";
  readonly name?: string;
  readonly card: DeviceCard;
  readonly supplies: Supplies;
  readonly body?: Stage["body"];
  readonly options?: Stage["options"];
  readonly limits?: Stage["limits"];
  /** Tail current. */
  readonly id: Amperes;
  /** Differential gain magnitude. */
  readonly gain: Ratio;
  readonly commonMode: { readonly min: Volts; readonly max: Volts };
  /** Channel length of the input pair and the tail. */
  readonly l: Meters;
  readonly load: { readonly card: DeviceCard; readonly l: Meters };
  readonly output?: { readonly max: Volts };
  readonly margin?: Volts;
}

/** `designMirrorLoadPair` behind the shared designer interface: the result in the `SynthesisResult` shape (no resistors, so nothing to snap). */
export function synthesizeMirrorLoadPair(spec: MirrorLoadPairSynthesisSpec, rec?: Derivation): SynthesisResult {
  const o = "diff-pair-mirror-load spec";
  if (!spec.commonMode || typeof spec.commonMode !== "object") throw new InputError(spec.commonMode, "commonMode { min, max } in V (absolute)", `${o}.commonMode`, "invalid-design");
  if (!spec.load || typeof spec.load !== "object") throw new InputError(spec.load, "load { card, l }: the mirror load's card (the other polarity) and length", `${o}.load`, "invalid-design");
  let d: MirrorLoadPairDesign;
  try {
    d = designMirrorLoadPair(specOf(spec), rec);
  } catch (e) {
    throw renamed(e, o);
  }
  const stage: Stage = { ...d.stage, ...(spec.name ? { name: spec.name } : {}), ...(spec.body ? { body: spec.body } : {}), ...(spec.options ? { options: spec.options } : {}), ...(spec.limits ? { limits: spec.limits } : {}) };
  const analysis = (stage === d.stage ? d.analysis : analyzeStage(stage)) as StageAnalysis & { pair: PairFigures };
  const s = spec.card.polarity === "nmos" ? 1 : -1;
  const vgs = Math.abs(analysis.op.vgsDevice);
  const main = { w: stage.device.w, l: stage.device.l, vov: d.overdrive.input, vgs: vgs as Volts };
  const vcm = stage.components.vcm!;
  return netlistResult({
    topology: "diff-pair-mirror-load",
    card: spec.card,
    main,
    ideal: stage,
    chosen: { stage, analysis },
    nodes: { vg: vcm, vs: vcm - s * vgs, vd: analysis.nodes.out! },
    current: { target: spec.id, achieved: analysis.pair.tailCurrent },
    output: { target: analysis.nodes.out!, achieved: analysis.nodes.out! },
    gain: figure(spec.gain, Math.abs(analysis.pair.differentialGain)),
  });
}

/** The flat form `designMirrorLoadPair` takes, from the shared form. */
function specOf(spec: MirrorLoadPairSynthesisSpec): MirrorLoadPairSpec {
  return {
    input: spec.card,
    load: spec.load.card,
    supplies: spec.supplies,
    itail: spec.id,
    gain: spec.gain,
    commonModeMin: spec.commonMode.min,
    commonModeMax: spec.commonMode.max,
    ...(spec.output ? { outputMax: spec.output.max } : {}),
    lInput: spec.l,
    lLoad: spec.load.l,
    ...(spec.margin !== undefined ? { margin: spec.margin } : {}),
  };
}

/** designMirrorLoadPair's field names, as the specification names them. */
const fieldOf: Readonly<Record<string, string>> = { itail: "id", gain: "gain", commonModeMin: "commonMode.min", commonModeMax: "commonMode.max", lInput: "l", lLoad: "load.l", "load.polarity": "load.card.polarity", "input.lambda + load.lambda": "load.card.lambda" };

/** An error of designMirrorLoadPair with its origin named by the specification's field. */
function renamed(e: unknown, o: string): unknown {
  if (!(e instanceof PinchoffError) || !e.origin?.startsWith("designMirrorLoadPair: ")) return e;
  const field = e.origin.slice("designMirrorLoadPair: ".length);
  const origin = `${o}.${fieldOf[field] ?? field}`;
  if (e instanceof InputError) return new InputError(e.value, e.expected, origin, e.code);
  if (e instanceof InfeasibleError) return new InfeasibleError(e.message.startsWith(`${e.origin}: `) ? e.message.slice(e.origin.length + 2) : e.message, origin);
  return e;
}
