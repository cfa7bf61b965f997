/**
 * Four-resistor stage (gate divider RG1/RG2, drain resistor RD, source resistor
 * RS), NMOS or PMOS, designed in the device's own polarity:
 *
 *   VRS = f·(VDR − VSR) or stated   →  RS = VRS/ID,  VS = VSR + VRS
 *   VOV stated → W/L from ID; W/L stated → VOV from ID   (square law, with λ at the design VDS)
 *   VG = VS + Vt(VSB) + VOV
 *   VD stated, or at mid-swing between VG − Vt and VDR, or from a gain  →  RD = (VDR − VD)/ID
 *   divider current n·ID (or stated) → RG,DR = (VDR − VG)/Idiv, RG,SR = (VG − VSR)/Idiv;
 *   or RG,DR ∥ RG,SR = Rin.
 *
 * With λ > 0 the design VDS enters W/L (or VOV) and the gain's gds, so the
 * design is iterated on VDS until it changes by less than 1 nV.
 */
import { thresholdMagnitude } from "../../device/threshold.js";
import { defaultPhi } from "../../device/card.js";
import { ConvergenceError, InfeasibleError, InputError, requirePositive } from "../../errors.js";
import {
  aspectRatioForCurrent,
  bodyTransconductance,
  outputConductanceSat,
  overdriveForCurrent,
  transconductanceFromOverdrive,
} from "../../formulas/device.formulas.js";
import * as sf from "../../formulas/synthesis.formulas.js";
import type { Amperes, AmperesPerVoltSquared, Meters, Ohms, PerVolt, Ratio, SqrtVolts, Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import type { Formula } from "../../formulas/define.js";
import "../analyze.js"; // registers the built-in topologies
import { stageDissipation } from "../dissipation.js";
import { snapToSeries, type SnapResult } from "../snap.js";
import { checkSpecBase, deviceRails, evaluate, figure, recordDeviation, type SpecBase, type SpecDeviation, type SynthesisResult } from "../synthesis.js";
import { topologyFor, type FourResistorComponents, type Stage, type StageAnalysis } from "../topology.js";

export interface FourResistorSpec extends SpecBase {
  readonly topology: "four-resistor";
  /**
   * The drain: an absolute drain node voltage, or a gain magnitude |vout/vin|
   * (inverting); mid-swing between the triode edge and the drain rail when omitted.
   */
  readonly drain?: { readonly vd: Volts } | { readonly gain: number };
  /** Whether RS is bypassed for signal (sets which gain formula a gain target uses); true when omitted. */
  readonly bypassed?: boolean;
  /** Gate bias: divider current, divider current as a fraction of ID (0.1 when omitted), or input resistance RG1 ∥ RG2. */
  readonly gate?: { readonly current: Amperes } | { readonly ratio: number } | { readonly rin: Ohms };
  /** Source budget: the voltage across RS, or a fraction of the rail span (0.25 when omitted). */
  readonly source?: { readonly vrs: Volts } | { readonly fraction: number };
}

export type FourResistorResult = SynthesisResult<FourResistorComponents>;

const origin = "four-resistor spec";
const v = (x: number) => `${+x.toPrecision(4)} V`;

interface Design {
  vrs: Volts;
  vs: Volts;
  vt: Volts;
  vsb: Volts;
  vov: Volts;
  wl: Ratio;
  k: AmperesPerVoltSquared;
  vg: Volts;
  vd: Volts;
  rd: Ohms;
  gm: number;
  gds: number;
  gmb: number;
}

/** One pass of the design at an assumed VDS; recorded when rec is given. */
function designPass(spec: FourResistorSpec, vdsGuess: Volts, rec?: Derivation): Design {
  const { vdr, vsr, s } = deviceRails(spec.card, spec.supplies);
  const c = spec.card;
  const lambda = (c.lambda ?? 0) as PerVolt;
  const gamma = (c.gamma ?? 0) as SqrtVolts;
  const phi = (c.phi ?? defaultPhi) as Volts;
  const id = spec.id;
  const calc = <A extends readonly number[], R extends number>(f: Formula<A, R>, args: A, because?: string): R => evaluate(f, args, rec, because);

  const vspan = (vdr - vsr) as Volts;
  let vrs: Volts;
  if (spec.source && "vrs" in spec.source) {
    vrs = spec.source.vrs;
    rec?.input("VRS", vrs, "voltage", `${origin}.source.vrs`);
  } else {
    const f = (spec.source && "fraction" in spec.source ? spec.source.fraction : 0.25) as Ratio;
    if (!spec.source) rec?.assume("A quarter of the rail span across RS (common practice: a quarter to a third for bias stability against Vt and k' spread).");
    vrs = calc(sf.sourceDropFromFraction, [f, vspan]);
  }
  if (vrs >= vspan) throw new InfeasibleError(`the source budget VRS = ${v(vrs)} leaves nothing of the ${v(vspan)} rail span for the device and RD`, `${origin}.source`);
  const vs = calc(sf.sourceNodeFromDrop, [vsr, vrs]);
  const vsb = (spec.body === "rail" ? vrs : 0) as Volts;
  const vt = thresholdMagnitude((s * c.vt0) as Volts, gamma, phi, vsb, rec);
  if (vt <= 0) rec?.find("caution", `Threshold magnitude ${v(vt)} ≤ 0: a depletion-mode device; the design still follows the square law.`);

  let vov: Volts;
  let wl: Ratio;
  const l = spec.sizing.l;
  if ("vov" in spec.sizing) {
    vov = spec.sizing.vov;
    wl = calc(aspectRatioForCurrent, [id, c.kp, vov, lambda, vdsGuess]);
  } else {
    wl = (spec.sizing.w / l) as Ratio;
    const k0 = (c.kp * wl) as AmperesPerVoltSquared;
    vov = calc(overdriveForCurrent, [id, k0, lambda, vdsGuess]);
  }
  const k = (c.kp * wl) as AmperesPerVoltSquared;
  const vg = calc(sf.gateNodeForDrive, [vs, (vt + vov) as Volts], "VGS = Vt + VOV");
  if (vg >= vdr)
    throw new InfeasibleError(
      `the gate would have to sit at ${v(s * vg)} (VS = ${v(s * vs)} plus VGS = Vt + VOV = ${v(vt)} + ${v(vov)}), beyond the ${s > 0 ? "VDD" : "VSS"} rail at ${v(s * vdr)}: lower the source budget or the overdrive`,
      origin,
    );

  let vd: Volts;
  let rd: Ohms;
  const gm = transconductanceFromOverdrive.fn(id, vov);
  const gds = outputConductanceSat.fn(lambda, k, vov);
  const gmb = spec.body === "rail" && gamma > 0 ? bodyTransconductance.fn(gm, gamma, phi, vsb) : 0;
  if (spec.drain && "gain" in spec.drain) {
    const av = spec.drain.gain as Ratio;
    if (rec) {
      rec.step(transconductanceFromOverdrive, [id, vov], gm);
      rec.step(outputConductanceSat, [lambda, k, vov], gds);
      if (gmb) rec.step(bodyTransconductance, [gm, gamma, phi, vsb], gmb);
    }
    if (gm - av * gds <= 0)
      throw new InfeasibleError(`a gain of ${av} exceeds the device's intrinsic gain gm/gds = ${+(gm / gds).toPrecision(4)} at this bias`, `${origin}.drain.gain`);
    const bypassed = spec.bypassed ?? true;
    rd = bypassed
      ? calc(sf.drainResistorForGain, [av, gm, gds as never], "source bypassed for signal")
      : calc(sf.drainResistorForDegeneratedGain, [av, gm, gmb as never, gds as never, (vrs / id) as Ohms], "source resistor not bypassed");
    vd = calc(sf.drainNodeFromResistor, [vdr, id, rd]);
  } else {
    if (spec.drain && "vd" in spec.drain) {
      vd = (s * spec.drain.vd) as Volts;
      rec?.input("VD (device polarity)", vd, "voltage", `${origin}.drain.vd`);
    } else {
      rec?.assume("Drain at mid-swing between the triode edge VG − Vt and the drain rail (common practice: the largest symmetric output swing).");
      vd = calc(sf.midSwingDrain, [vdr, vg, vt]);
    }
    if (vd > vdr) throw new InfeasibleError(`a drain at ${v(s * vd)} lies beyond the drain rail ${v(s * vdr)}: RD would come out negative`, `${origin}.drain.vd`);
    rd = calc(sf.drainResistorForNode, [vdr, vd, id]);
  }
  if (vd < vg - vt)
    throw new InfeasibleError(
      `the drain at ${v(s * vd)} is below the triode edge VG − Vt = ${v(s * (vg - vt))} (VDS = ${v(vd - vs)} < VOV = ${v(vov)}): the device would be in triode`,
      spec.drain ? `${origin}.drain` : origin,
    );
  if (rd <= 0) throw new InfeasibleError(`RD would be ${+rd.toPrecision(4)} Ω: the drain target leaves no drop across RD`, `${origin}.drain`);
  return { vrs, vs, vt, vsb, vov, wl, k, vg, vd, rd, gm, gds, gmb };
}

/** Design a four-resistor stage, choose standard values, re-solve and report the deviation. */
export function synthesizeFourResistor(spec: FourResistorSpec, rec?: Derivation): FourResistorResult {
  checkSpecBase(spec, origin);
  if (spec.topology !== "four-resistor") throw new InputError(spec.topology, `"four-resistor"`, `${origin}.topology`);
  if (spec.drain && "gain" in spec.drain) requirePositive(spec.drain.gain, `${origin}.drain.gain`, "a gain magnitude > 0");
  if (spec.source && "fraction" in spec.source && !(spec.source.fraction > 0 && spec.source.fraction < 1))
    throw new InputError(spec.source.fraction, "a fraction of the rail span, 0 < f < 1", `${origin}.source.fraction`);
  if (spec.source && "vrs" in spec.source) requirePositive(spec.source.vrs, `${origin}.source.vrs`, "a source-resistor voltage > 0 in V");
  const topo = topologyFor("four-resistor", `${origin}.topology`);
  const { vdr, vsr, s } = deviceRails(spec.card, spec.supplies);
  const pmos = s < 0;
  const id = spec.id;

  if (rec) {
    rec.input("VDD", spec.supplies.vdd, "voltage", `${origin}.supplies.vdd`);
    rec.input("VSS", (spec.supplies.vss ?? 0) as Volts, "voltage", `${origin}.supplies.vss`);
    rec.input("ID", id, "current", `${origin}.id`);
    if ("vov" in spec.sizing) rec.input("VOV", spec.sizing.vov, "voltage", `${origin}.sizing.vov`);
    else rec.input("W", spec.sizing.w, "length", `${origin}.sizing.w`);
    rec.input("L", spec.sizing.l, "length", `${origin}.sizing.l`);
    if (pmos) rec.note("PMOS in device polarity", `Node voltages are negated so the drain rail is the higher: VDR = −VSS = ${v(vdr)}, VSR = −VDD = ${v(vsr)}.`);
  }

  // Iterate the design VDS (it enters W/L or VOV through λ, and gds); one pass when λ = 0.
  let vds = ((vdr - vsr) / 2) as Volts;
  let d = designPass(spec, vds);
  for (let i = 0; (spec.card.lambda ?? 0) > 0; i++) {
    const next = (d.vd - d.vs) as Volts;
    if (Math.abs(next - vds) < 1e-9) break;
    if (i >= 100) throw new ConvergenceError(`design VDS did not settle (last change ${Math.abs(next - vds)} V)`, origin);
    vds = next;
    d = designPass(spec, vds);
  }
  if (rec) {
    rec.note("Ideal design", (spec.card.lambda ?? 0) > 0 ? `Design VDS settled at ${v(d.vd - d.vs)} (λ > 0 enters W/L or VOV and gds).` : "λ = 0: a single pass.");
    d = designPass(spec, vds, rec);
  }

  let w: Meters;
  if ("vov" in spec.sizing) w = rec ? rec.calc(sf.widthForRatio, [d.wl, spec.sizing.l]) : sf.widthForRatio.fn(d.wl, spec.sizing.l);
  else w = spec.sizing.w;
  const l = spec.sizing.l;
  const rs = rec ? rec.calc(sf.sourceResistorForDrop, [d.vrs, id]) : sf.sourceResistorForDrop.fn(d.vrs, id);

  // Gate divider in device polarity, then mapped to the physical RG1 (to VDD) / RG2 (to VSS).
  let rgdr: Ohms;
  let rgsr: Ohms;
  const calc = <A extends readonly number[], R extends number>(f: Formula<A, R>, args: A, because?: string): R => evaluate(f, args, rec, because);
  if (spec.gate && "rin" in spec.gate) {
    requirePositive(spec.gate.rin, `${origin}.gate.rin`, "an input resistance > 0 in Ω");
    const vspan = (vdr - vsr) as Volts;
    rgdr = calc(sf.dividerToDrainRailForRin, [spec.gate.rin, vspan, d.vg, vsr]);
    rgsr = calc(sf.dividerToSourceRailForRin, [spec.gate.rin, vspan, vdr, d.vg]);
  } else {
    let idiv: Amperes;
    if (spec.gate && "current" in spec.gate) {
      idiv = requirePositive(spec.gate.current, `${origin}.gate.current`, "a divider current > 0 in A");
      rec?.input("Idiv", idiv, "current", `${origin}.gate.current`);
    } else {
      const n = (spec.gate && "ratio" in spec.gate ? spec.gate.ratio : 0.1) as Ratio;
      requirePositive(n, `${origin}.gate.ratio`, "a divider current ratio > 0 (0.1 for a tenth of ID)");
      if (!spec.gate) rec?.assume("Gate divider current a tenth of the drain current (common practice).");
      idiv = calc(sf.dividerCurrentFromRatio, [n, id]);
    }
    rgdr = calc(sf.dividerToDrainRail, [vdr, d.vg, idiv], pmos ? "PMOS: this is RG2 (to VSS)" : "NMOS: this is RG1 (to VDD)");
    rgsr = calc(sf.dividerToSourceRail, [d.vg, vsr, idiv], pmos ? "PMOS: this is RG1 (to VDD)" : "NMOS: this is RG2 (to VSS)");
  }
  const ideal: FourResistorComponents = pmos ? { rg1: rgsr, rg2: rgdr, rd: d.rd, rs } : { rg1: rgdr, rg2: rgsr, rd: d.rd, rs };

  const makeStage = (cmp: FourResistorComponents): Stage<"four-resistor", FourResistorComponents> => ({
    topology: "four-resistor",
    ...(spec.name ? { name: spec.name } : {}),
    device: { card: spec.card, w, l },
    components: cmp,
    supplies: spec.supplies,
    body: spec.body ?? "source",
    ...(spec.options ? { options: spec.options } : {}),
    ...(spec.limits ? { limits: spec.limits } : {}),
  });
  const idealStage = makeStage(ideal);
  const vdTarget = (s * d.vd) as Volts;
  const gainTarget = spec.drain && "gain" in spec.drain ? spec.drain.gain : undefined;
  const bypassed = spec.bypassed ?? true;
  const gainOf = (a: StageAnalysis): number | undefined => {
    const kind = bypassed ? "common-source" : "common-source-degenerated";
    const amp = a.metrics.amplifiers.find((m) => m.kind === kind);
    return amp ? Math.abs(amp.gain) : undefined;
  };
  const vspan = vdr - vsr;
  const scoreOf = (a: StageAnalysis): number => {
    if (a.region !== "saturation") throw new InfeasibleError(`the stage falls into ${a.region}`, "candidate");
    const di = (a.currents.drain! - id) / id;
    const dv = (a.nodes.drain! - vdTarget) / vspan;
    const g = gainTarget !== undefined ? (gainOf(a)! - gainTarget) / gainTarget : 0;
    return Math.sqrt(di * di + dv * dv + g * g);
  };

  const seriesName = spec.series ?? "E24";
  let snap: SnapResult | undefined;
  let chosen = ideal;
  const names = ["rg1", "rg2", "rd", "rs"] as const;
  if (seriesName !== "exact") {
    rec?.note("Choosing standard values", `Each combination is re-solved by the four-resistor analysis and scored by the root-sum-square of ΔID/ID, ΔVD/(VDD − VSS)${gainTarget !== undefined ? " and ΔAv/Av" : ""}.`);
    snap = snapToSeries(
      {
        names,
        ideal: names.map((n) => ideal[n]),
        series: seriesName,
        ...(spec.candidates !== undefined ? { candidates: spec.candidates } : {}),
        objectiveLabel: `root-sum-square of ΔID/ID, ΔVD/(VDD − VSS)${gainTarget !== undefined ? ", ΔAv/Av" : ""}`,
        objective: (vals) => scoreOf(topo.analyze(makeStage({ rg1: vals[0]!, rg2: vals[1]!, rd: vals[2]!, rs: vals[3]! } as FourResistorComponents))),
      },
      rec,
    );
    chosen = { rg1: snap.chosen[0]!, rg2: snap.chosen[1]!, rd: snap.chosen[2]!, rs: snap.chosen[3]! } as FourResistorComponents;
  } else rec?.note("Standard values", "Series \"exact\": the ideal values are kept (no snapping).");

  const stage = makeStage(chosen);
  rec?.note("Re-solve with the chosen values", "The chosen stage is analysed by the four-resistor solver; the figures below are what it achieves.");
  const analysis = topo.analyze(stage, rec);
  const achievedGain = gainOf(analysis);
  const deviation: SpecDeviation = {
    id: figure(id, analysis.currents.drain!),
    output: figure(vdTarget, analysis.nodes.drain!),
    ...(gainTarget !== undefined && achievedGain !== undefined ? { gain: figure(gainTarget, achievedGain) } : {}),
    vov: analysis.op.vov,
    saturationMargin: analysis.op.saturationMargin,
    inSaturation: analysis.region === "saturation",
  };
  recordDeviation(deviation, "VD", rec);
  const dissipation = spec.dissipation ? stageDissipation(stage, analysis, spec.dissipation, rec) : undefined;
  rec?.find("caution", "Hand analysis with the square law is approximate: verify the chosen values by simulation and on the bench, and respect the device's ratings.");
  return {
    topology: "four-resistor",
    ideal: { components: ideal, vg: (s * d.vg) as Volts, vs: (s * d.vs) as Volts, vd: vdTarget, vov: d.vov, vt: d.vt, wl: d.wl, w, l },
    stage,
    idealStage,
    ...(snap ? { snap } : {}),
    analysis,
    deviation,
    ...(dissipation ? { dissipation } : {}),
  };
}
