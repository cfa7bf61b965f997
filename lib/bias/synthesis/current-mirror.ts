/**
 * Current mirror with a reference resistor: from the output current, the
 * mirror ratio N = (W/L)2/(W/L)1 and the output transistor's overdrive (or
 * W/L), to RREF and, when the output drives a resistor, RLOAD. In device
 * polarity, both sources at their rail (no body effect):
 *
 *   VOUT stated, or halfway between compliance VSR + VOV and VDR   →  VDS2 = VOUT − VSR
 *   (W/L)2 from IOUT at VOV (λ at VDS2), or VOV from IOUT at (W/L)2;  (W/L)1 = (W/L)2/N
 *   VGS1 = Vt + VOV;  IREF = (k1/2)·VOV²·(1 + λ·VGS1);  RREF = (VDR − VSR − VGS1)/IREF
 *   RLOAD = (VDR − VOUT)/IOUT
 *
 * With λ > 0 the reference current is chosen so the output current is met at
 * the designed VDS2 (not IOUT/N). Both transistors use the one card, with
 * the same L.
 *
 * A card of another model (square law with mobility degradation, EKV) sizes M2
 * by its model at VDS2 (./model-device.ts), places compliance at VSR + VDsat,
 * and takes IREF from M1's model at VDS1 = VGS1, so RREF sets the current that
 * model predicts.
 */
import { InfeasibleError, InputError, requirePositive } from "../../errors.js";
import type { Formula } from "../../formulas/define.js";
import { aspectRatioForCurrent, gateSourceVoltage, overdriveForCurrent } from "../../formulas/device.formulas.js";
import { mirrorCompliance, mirrorComplianceSaturation, referenceCurrentDiode } from "../../formulas/mirror.formulas.js";
import { device } from "../../device/card.js";
import { operatingPoint } from "../../device/drain-current.js";
import { designsByModel, modelDeviceStep } from "./model-device.js";
import * as sf from "../../formulas/synthesis.formulas.js";
import type { Amperes, AmperesPerVoltSquared, Meters, Ohms, PerVolt, Ratio, Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import type { CurrentMirrorComponents } from "../topology.js";
import { checkSpecBase, deviceRails, evaluate, type SpecBase, type SynthesisResult } from "./common.js";
import { finish, recordSpec, type CoreDesign } from "./core.js";

export interface CurrentMirrorSpec extends SpecBase {
  readonly topology: "current-mirror";
  /** Mirror ratio N = (W/L)2/(W/L)1 = IOUT/IREF (λ = 0); 1 when omitted. `id` is the output current and `sizing` the output transistor's. */
  readonly ratio?: number;
  /** Output voltage (absolute); halfway between compliance and the drain rail when omitted. */
  readonly output?: { readonly vout: Volts };
  /** What holds the output: a load resistor to the drain-side rail (designed; the default) or an ideal voltage source at VOUT. */
  readonly load?: "resistor" | "source";
}

const origin = "current-mirror spec";
const v = (x: number) => `${+x.toPrecision(4)} V`;

export function synthesizeCurrentMirror(spec: CurrentMirrorSpec, rec?: Derivation): SynthesisResult<CurrentMirrorComponents> {
  checkSpecBase(spec, origin);
  if (spec.topology !== "current-mirror") throw new InputError(spec.topology, `"current-mirror"`, `${origin}.topology`);
  const n = (spec.ratio ?? 1) as Ratio;
  requirePositive(n, `${origin}.ratio`, "a mirror ratio N = (W/L)2/(W/L)1 > 0");
  if (spec.load !== undefined && spec.load !== "resistor" && spec.load !== "source") throw new InputError(spec.load, `"resistor" or "source"`, `${origin}.load`);
  if (spec.output && (typeof spec.output.vout !== "number" || !Number.isFinite(spec.output.vout))) throw new InputError(spec.output.vout, "a finite output voltage in V", `${origin}.output.vout`);
  const calc = <A extends readonly number[], R extends number>(f: Formula<A, R>, args: A, because?: string): R => evaluate(f, args, rec, because);
  recordSpec(spec, origin, rec);
  rec?.input("N", n, "dimensionless", spec.ratio === undefined ? "default 1:1" : `${origin}.ratio`);

  const { vdr, vsr, s } = deviceRails(spec.card, spec.supplies);
  const c = spec.card;
  const lambda = (c.lambda ?? 0) as PerVolt;
  const vt = (s * c.vt0) as Volts;
  if (!(vt > 0)) throw new InputError(c.vt0, "an enhancement device (|Vt0| > 0 in its polarity) for a diode-connected reference", `${origin}.card.vt0`);
  const iout = spec.id;
  const l = spec.sizing.l;

  // VOV first: stated, or from W/L at the output VDS (which needs VOV for the default VOUT: iterate).
  const outputAbove = (vmin: Volts, r?: Derivation): Volts => {
    if (spec.output) {
      const vo = (s * spec.output.vout) as Volts;
      r?.input("VOUT (device polarity)", vo, "voltage", `${origin}.output.vout`);
      return vo;
    }
    r?.assume("Mirror output halfway between compliance and the drain rail (common practice).");
    return r ? r.calc(sf.mirrorMidOutput, [vdr, vmin]) : sf.mirrorMidOutput.fn(vdr, vmin);
  };
  const outputFor = (vov: Volts, r?: Derivation): Volts => outputAbove(spec.output ? vov : r ? r.calc(mirrorCompliance, [vsr, vov]) : mirrorCompliance.fn(vsr, vov), r);
  if (designsByModel(c)) {
    // M2 by its model at VDS2; the default output follows compliance VSR + VDsat, which follows VDS2 through λ and σ: iterate.
    let vds2 = (spec.output ? s * spec.output.vout - vsr : (vdr - vsr) / 2) as Volts;
    for (let i = 0; ; i++) {
      const st = modelDeviceStep(c, spec.sizing, iout, vds2, 0, origin);
      const next = (outputAbove((vsr + st.vdsat) as Volts) - vsr) as Volts;
      if (Math.abs(next - vds2) < 1e-12 || spec.output) break;
      if (i >= 100) throw new InfeasibleError(`the output voltage did not settle with the model's VDsat (last change ${Math.abs(next - vds2)} V)`, origin);
      vds2 = next;
    }
    const st = modelDeviceStep(c, spec.sizing, iout, vds2, 0, origin, rec, "Output transistor M2");
    const vmin = calc(mirrorComplianceSaturation, [vsr, st.vdsat as Volts], "M2 stays saturated while VDS2 ≥ VDsat of its model");
    const vout = outputAbove(vmin, rec);
    if (vout < vmin)
      throw new InfeasibleError(
        `the output at ${v(s * vout)} is ${s > 0 ? "below" : "above"} the compliance ${v(s * vmin)} (${s > 0 ? "VSS" : "VDD"} plus the model's VDsat = ${v(st.vdsat)}): the output transistor would be in triode`,
        `${origin}.output.vout`,
      );
    if (vout > vdr) throw new InfeasibleError(`the output at ${v(s * vout)} lies beyond the drain rail ${v(s * vdr)}`, `${origin}.output.vout`);
    const wl2 = st.wl as Ratio;
    const wl1 = calc(sf.referenceAspectRatio, [wl2, n]);
    const w1 = calc(sf.widthForRatio, [wl1, l], "reference transistor M1, same L");
    const vgs1 = calc(gateSourceVoltage, [st.vt as Volts, st.vov as Volts], "both transistors share VGS");
    if (vgs1 >= vdr - vsr)
      throw new InfeasibleError(`the reference needs VGS = ${v(vgs1)}, at or beyond the ${v(vdr - vsr)} rail span: RREF would come out negative`, origin);
    rec?.note("Reference current from M1's model", "M1 is diode-connected (VDS1 = VGS1); its model gives the current RREF must pass:");
    const iref = Math.abs(operatingPoint(device(c, w1, l, origin), { vgs: (s * vgs1) as Volts, vds: (s * vgs1) as Volts, vsb: 0 as Volts }, {}, rec).channelCurrent) as Amperes;
    return mirrorFinish(spec, rec, { vdr, vsr, s, vt: st.vt as Volts, vov: st.vov as Volts, vout, wl2, vgs1, iref, w2: st.w as Meters, w1, l });
  }
  let vov: Volts;
  let wl2: Ratio;
  if ("vov" in spec.sizing) {
    vov = spec.sizing.vov;
    const vout = outputFor(vov, rec);
    wl2 = calc(aspectRatioForCurrent, [iout, c.kp, vov, lambda, (vout - vsr) as Volts], "output transistor M2");
  } else {
    wl2 = (spec.sizing.w / l) as Ratio;
    const k2 = (c.kp * wl2) as AmperesPerVoltSquared;
    vov = overdriveForCurrent.fn(iout, k2, lambda, (vdr - vsr) as Volts);
    for (let i = 0; i < 100; i++) {
      const next = overdriveForCurrent.fn(iout, k2, lambda, (outputFor(vov) - vsr) as Volts);
      const done = Math.abs(next - vov) < 1e-12;
      vov = next;
      if (done) break;
    }
    vov = calc(overdriveForCurrent, [iout, k2, lambda, (outputFor(vov, rec) - vsr) as Volts], "output transistor M2");
  }
  const vout = outputFor(vov);
  const vmin = (vsr + vov) as Volts;
  if (vout < vmin)
    throw new InfeasibleError(
      `the output at ${v(s * vout)} is ${s > 0 ? "below" : "above"} the compliance ${v(s * vmin)} (${s > 0 ? "VSS" : "VDD"} plus VOV = ${v(vov)}): the output transistor would be in triode`,
      `${origin}.output.vout`,
    );
  if (vout > vdr) throw new InfeasibleError(`the output at ${v(s * vout)} lies beyond the drain rail ${v(s * vdr)}`, `${origin}.output.vout`);
  const wl1 = calc(sf.referenceAspectRatio, [wl2, n]);
  const k1 = (c.kp * wl1) as AmperesPerVoltSquared;
  const vgs1 = calc(gateSourceVoltage, [vt, vov], "both transistors share VGS");
  if (vgs1 >= vdr - vsr)
    throw new InfeasibleError(`the reference needs VGS = Vt + VOV = ${v(vgs1)}, at or beyond the ${v(vdr - vsr)} rail span: RREF would come out negative`, origin);
  const iref = calc(referenceCurrentDiode, [k1, vgs1, vt, lambda]);
  const w2 = ("vov" in spec.sizing ? calc(sf.widthForRatio, [wl2, l]) : spec.sizing.w) as Meters;
  const w1 = calc(sf.widthForRatio, [wl1, l], "reference transistor M1, same L");
  return mirrorFinish(spec, rec, { vdr, vsr, s, vt, vov, vout, wl2, vgs1, iref, w2, w1, l });
}

interface MirrorDesign {
  readonly vdr: Volts;
  readonly vsr: Volts;
  readonly s: 1 | -1;
  readonly vt: Volts;
  readonly vov: Volts;
  readonly vout: Volts;
  readonly wl2: Ratio;
  readonly vgs1: Volts;
  readonly iref: Amperes;
  readonly w2: Meters;
  readonly w1: Meters;
  readonly l: Meters;
}

/** RREF, the output load, standard values and the re-solve: the same for every model. */
function mirrorFinish(spec: CurrentMirrorSpec, rec: Derivation | undefined, m: MirrorDesign): SynthesisResult<CurrentMirrorComponents> {
  const { vdr, vsr, s, vt, vov, vout, wl2, vgs1, iref, w2, w1, l } = m;
  const c = spec.card;
  const iout = spec.id;
  const calc = <A extends readonly number[], R extends number>(f: Formula<A, R>, args: A, because?: string): R => evaluate(f, args, rec, because);
  const rref = calc(sf.referenceResistor, [vdr, vsr, vgs1, iref]);
  const resistorLoad = (spec.load ?? "resistor") === "resistor";
  let ideal: CurrentMirrorComponents;
  if (resistorLoad) {
    const rl = calc(sf.mirrorLoadResistor, [vdr, vout, iout]);
    if (!(rl > 0)) throw new InfeasibleError(`the output at the drain rail leaves no drop across a load resistor; use load "source"`, `${origin}.output.vout`);
    ideal = { rref, rload: rl as Ohms };
  } else ideal = { rref, vout: (s * vout) as Volts };

  const d: CoreDesign = { vrs: 0 as Volts, vs: vsr, vt, vsb: 0 as Volts, vov, wl: wl2, k: (c.kp * wl2) as AmperesPerVoltSquared, vg: (vsr + vgs1) as Volts, vd: vout, rd: (ideal.rload ?? 0) as Ohms, gm: 0, gds: 0, gmb: 0, w: w2, l };
  return finish(
    {
      topology: "current-mirror",
      spec,
      design: d,
      ideal,
      snapped: resistorLoad ? ["rref", "rload"] : ["rref"],
      output: { node: "drain", target: (s * vout) as Volts },
      devices: { reference: { card: c, w: w1, l } },
    },
    rec,
  );
}
