/**
 * The device step of a design for a card whose model has no closed-form
 * inverse (square law with mobility degradation, EKV): from the target
 * current at the design VDS and VSB (device polarity) to the gate drive and
 * W/L, with the threshold, VDsat and small-signal parameters the model gives
 * there. The square law keeps its catalog formulas (core.ts); this is its
 * counterpart, so a design with a fitted card is sized by that card.
 *
 * Method: overdrive stated → VGS = Vt + VOV (Vt as the model reports it at that
 * VDS and VSB), and W by proportion (ID ∝ W in every model here;
 * `widthForCurrent`); width stated → VGS by numeric inversion of the model
 * (`gateDriveForCurrent`: regula falsi on ln ID, 1e-12 V, ConvergenceError, or
 * InfeasibleError when no gate drive reaches the current); the caller checks the
 * region against the model's VDsat. Recorded with
 * the model's own catalog formulas through `smallSignal`. Not on a hot path.
 */
import { device, modelOf, polaritySign, type DeviceCard } from "../../device/card.js";
import { operatingPoint } from "../../device/drain-current.js";
import { gateDriveForCurrent, widthForCurrent } from "../../device/model-inverse.js";
import { models } from "../../device/models/index.js";
import { smallSignal } from "../../device/small-signal.js";
import type { Amperes, Meters, Volts } from "../../quantity.js";
import { deviceCurrent } from "../../device/drain-current.js";
import type { Derivation } from "../../record/derivation.js";
import type { Sizing } from "./common.js";

/** True when a card is designed through its model (anything but the square law). */
export const designsByModel = (card: DeviceCard): boolean => modelOf(card) !== "square-law";

/** The designed device at its bias, device polarity (magnitudes). */
export interface ModelDeviceStep {
  readonly vgs: number;
  readonly vt: number;
  readonly vov: number;
  readonly vdsat: number;
  readonly w: number;
  readonly wl: number;
  readonly gm: number;
  readonly gds: number;
  readonly gmb: number;
}

/**
 * Size the device for |ID| = `id` at VDS = `vds`, VSB = `vsb` (device polarity) by its model.
 * `label` names the transistor in the record.
 */
export function modelDeviceStep(card: DeviceCard, sizing: Sizing, id: number, vds: number, vsb: number, origin: string, rec?: Derivation, label = "the device"): ModelDeviceStep {
  const s = polaritySign(card);
  const l = sizing.l;
  const bias = { vds: (s * vds) as Volts, vsb: (s * vsb) as Volts };
  let w: number;
  let vgs: number;
  const title = models[modelOf(card)].title;
  if ("vov" in sizing) {
    // The model's threshold at this VDS and VSB (for EKV it includes the σ·VDS lowering), then W by proportion.
    const trial = device(card, l as Meters, l, origin);
    const vt = s * operatingPoint(trial, { vgs: card.vt0, ...bias }).vt;
    vgs = vt + sizing.vov;
    rec?.note(`${label}: width by the ${title}`, `VGS = Vt + VOV = ${fmt(vt)} V + ${fmt(sizing.vov)} V = ${fmt(vgs)} V (magnitudes); the width that carries ${fmt(id)} A there at VDS = ${fmt(vds)} V follows from the model by proportion.`);
    w = widthForCurrent(trial, id as Amperes, (s * vgs) as Volts, bias, rec);
  } else {
    w = sizing.w;
    vgs = gateDriveForCurrent(device(card, w as Meters, l, origin), id, vds, vsb, origin);
    rec?.note(`${label}: gate drive by the ${title}`, `The model has no closed-form inverse: VGS = ${fmt(vgs)} V (magnitude) carries ${fmt(id)} A at VDS = ${fmt(vds)} V (regula falsi on ln ID, tolerance 1e-12 V).`);
  }
  const dev = device(card, w as Meters, l, origin);
  rec?.note(`${label} at its designed bias`, "The model's operating point and small-signal parameters there:");
  const ss = smallSignal(dev, { vgs: (s * vgs) as Volts, ...bias }, {}, rec);
  return { vgs, vt: s * ss.op.vt, vov: ss.op.vov, vdsat: ss.op.vdsat, w, wl: w / l, gm: ss.gm, gds: ss.gds, gmb: ss.gmb };
}

const fmt = (x: number) => String(+x.toPrecision(4));

/**
 * A diode-connected load (VGS = VDS = `vgs`, device polarity) sized by its model to carry `id`:
 * W by proportion (ID ∝ W). Undefined when the model carries no current there (a square-law-based
 * model below threshold). Recorded through `smallSignal` when `rec` is given.
 */
export function modelDiodeStep(card: DeviceCard, l: Meters, id: number, vgs: number, vsb: number, origin: string, rec?: Derivation, label = "the load"): ModelDeviceStep | undefined {
  const s = polaritySign(card);
  const trial = device(card, l, l, origin);
  if (!(deviceCurrent(trial, vgs, vgs, vsb) > 0)) return undefined;
  const bias = { vgs: (s * vgs) as Volts, vds: (s * vgs) as Volts, vsb: (s * vsb) as Volts };
  rec?.note(`${label}: width by the ${models[modelOf(card)].title}`, `Diode connection: VGS = VDS = ${fmt(vgs)} V (magnitude); the width that carries ${fmt(id)} A there follows from the model by proportion.`);
  const w = widthForCurrent(trial, id as Amperes, bias.vgs, { vds: bias.vds, vsb: bias.vsb }, rec);
  const ss = smallSignal(device(card, w, l, origin), bias, {}, rec);
  return { vgs, vt: s * ss.op.vt, vov: ss.op.vov, vdsat: ss.op.vdsat, w, wl: w / l, gm: ss.gm, gds: ss.gds, gmb: ss.gmb };
}
