/**
 * The design steps every single-transistor topology shares, in the device's
 * own polarity (see lib/formulas/synthesis.catalog.ts):
 *
 *   source side  VRS = f·(VDR − VSR), stated, follower mid-swing, or none  →  VS = VSR + VRS
 *   device       VOV stated → W/L from ID; W/L stated → VOV from ID   (square law, λ at the design VDS)
 *   gate         VG = VS + Vt(VSB) + VOV
 *   drain        VD stated, mid-swing between VG − Vt and VDR, from a gain, at the rail, or at the gate
 *
 * then the standard-value search, the re-solve and the deviation report.
 * With λ > 0 the design VDS enters W/L (or VOV) and gds, so the design is
 * iterated on VDS until it moves by less than 1 nV.
 *
 * A card of another model (square law with mobility degradation, EKV) takes the
 * device step from its model instead (./model-device.ts: VGS and W/L by numeric
 * inversion, Vt, VDsat, gm, gds, gmb from the model at the design VDS and VSB);
 * the triode edge is then VS + VDsat, and the design always iterates on VDS.
 */
import { defaultPhi } from "../../device/card.js";
import { thresholdMagnitude } from "../../device/threshold.js";
import { ConvergenceError, InfeasibleError, InputError, requirePositive } from "../../errors.js";
import type { Formula } from "../../formulas/define.js";
import { aspectRatioForCurrent, bodyTransconductance, outputConductanceSat, overdriveForCurrent, transconductanceFromOverdrive } from "../../formulas/device.formulas.js";
import { drainNode } from "../../formulas/bias.formulas.js";
import * as sf from "../../formulas/synthesis.formulas.js";
import type { Amperes, AmperesPerVoltSquared, Meters, Ohms, PerVolt, Ratio, Siemens, SqrtVolts, Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import { contrastDigits } from "../../units/format.js";
import "../analyze.js"; // registers the built-in topologies
import { stageDissipation } from "../dissipation.js";
import { pmosConvention } from "../stage.js";
import { eSeries } from "../eseries.js";
import { snapToSeries, type SnapResult } from "../snap.js";
import { topologyFor, type AmplifierKind, type Stage, type StageAnalysis, type StageDevice } from "../topology.js";
import { deviceRails, evaluate, figure, recordDeviation, type SpecBase, type SpecDeviation, type SynthesisResult } from "./common.js";
import { designsByModel, modelDeviceStep, type ModelDeviceStep } from "./model-device.js";

/** Where the drain goes: an absolute node voltage, or a gain magnitude |vout/vin|. */
export type DrainTarget = { readonly vd: Volts } | { readonly gain: number };
/** Source budget: the voltage across the source element, or a fraction of the rail span. */
export type SourceBudget = { readonly vrs: Volts } | { readonly fraction: number };
/** Gate divider: its current, its current as a fraction of ID, or its input resistance RG1 ∥ RG2. */
export type DividerTarget = { readonly current: Amperes } | { readonly ratio: number } | { readonly rin: Ohms };

export interface CorePlan {
  readonly origin: string;
  readonly source:
    | { readonly kind: "budget"; readonly budget?: SourceBudget; readonly defaultFraction: number; readonly element: "RS" | "the current source" }
    | { readonly kind: "rail" }
    | { readonly kind: "follower"; readonly vs?: Volts };
  readonly drain:
    | { readonly kind: "target"; readonly target?: DrainTarget; readonly gainKind: AmplifierKind; readonly degenerated: boolean }
    | { readonly kind: "rail" }
    | { readonly kind: "gate" };
  /** The gate is made by a divider from the rails, so it must lie strictly between them. */
  readonly gateBetweenRails: boolean;
}

export interface CoreDesign {
  vrs: Volts;
  vs: Volts;
  vt: Volts;
  vsb: Volts;
  vov: Volts;
  wl: Ratio;
  k: AmperesPerVoltSquared;
  vg: Volts;
  vd: Volts;
  /** Drain resistor; 0 when the drain is at its rail. */
  rd: Ohms;
  gm: number;
  gds: number;
  gmb: number;
  w: Meters;
  l: Meters;
}

const v = (x: number) => `${+x.toPrecision(4)} V`;

/** Validate the parts of a plan that come from the engineer. */
export function checkPlanInputs(plan: CorePlan): void {
  const o = plan.origin;
  if (plan.source.kind === "budget" && plan.source.budget) {
    const b = plan.source.budget;
    if ("vrs" in b) requirePositive(b.vrs, `${o}.source.vrs`, "a voltage > 0 in V across the source element");
    else if ("fraction" in b) {
      if (typeof b.fraction !== "number" || !(b.fraction > 0 && b.fraction < 1)) throw new InputError(b.fraction, "a fraction of the rail span, 0 < f < 1", `${o}.source.fraction`);
    } else throw new InputError(b, "{ vrs } or { fraction }", `${o}.source`);
  }
  if (plan.drain.kind === "target" && plan.drain.target) {
    const t = plan.drain.target;
    if ("gain" in t) requirePositive(t.gain, `${o}.drain.gain`, "a gain magnitude > 0");
    else if ("vd" in t) {
      if (typeof t.vd !== "number" || !Number.isFinite(t.vd)) throw new InputError(t.vd, "a finite drain voltage in V", `${o}.drain.vd`);
    } else throw new InputError(t, "{ vd } or { gain }", `${o}.drain`);
  }
  if (plan.source.kind === "follower" && plan.source.vs !== undefined && !Number.isFinite(plan.source.vs))
    throw new InputError(plan.source.vs, "a finite source voltage in V", `${o}.output.vs`);
}

/** One pass of the design at an assumed VDS; recorded when rec is given. */
export function designPass(spec: SpecBase, plan: CorePlan, vdsGuess: Volts, rec?: Derivation): CoreDesign {
  const o = plan.origin;
  const { vdr, vsr, s } = deviceRails(spec.card, spec.supplies);
  const c = spec.card;
  const lambda = (c.lambda ?? 0) as PerVolt;
  const gamma = (c.gamma ?? 0) as SqrtVolts;
  const phi = (c.phi ?? defaultPhi) as Volts;
  const id = spec.id;
  const calc = <A extends readonly number[], R extends number>(f: Formula<A, R>, args: A, because?: string): R => evaluate(f, args, rec, because);
  const vspan = (vdr - vsr) as Volts;
  const l = spec.sizing.l;

  // Overdrive and W/L first when the overdrive is stated (the follower's mid-swing needs VOV).
  let vov: Volts;
  let wl: Ratio;
  const byModel = designsByModel(c);
  if (byModel) {
    // A first estimate with VSB = 0; the model's device step at the design VSB follows below.
    vov = ("vov" in spec.sizing ? spec.sizing.vov : modelDeviceStep(c, spec.sizing, id, vdsGuess, 0, o).vov) as Volts;
    wl = 0 as Ratio;
  } else if ("vov" in spec.sizing) {
    vov = spec.sizing.vov;
    wl = calc(aspectRatioForCurrent, [id, c.kp, vov, lambda, vdsGuess]);
  } else {
    wl = (spec.sizing.w / l) as Ratio;
    vov = calc(overdriveForCurrent, [id, (c.kp * wl) as AmperesPerVoltSquared, lambda, vdsGuess]);
  }

  let vrs: Volts;
  let vs: Volts;
  const src = plan.source;
  if (src.kind === "rail") {
    vrs = 0 as Volts;
    vs = vsr;
    rec?.note("Source at its rail", "No source element: VS = VSR.");
  } else if (src.kind === "follower") {
    if (src.vs !== undefined) {
      vs = (s * src.vs) as Volts;
      // Inputs are node voltages to ground, as given; the mirrored value the PMOS equations use is said once.
      rec?.input("VS", src.vs, "voltage", `${o}.output.vs`);
      if (s < 0) rec?.note("Output in device polarity", `VS mirrored for the PMOS equations: −VS = ${v(vs)}.`);
    } else {
      rec?.assume("Follower output at mid-swing between the source rail and the triode edge VDR − VOV (common practice).");
      vs = calc(sf.followerMidSwing, [vdr, vov, vsr]);
    }
    vrs = calc(sf.sourceDropFromNode, [vs, vsr]);
    if (vrs <= 0) throw new InfeasibleError(`the output at ${v(s * vs)} is not inside the rails: the source resistor would carry no current`, `${o}.output.vs`);
  } else {
    const b = src.budget;
    if (b && "vrs" in b) {
      vrs = b.vrs;
      rec?.input("VRS", vrs, "voltage", `${o}.source.vrs`);
    } else {
      const f = (b && "fraction" in b ? b.fraction : src.defaultFraction) as Ratio;
      if (!b)
        rec?.assume(
          src.element === "RS"
            ? `${+(f * 100).toFixed(0)} % of the rail span across RS (common practice: a quarter to a third for bias stability against Vt and k' spread).`
            : `${+(f * 100).toFixed(0)} % of the rail span across the current source for its headroom (common practice).`,
        );
      vrs = calc(sf.sourceDropFromFraction, [f, vdr, vsr]);
    }
    if (vrs >= vspan) throw new InfeasibleError(`the source budget VRS = ${v(vrs)} leaves nothing of the ${v(vspan)} rail span for the device and RD`, `${o}.source`);
    vs = calc(sf.sourceNodeFromDrop, [vsr, vrs]);
  }
  const vsb = (spec.body === "rail" ? vrs : 0) as Volts;
  let step: ModelDeviceStep | undefined;
  let vt: Volts;
  if (byModel) {
    step = modelDeviceStep(c, spec.sizing, id, vdsGuess, vsb, o, rec, "The transistor");
    vt = step.vt as Volts;
    vov = step.vov as Volts;
    wl = step.wl as Ratio;
  } else vt = thresholdMagnitude((s * c.vt0) as Volts, gamma, phi, vsb, rec);
  const k = (c.kp * wl) as AmperesPerVoltSquared;
  if (vt <= 0) rec?.find("caution", `Threshold magnitude ${v(vt)} ≤ 0: a depletion-mode device; the design still follows the square law.`);
  const vg = calc(sf.gateNodeForDrive, [vs, (vt + vov) as Volts], "VGS = Vt + VOV");
  if (plan.gateBetweenRails && (vg >= vdr || vg <= vsr))
    throw new InfeasibleError(
      `the gate would have to sit at ${v(s * vg)} (VS = ${v(s * vs)} plus VGS = Vt + VOV = ${v(vt)} + ${v(vov)}), beyond the ${
        vg >= vdr ? (s > 0 ? "VDD" : "VSS") : s > 0 ? "VSS" : "VDD"
      } rail at ${v(s * (vg >= vdr ? vdr : vsr))}: lower the source budget or the overdrive`,
      o,
    );

  const gm = (step ? step.gm : transconductanceFromOverdrive.fn(id, vov)) as Siemens;
  const gds = (step ? step.gds : outputConductanceSat.fn(lambda, k, vov)) as Siemens;
  const gmb = step ? (spec.body === "rail" ? step.gmb : 0) : spec.body === "rail" && gamma > 0 ? bodyTransconductance.fn(gm, gamma, phi, vsb) : 0;
  let vd: Volts;
  let rd = 0 as Ohms;
  const dr = plan.drain;
  if (dr.kind === "rail") {
    vd = vdr;
    rec?.note("Drain at its rail", "No drain resistor: VD = VDR.");
  } else if (dr.kind === "gate") {
    vd = vg;
    rec?.note("Drain feedback", "No DC current in RF, so VD = VG.");
    if (vd >= vdr) throw new InfeasibleError(`the drain would sit at ${v(s * vd)}, at or beyond the drain rail ${v(s * vdr)}: RD would come out negative`, o);
    rd = calc(sf.drainResistorForNode, [vdr, vd, id]);
  } else if (dr.target && "gain" in dr.target) {
    const av = dr.target.gain as Ratio;
    if (rec && !step) {
      rec.step(transconductanceFromOverdrive, [id, vov], gm);
      rec.step(outputConductanceSat, [lambda, k, vov], gds);
      if (gmb) rec.step(bodyTransconductance, [gm, gamma, phi, vsb], gmb);
    }
    if (gm - av * gds <= 0)
      throw new InfeasibleError(`a gain of ${av} exceeds the device's intrinsic gain gm/gds = ${+(gm / gds).toPrecision(4)} at this bias`, `${o}.drain.gain`);
    rd = dr.degenerated
      ? calc(sf.drainResistorForDegeneratedGain, [av, gm as never, gmb as never, gds as never, (vrs / id) as Ohms], "source resistor not bypassed")
      : calc(sf.drainResistorForGain, [av, gm as never, gds as never], "source at AC ground");
    vd = calc(drainNode, [vdr, id, rd]);
  } else {
    if (dr.target && "vd" in dr.target) {
      vd = (s * dr.target.vd) as Volts;
      rec?.input("VD", dr.target.vd, "voltage", `${o}.drain.vd`);
      if (s < 0) rec?.note("Drain in device polarity", `VD mirrored for the PMOS equations: −VD = ${v(vd)}.`);
    } else {
      if (step) {
        rec?.assume("Drain at mid-swing between the model's triode edge VS + VDsat and the drain rail (common practice: the largest symmetric output swing).");
        vd = calc(sf.midSwingDrainSaturation, [vdr, vs, step.vdsat as Volts]);
      } else {
        rec?.assume("Drain at mid-swing between the triode edge VG − Vt and the drain rail (common practice: the largest symmetric output swing).");
        vd = calc(sf.midSwingDrain, [vdr, vg, vt]);
      }
    }
    if (vd > vdr) throw new InfeasibleError(`a drain at ${v(s * vd)} lies beyond the drain rail ${v(s * vdr)}: RD would come out negative`, `${o}.drain.vd`);
    rd = calc(sf.drainResistorForNode, [vdr, vd, id]);
  }
  if (step && vd - vs < step.vdsat)
    throw new InfeasibleError(
      (dr.kind === "target" && dr.target && "gain" in dr.target ? `a gain of ${dr.target.gain} needs RD = ${+rd.toPrecision(4)} Ω, and with it ` : "") +
        `the drain at ${v(s * vd)} leaves ${s > 0 ? "VDS" : "VSD"} = ${v(vd - vs)} below the model's VDsat = ${v(step.vdsat)}: the device would be in triode`,
      dr.kind === "target" && dr.target ? `${o}.drain` : o,
    );
  if (!step && vd < vg - vt) {
    // Enough digits that the drain and the edge, and VDS and VOV, read differently (they differ).
    const dg = Math.max(contrastDigits(s * vd, s * (vg - vt), 4), contrastDigits(vd - vs, vov, 4));
    const v = (x: number) => `${+x.toPrecision(dg)} V`;
    throw new InfeasibleError(
      (dr.kind === "target" && dr.target && "gain" in dr.target ? `a gain of ${dr.target.gain} needs RD = ${+rd.toPrecision(4)} Ω, and with it ` : "") +
        `the drain at ${v(s * vd)} is ${s > 0 ? "below" : "above"} the triode edge ${s > 0 ? "VG − Vt" : "VG + |Vt|"} = ${v(s * (vg - vt))} (${s > 0 ? "VDS" : "VSD"} = ${v(vd - vs)} < VOV = ${v(vov)}): the device would be in triode`,
      dr.kind === "target" && dr.target ? `${o}.drain` : o,
    );
  }
  if (dr.kind !== "rail" && !(rd > 0)) throw new InfeasibleError(`RD would be ${+rd.toPrecision(4)} Ω: the drain target leaves no drop across RD`, `${o}.drain`);
  const w = "vov" in spec.sizing ? sf.widthForRatio.fn(wl, l) : spec.sizing.w;
  return { vrs, vs, vt, vsb, vov, wl, k, vg, vd, rd, gm, gds, gmb, w, l };
}

/** The design, iterated on VDS when λ > 0, with the final pass recorded. */
export function design(spec: SpecBase, plan: CorePlan, rec?: Derivation): CoreDesign {
  const { vdr, vsr } = deviceRails(spec.card, spec.supplies);
  let vds = ((vdr - vsr) / 2) as Volts;
  let d = designPass(spec, plan, vds);
  const lambda = spec.card.lambda ?? 0;
  // A model's current depends on VDS beyond λ (σ, velocity saturation): always iterate.
  const iterate = lambda > 0 || designsByModel(spec.card);
  for (let i = 0; iterate; i++) {
    const next = (d.vd - d.vs) as Volts;
    if (Math.abs(next - vds) < 1e-9) break;
    if (i >= 100) throw new ConvergenceError(`design VDS did not settle (last change ${Math.abs(next - vds)} V)`, plan.origin);
    vds = next;
    d = designPass(spec, plan, vds);
  }
  if (rec) {
    rec.note("Ideal design", iterate ? `Design VDS settled at ${v(d.vd - d.vs)} (λ > 0 enters W/L or VOV and gds).` : "λ = 0: a single pass.");
    d = designPass(spec, plan, vds, rec);
    if ("vov" in spec.sizing) rec.step(sf.widthForRatio, [d.wl, d.l], d.w);
  }
  return d;
}

/** Gate divider in device polarity, mapped to the physical RG1 (to VDD) and RG2 (to VSS). */
export function designDivider(spec: SpecBase, d: CoreDesign, target: DividerTarget | undefined, origin: string, rec?: Derivation): { rg1: Ohms; rg2: Ohms } {
  const { vdr, vsr, s } = deviceRails(spec.card, spec.supplies);
  const pmos = s < 0;
  const calc = <A extends readonly number[], R extends number>(f: Formula<A, R>, args: A, because?: string): R => evaluate(f, args, rec, because);
  let rgdr: Ohms;
  let rgsr: Ohms;
  if (target && "rin" in target) {
    requirePositive(target.rin, `${origin}.gate.rin`, "an input resistance > 0 in Ω");
    rgdr = calc(sf.dividerToDrainRailForRin, [target.rin, vdr, vsr, d.vg]);
    rgsr = calc(sf.dividerToSourceRailForRin, [target.rin, vdr, vsr, d.vg]);
  } else {
    let idiv: Amperes;
    if (target && "current" in target) {
      idiv = requirePositive(target.current, `${origin}.gate.current`, "a divider current > 0 in A");
      rec?.input("IDIV", idiv, "current", `${origin}.gate.current`);
    } else {
      const n = (target && "ratio" in target ? target.ratio : 0.1) as Ratio;
      requirePositive(n, `${origin}.gate.ratio`, "a divider current ratio > 0 (0.1 for a tenth of ID)");
      if (!target) rec?.assume("Gate divider current a tenth of the drain current (common practice).");
      idiv = calc(sf.dividerCurrentFromRatio, [n, spec.id]);
    }
    rgdr = calc(sf.dividerToDrainRail, [vdr, d.vg, idiv], pmos ? "PMOS: this is RG2 (to VSS)" : "NMOS: this is RG1 (to VDD)");
    rgsr = calc(sf.dividerToSourceRail, [d.vg, vsr, idiv], pmos ? "PMOS: this is RG1 (to VDD)" : "NMOS: this is RG2 (to VSS)");
  }
  return pmos ? { rg1: rgsr, rg2: rgdr } : { rg1: rgdr, rg2: rgsr };
}

export interface FinishArgs<C extends object> {
  readonly topology: string;
  readonly spec: SpecBase;
  readonly design: CoreDesign;
  readonly ideal: C;
  /** Components chosen from the series (resistors); the rest (vg, iss) are kept as designed. */
  readonly snapped: readonly (keyof C & string)[];
  /** The node the specification targets and its absolute target voltage. */
  readonly output: { readonly node: "drain" | "source"; readonly target: Volts };
  readonly gain?: { readonly target: number; readonly kind: AmplifierKind };
  /** Further transistors of a two-transistor stage, by role. */
  readonly devices?: Readonly<Record<string, StageDevice>>;
}

/** Standard values, the re-solve with the analysis solver, and the deviation report. */
export function finish<C extends object>(a: FinishArgs<C>, rec?: Derivation): SynthesisResult<C> {
  const idealOf = a.ideal as unknown as Readonly<Record<string, number>>;
  const { spec, design: d } = a;
  const topo = topologyFor(a.topology, `${a.topology} spec.topology`);
  const { vdr, vsr, s } = deviceRails(spec.card, spec.supplies);
  const makeStage = (cmp: C): Stage<string, C> => ({
    topology: a.topology,
    ...(spec.name ? { name: spec.name } : {}),
    device: { card: spec.card, w: d.w, l: d.l },
    ...(a.devices ? { devices: a.devices } : {}),
    components: cmp,
    supplies: spec.supplies,
    body: spec.body ?? "source",
    ...(spec.options ? { options: spec.options } : {}),
    ...(spec.limits ? { limits: spec.limits } : {}),
  });
  const gainOf = (an: StageAnalysis): number | undefined => {
    if (!a.gain) return undefined;
    const amp = an.metrics.amplifiers.find((m) => m.kind === a.gain!.kind);
    return amp ? Math.abs(amp.gain) : undefined;
  };
  const vspan = vdr - vsr;
  const id = spec.id;
  const label = `root-sum-square of ΔID/ID, ΔV${a.output.node === "drain" ? "D" : "S"}/(VDD − VSS)${a.gain ? ", ΔAv/Av" : ""}`;
  const scoreOf = (an: StageAnalysis): number => {
    if (an.region !== "saturation") throw new InfeasibleError(`the stage falls into ${an.region}`, "candidate");
    const di = (an.currents.drainMagnitude! - id) / id;
    const dv = (an.nodes[a.output.node]! - a.output.target) / vspan;
    const g = a.gain ? (gainOf(an)! - a.gain.target) / a.gain.target : 0;
    return Math.sqrt(di * di + dv * dv + g * g);
  };
  const seriesName = spec.series ?? "E24";
  let snap: SnapResult | undefined;
  let chosen = a.ideal;
  if (seriesName !== "exact" && a.snapped.length) {
    rec?.note("Choosing standard values", `Each combination is re-solved by the ${topo.title.toLowerCase()} analysis and scored by the ${label}.`);
    const names = a.snapped;
    snap = snapToSeries(
      {
        names,
        ideal: names.map((n) => idealOf[n]!),
        series: seriesName,
        ...(spec.candidates !== undefined ? { candidates: spec.candidates } : {}),
        objectiveLabel: label,
        objective: (vals) => {
          const cmp: Record<string, number> = { ...idealOf };
          names.forEach((n, i) => (cmp[n] = vals[i]!));
          return scoreOf(topo.analyze(makeStage(cmp as unknown as C)));
        },
      },
      rec,
    );
    const cmp: Record<string, number> = { ...idealOf };
    names.forEach((n, i) => (cmp[n] = snap!.chosen[i]!));
    chosen = cmp as unknown as C;
  } else rec?.note("Standard values", seriesName === "exact" ? 'Series "exact": the ideal values are kept (no snapping).' : "No resistor to choose.");

  const stage = makeStage(chosen);
  rec?.note("Re-solve with the chosen values", `The chosen stage is analysed by the ${topo.title.toLowerCase()} solver; the figures below are what it achieves.`);
  const analysis = topo.analyze(stage, rec);
  const achievedGain = gainOf(analysis);
  const deviation: SpecDeviation = {
    id: figure(id, analysis.currents.drainMagnitude!),
    output: figure(a.output.target, analysis.nodes[a.output.node]!),
    ...(a.gain && achievedGain !== undefined ? { gain: figure(a.gain.target, achievedGain) } : {}),
    vov: analysis.op.vov,
    saturationMargin: analysis.op.saturationMargin,
    inSaturation: analysis.region === "saturation",
  };
  recordDeviation(deviation, a.output.node === "drain" ? "VD" : "VS", rec);
  const dissipation = spec.dissipation ? stageDissipation(stage, analysis, spec.dissipation, rec) : undefined;
  if (rec && snap)
    rec.find(
      "note",
      `The chosen ${snap.series} parts carry their own tolerance (±${+(eSeries[snap.series].tolerance * 100).toPrecision(2)} % for ${snap.series} per IEC 60063): run toleranceAnalysis on the chosen stage for the spread of the bias.`,
    );
  return {
    topology: a.topology,
    ideal: { components: a.ideal, vg: (s * d.vg) as Volts, vs: (s * d.vs) as Volts, vd: (s * d.vd) as Volts, vov: d.vov, vt: d.vt, wl: d.wl, w: d.w, l: d.l },
    stage,
    idealStage: makeStage(a.ideal),
    ...(snap ? { snap } : {}),
    analysis,
    deviation,
    ...(dissipation ? { dissipation } : {}),
  };
}

/** Record the specification's common inputs. */
export function recordSpec(spec: SpecBase, origin: string, rec?: Derivation): void {
  if (!rec) return;
  const { vdr, vsr, s } = deviceRails(spec.card, spec.supplies);
  rec.input("VDD", spec.supplies.vdd, "voltage", `${origin}.supplies.vdd`);
  rec.input("VSS", (spec.supplies.vss ?? 0) as Volts, "voltage", `${origin}.supplies.vss`);
  rec.input("ID", spec.id, "current", `${origin}.id`);
  if ("vov" in spec.sizing) rec.input("VOV", spec.sizing.vov, "voltage", `${origin}.sizing.vov`);
  else rec.input("W", spec.sizing.w, "length", `${origin}.sizing.w`);
  rec.input("L", spec.sizing.l, "length", `${origin}.sizing.l`);
  if (s < 0) rec.note("Sign convention (PMOS)", `${pmosConvention} Here VDR = −VSS = ${v(vdr)}, VSR = −VDD = ${v(vsr)}.`);
}
