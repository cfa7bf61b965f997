/**
 * What the designers of the netlist stages (resistive-load pair, cascode
 * stage, cascode mirror) share: sizing a transistor through the device model
 * API (square law, mobility or EKV card alike: `widthForCurrent` and
 * `gateVoltageForModel` invert the card's own model), its gm and gds there,
 * the load resistor chosen from an IEC 60063 series by re-solving, and the
 * result in the shape every designer returns. All in device polarity
 * (magnitudes) unless said; absolute voltages carry the polarity sign.
 * Failure mode: InfeasibleError in numbers when a target leaves no room.
 */
import { device, polaritySign, type DeviceCard } from "../../device/card.js";
import { conductances } from "../../device/model.js";
import { gateVoltageForModel, widthForCurrent } from "../../device/model-inverse.js";
import { modelFor, parameterVector } from "../../device/models/index.js";
import { InfeasibleError, InputError } from "../../errors.js";
import type { Amperes, Meters, Ratio, Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import { analyzeStage } from "../analyze.js";
import { snapToSeries, type SnapResult } from "../snap.js";
import type { Stage, StageAnalysis } from "../topology.js";
import { figure, type FigureDeviation, type SpecBase, type SynthesisResult } from "./common.js";

/** Saturation margin kept at every limit when the specification gives none (common practice: 0.1 V). */
export const defaultMargin = 0.1 as Volts;

export interface Sized {
  readonly w: Meters;
  readonly l: Meters;
  /** Overdrive VGS − Vt (zero-bias Vt), device polarity. */
  readonly vov: Volts;
  /** |VGS| at the design current. */
  readonly vgs: Volts;
}

/**
 * Size one transistor for |ID| = `id` at |VDS| = `vds` (source at its body):
 * the overdrive given → W by the card's model; the width given → the overdrive.
 */
export function sizeTransistor(card: DeviceCard, sizing: { readonly vov?: number; readonly w?: number; readonly l: number }, id: number, vds: number, origin: string, rec?: Derivation): Sized {
  const s = polaritySign(card);
  const vt = s * card.vt0;
  const l = sizing.l as Meters;
  if (!(vds > 0)) throw new InfeasibleError(`the transistor at ${origin} is left ${+vds.toPrecision(4)} V across it; expected a positive VDS for saturation`, origin);
  if (sizing.vov !== undefined) {
    const vgs = vt + sizing.vov;
    const w = widthForCurrent(device(card, l, l, origin), id as Amperes, (s * vgs) as Volts, { vds: (s * vds) as Volts }, rec);
    return { w, l, vov: sizing.vov as Volts, vgs: vgs as Volts };
  }
  const w = sizing.w as Meters;
  const g = gateVoltageForModel(device(card, w, l, origin), id as Amperes, { vds: (s * vds) as Volts }, rec);
  return { w, l, vov: (Math.abs(g.vgs) - vt) as Volts, vgs: Math.abs(g.vgs) as Volts };
}

/** gm and gds of a sized transistor at |VGS|, |VDS| (source at its body), from its own model. */
export function transconductances(card: DeviceCard, t: Sized, vds: number): { gm: number; gds: number } {
  const dev = device(card, t.w, t.l);
  const out = conductances(modelFor(card), parameterVector(dev), t.vgs, vds, 0, new Float64Array(3));
  return { gm: out[0]!, gds: out[1]! };
}

/** The lowest saturation margin over every transistor of an analysed netlist stage. */
export function worstMargin(a: StageAnalysis): { margin: Volts; saturated: boolean } {
  const ops = [a.op, ...Object.values(a.devices ?? {}).map((d) => d.op)];
  return { margin: Math.min(...ops.map((o) => o.saturationMargin)) as Volts, saturated: ops.every((o) => o.region === "saturation") };
}

/**
 * Choose the resistors named in `snapped` from the specification's series by
 * re-solving the stage for each combination (scored by `score`), then re-solve
 * the chosen stage with its record.
 */
export function chooseAndSolve(spec: SpecBase, ideal: Stage, snapped: readonly string[], score: (a: StageAnalysis) => number, rec?: Derivation): { stage: Stage; snap?: SnapResult; analysis: StageAnalysis } {
  const series = spec.series ?? "E24";
  let stage = ideal;
  let snap: SnapResult | undefined;
  if (series !== "exact" && snapped.length) {
    const at = (values: readonly number[]): Stage => ({ ...ideal, components: { ...ideal.components, ...Object.fromEntries(snapped.map((n, i) => [n, values[i]!])) } });
    snap = snapToSeries(
      {
        names: snapped,
        ideal: snapped.map((n) => ideal.components[n]!),
        series,
        ...(spec.candidates !== undefined ? { candidates: spec.candidates } : {}),
        objective: (values) => {
          const a = analyzeStage(at(values));
          if (!worstMargin(a).saturated) throw new InfeasibleError("a transistor leaves saturation with these values", "candidate");
          return score(a);
        },
        objectiveLabel: "relative deviation of the specified figures after re-solving",
      },
      rec,
    );
    stage = at(snap.chosen);
  }
  rec?.note("Re-solve", "The designed stage is solved by nodal analysis (every transistor through its own model); its figures follow.");
  return { stage, ...(snap ? { snap } : {}), analysis: analyzeStage(stage, rec) };
}

/** The designer's result in the shared shape; `output` names the node whose voltage was specified. */
export function netlistResult(args: {
  readonly topology: string;
  readonly card: DeviceCard;
  readonly main: Sized;
  readonly ideal: Stage;
  readonly chosen: { stage: Stage; snap?: SnapResult; analysis: StageAnalysis };
  readonly nodes: { readonly vg: number; readonly vs: number; readonly vd: number };
  readonly current: { readonly target: number; readonly achieved: number };
  readonly output: { readonly target: number; readonly achieved: number };
  readonly gain?: FigureDeviation;
}): SynthesisResult {
  const a = args.chosen.analysis;
  const w = worstMargin(a);
  return {
    topology: args.topology,
    ideal: {
      components: args.ideal.components,
      vg: args.nodes.vg as Volts,
      vs: args.nodes.vs as Volts,
      vd: args.nodes.vd as Volts,
      vov: args.main.vov,
      vt: (polaritySign(args.card) * args.card.vt0) as Volts,
      wl: (args.main.w / args.main.l) as Ratio,
      w: args.main.w,
      l: args.main.l,
    },
    stage: args.chosen.stage,
    idealStage: args.ideal,
    ...(args.chosen.snap ? { snap: args.chosen.snap } : {}),
    analysis: a,
    deviation: {
      id: figure(args.current.target, args.current.achieved),
      output: figure(args.output.target, args.output.achieved),
      ...(args.gain ? { gain: args.gain } : {}),
      vov: a.op.vov,
      saturationMargin: w.margin,
      inSaturation: w.saturated,
    },
  };
}

/** A length or overdrive group field, checked > 0. */
export function positive(x: unknown, at: string, what: string): number {
  if (typeof x !== "number" || !(x > 0) || !Number.isFinite(x)) throw new InputError(x, `${what} > 0`, at, "invalid-design");
  return x;
}

