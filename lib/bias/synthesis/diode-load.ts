/**
 * Common source with a diode-connected load: from the drain current, the
 * driver's overdrive (or W/L) and an output voltage or a gain, to the driver's
 * gate bias VG and the load's W/L. No resistor, so nothing is snapped; the
 * design is still re-solved by the analysis and its deviation reported.
 * In the driver's polarity:
 *
 *   VOUT stated; from a gain (the one VOUT where gm1/(gm2 + gmb2 + gds1 + gds2) = |Av|,
 *   found by bisection: the gain falls monotonically as VOUT rises); or halfway between
 *   the driver's triode edge VSR + VOV1 and the load's conduction edge VDR − Vt2
 *   (W/L)1 from ID at VOV1 (λ at VDS1 = VOUT − VSR);  VG = VSR + Vt1 + VOV1
 *   VOV2 = VDR − VOUT − Vt2(VSB);  (W/L)2 from ID at VOV2 (λ at VDS2 = VDR − VOUT)
 *
 * The load keeps its own card and L (`load`); a same-type load with body "rail"
 * carries the body effect (VSB = VOUT − VSR).
 *
 * Cards of another model (square law with mobility degradation, EKV) size the
 * driver and the load by their models (./model-device.ts): the driver's gate
 * drive and W/L at VDS1, the load's W/L at VGS2 = VDS2, gm, gmb, gds from the
 * models; the driver's triode edge is VSR + VDsat1 and the load's conduction
 * edge VDR − Vt2 with Vt2 as its model reports it.
 */
import { defaultPhi, polaritySign, checkCard, type DeviceCard } from "../../device/card.js";
import { thresholdMagnitude } from "../../device/threshold.js";
import { ConvergenceError, InfeasibleError, InputError, requirePositive } from "../../errors.js";
import type { Formula } from "../../formulas/define.js";
import { aspectRatioForCurrent, bodyTransconductance, outputConductanceSat, overdriveForCurrent, transconductanceFromOverdrive } from "../../formulas/device.formulas.js";
import { diodeLoadGain } from "../../formulas/mirror.formulas.js";
import * as sf from "../../formulas/synthesis.formulas.js";
import type { AmperesPerVoltSquared, Meters, Ohms, PerVolt, Ratio, Siemens, SqrtVolts, Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import type { DiodeLoadComponents } from "../topology.js";
import { checkSpecBase, deviceRails, evaluate, type SpecBase, type SynthesisResult } from "./common.js";
import { designsByModel, modelDeviceStep, modelDiodeStep } from "./model-device.js";
import { finish, recordSpec, type CoreDesign } from "./core.js";

export interface DiodeLoadSpec extends SpecBase {
  readonly topology: "diode-load";
  /** The load transistor's card (complementary or same type as the driver) and drawn L; its W is designed. */
  readonly load: { readonly card: DeviceCard; readonly l: Meters };
  /** An absolute output voltage or a gain magnitude; mid-range when omitted. */
  readonly output?: { readonly vout: Volts } | { readonly gain: number };
}

const origin = "diode-load spec";
const v = (x: number) => `${+x.toPrecision(4)} V`;

interface Point {
  vout: number;
  vov1: number;
  /** The driver's triode edge as a VDS: VOV1 for the square law, VDsat1 for a model. */
  edge1: number;
  /** The driver's gate drive VGS1 (magnitude). */
  vgs1: number;
  /** The load's W/L (NaN while it does not conduct). */
  wl2: number;
  wl1: number;
  vt2: number;
  vsb2: number;
  vov2: number;
  gain: number;
}

export function synthesizeDiodeLoad(spec: DiodeLoadSpec, rec?: Derivation): SynthesisResult<DiodeLoadComponents> {
  checkSpecBase(spec, origin);
  if (spec.topology !== "diode-load") throw new InputError(spec.topology, `"diode-load"`, `${origin}.topology`);
  if (!spec.load || typeof spec.load !== "object") throw new InputError(spec.load, "the load { card, l }", `${origin}.load`);
  const lc = checkCard(spec.load.card, `${origin}.load.card`);
  requirePositive(spec.load.l, `${origin}.load.l`, "a channel length L > 0 in m");
  const out = spec.output;
  if (out && "gain" in out) requirePositive(out.gain, `${origin}.output.gain`, "a gain magnitude > 0");
  else if (out && "vout" in out) {
    if (typeof out.vout !== "number" || !Number.isFinite(out.vout)) throw new InputError(out.vout, "a finite output voltage in V", `${origin}.output.vout`);
  } else if (out) throw new InputError(out, "{ vout } or { gain }", `${origin}.output`);
  const c = spec.card;
  const { vdr, vsr, s } = deviceRails(c, spec.supplies);
  const vt1 = (s * c.vt0) as Volts;
  const vt02 = (polaritySign(lc) * lc.vt0) as Volts;
  if (!(vt02 > 0)) throw new InputError(lc.vt0, "an enhancement-mode load card (|Vt0| > 0 in its polarity) for the diode connection", `${origin}.load.card.vt0`);
  const sameType = lc.polarity === c.polarity;
  const bodyEffect = sameType && spec.body === "rail" && (lc.gamma ?? 0) > 0;
  const g2 = (lc.gamma ?? 0) as SqrtVolts;
  const phi2 = (lc.phi ?? defaultPhi) as Volts;
  const l1 = (c.lambda ?? 0) as PerVolt;
  const l2 = (lc.lambda ?? 0) as PerVolt;
  const id = spec.id;
  recordSpec(spec, origin, rec);
  const calc = <A extends readonly number[], R extends number>(f: Formula<A, R>, args: A, r?: Derivation, because?: string): R => evaluate(f, args, r, because);

  /** Everything at an output voltage (device polarity); recorded when r is given. */
  const atSquare = (vout: number, r?: Derivation): Point => {
    const vds1 = (vout - vsr) as Volts;
    let vov1: number;
    let wl1: number;
    if ("vov" in spec.sizing) {
      vov1 = spec.sizing.vov;
      wl1 = calc(aspectRatioForCurrent, [id, c.kp, spec.sizing.vov, l1, vds1], r, "driver M1");
    } else {
      wl1 = spec.sizing.w / spec.sizing.l;
      vov1 = calc(overdriveForCurrent, [id, (c.kp * wl1) as AmperesPerVoltSquared, l1, vds1], r, "driver M1");
    }
    const vsb2 = (bodyEffect ? vout - vsr : 0) as Volts;
    const vt2 = thresholdMagnitude(vt02, g2, phi2, vsb2, r);
    const vov2 = calc(sf.diodeLoadOverdrive, [vdr, vout as Volts, vt2], r);
    let gain = Number.POSITIVE_INFINITY;
    if (vov2 > 0) {
      const gm1 = transconductanceFromOverdrive.fn(id, vov1 as Volts);
      const gm2 = transconductanceFromOverdrive.fn(id, vov2);
      const gmb2 = bodyEffect ? bodyTransconductance.fn(gm2, g2, phi2, vsb2) : (0 as Siemens);
      const gds1 = outputConductanceSat.fn(l1, (c.kp * wl1) as AmperesPerVoltSquared, vov1 as Volts);
      const wl2 = aspectRatioForCurrent.fn(id, lc.kp, vov2, l2, (vdr - vout) as Volts);
      const gds2 = outputConductanceSat.fn(l2, (lc.kp * wl2) as AmperesPerVoltSquared, vov2);
      if (r) {
        r.step(transconductanceFromOverdrive, [id, vov1], gm1, "driver");
        r.step(transconductanceFromOverdrive, [id, vov2], gm2, "load");
        if (bodyEffect) r.step(bodyTransconductance, [gm2, g2, phi2, vsb2], gmb2, "load, body at the rail");
      }
      gain = -calc(diodeLoadGain, [gm1, gm2, gmb2, gds1, gds2], r);
    }
    const wl2 = vov2 > 0 ? aspectRatioForCurrent.fn(id, lc.kp, vov2, l2, (vdr - vout) as Volts) : NaN;
    return { vout, vov1, edge1: vov1, vgs1: vt1 + vov1, wl2, wl1, vt2, vsb2, vov2, gain };
  };
  /** The same point sized by the device models. */
  const atModel = (vout: number, r?: Derivation): Point => {
    const vds1 = vout - vsr;
    const d = modelDeviceStep(c, spec.sizing, id, vds1, 0, origin, r, "Driver M1");
    const vsb2 = bodyEffect || (sameType && spec.body === "rail") ? vout - vsr : 0;
    const x = vdr - vout;
    const ld = modelDiodeStep(lc, spec.load.l, id, x, vsb2, origin, r, "Load M2");
    let gain = Number.POSITIVE_INFINITY;
    let vt2 = vt02 as number;
    let vov2 = 0;
    let wl2 = NaN;
    if (ld) {
      vt2 = ld.vt;
      vov2 = ld.vov;
      wl2 = ld.wl;
      const gmb2 = (vsb2 !== 0 || (sameType && spec.body === "rail") ? ld.gmb : 0) as Siemens;
      gain = -calc(diodeLoadGain, [d.gm as Siemens, ld.gm as Siemens, gmb2, d.gds as Siemens, ld.gds as Siemens], r);
    }
    return { vout, vov1: d.vov, edge1: d.vdsat, vgs1: d.vgs, wl2, wl1: d.wl, vt2, vsb2, vov2, gain };
  };
  const byModel = designsByModel(c) || designsByModel(lc);
  const at = byModel ? atModel : atSquare;

  // The output voltage: stated, from the gain, or mid-range (a fixed point, as Vt2 may follow VOUT).
  let vout: number;
  const lo = (u: number) => vsr + at(u).edge1; // the driver's triode edge at this VOUT
  if (out && "vout" in out) {
    vout = s * out.vout;
    rec?.input("VOUT", out.vout, "voltage", `${origin}.output.vout`);
    if (s < 0) rec?.note("Output in device polarity", `VOUT mirrored for the PMOS equations: −VOUT = ${+vout.toPrecision(4)} V.`);
  } else if (out && "gain" in out) {
    // Bisection between the driver's triode edge and the load's conduction edge; the gain falls as VOUT rises.
    // The driver's triode edge a = VSR + VOV1(a) and the load's conduction edge b = VDR − Vt2(b):
    // fixed points, as VOV1 follows VOUT through λ and Vt2 through the body effect.
    // A model needs some VDS to carry current at all: start its fixed point mid-span.
    let a: number = byModel ? (vsr + vdr) / 2 : vsr;
    let b: number = vdr;
    for (let i = 0; i < 100; i++) {
      a = lo(a);
      b = vdr - at(b).vt2;
    }
    const ga = at(a).gain;
    if (!(ga >= out.gain))
      throw new InfeasibleError(
        `a gain of ${out.gain} exceeds the most this sizing gives, |Av| = ${+ga.toPrecision(4)} with the driver at its triode edge (VOUT = ${v(s * a)}): lower the driver's overdrive (gm1 = 2·ID/VOV1 rises) or the gain`,
        `${origin}.output.gain`,
      );
    let it = 0;
    while (b - a > 1e-12 * Math.max(1, Math.abs(a), Math.abs(b))) {
      if (++it > 200) throw new ConvergenceError(`output voltage for gain ${out.gain} did not settle (bracket ${b - a} V)`, origin);
      const m = (a + b) / 2;
      if (at(m).gain >= out.gain) a = m;
      else b = m;
    }
    vout = (a + b) / 2;
    rec?.note("Output voltage for the gain", `Bisection on VOUT between the driver's triode edge and the load's conduction edge: |Av| = ${out.gain} at VOUT = ${v(s * vout)} (${it} halvings).`);
  } else {
    rec?.assume("Output halfway between the driver's triode edge and the load's conduction edge (common practice).");
    vout = (vsr + vdr) / 2;
    const mid = (p: Point): number => (byModel ? sf.diodeLoadMidOutputSaturation.fn(vsr, p.edge1 as Volts, vdr, p.vt2 as Volts) : sf.diodeLoadMidOutput.fn(vsr, p.vov1 as Volts, vdr, p.vt2 as Volts));
    for (let i = 0; ; i++) {
      const p = at(vout);
      const next = mid(p);
      if (Math.abs(next - vout) < 1e-12) break;
      if (i > 200) throw new ConvergenceError(`mid-range output did not settle (last change ${Math.abs(next - vout)} V)`, origin);
      vout = next;
    }
    if (rec) {
      const p = at(vout);
      if (byModel) rec.step(sf.diodeLoadMidOutputSaturation, [vsr, p.edge1, vdr, p.vt2], mid(p));
      else rec.step(sf.diodeLoadMidOutput, [vsr, p.vov1, vdr, p.vt2], mid(p));
    }
  }
  const p = at(vout, rec);
  if (vout - vsr < p.edge1)
    throw new InfeasibleError(`the output at ${v(s * vout)} is ${s > 0 ? "below" : "above"} the driver's triode edge ${v(s * (vsr + p.edge1))}: the driver would be in triode`, `${origin}.output`);
  if (!(p.vov2 > 0))
    throw new InfeasibleError(`the output at ${v(s * vout)} leaves the load VSG/VGS = ${v(vdr - vout)} at or below its threshold ${v(p.vt2)}: the load would carry no current`, `${origin}.output`);
  // The model's load was sized (and recorded) by at(); the square law's is recorded here.
  const wl2 = (byModel ? p.wl2 : calc(aspectRatioForCurrent, [id, lc.kp, p.vov2 as Volts, l2, (vdr - vout) as Volts], rec, "load M2 (diode: VDS = VGS)")) as Ratio;
  const w2 = calc(sf.widthForRatio, [wl2, spec.load.l], rec, "load");
  const w1 = ("vov" in spec.sizing ? calc(sf.widthForRatio, [p.wl1 as Ratio, spec.sizing.l], rec, "driver") : spec.sizing.w) as Meters;
  const vg = calc(sf.gateNodeForDrive, [vsr, p.vgs1 as Volts], rec, byModel ? "driver: VGS from its model, source at its rail" : "driver: VGS = Vt + VOV, source at its rail");
  const ideal: DiodeLoadComponents = { vg: (s * vg) as Volts };
  rec?.note("Gate bias source", `The driver's gate is to be held at ${+ideal.vg.toPrecision(5)} V by the bias source.`);
  const d: CoreDesign = { vrs: 0 as Volts, vs: vsr, vt: (p.vgs1 - p.vov1) as Volts, vsb: 0 as Volts, vov: p.vov1 as Volts, wl: p.wl1 as Ratio, k: (c.kp * p.wl1) as AmperesPerVoltSquared, vg, vd: vout as Volts, rd: 0 as Ohms, gm: 0, gds: 0, gmb: 0, w: w1, l: spec.sizing.l };
  return finish(
    {
      topology: "diode-load",
      spec,
      design: d,
      ideal,
      snapped: [],
      output: { node: "drain", target: (s * vout) as Volts },
      ...(out && "gain" in out ? { gain: { target: out.gain, kind: "common-source" as const } } : {}),
      devices: { load: { card: lc, w: w2, l: spec.load.l } },
    },
    rec,
  );
}
