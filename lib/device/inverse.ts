/**
 * Inverse design on the square law in saturation: the overdrive or gate voltage
 * for a target current, and the aspect ratio or current for a target current or
 * transconductance at a chosen overdrive. Currents and gm are magnitudes (for a
 * PMOS give |ID|); terminal voltages carry SPICE signs (for a PMOS VDS < 0).
 * A target no device can meet throws InfeasibleError, explained in numbers.
 */
import { InfeasibleError, InputError, requireFinite, requirePositive } from "../errors.js";
import {
  aspectRatioForCurrent,
  aspectRatioForTransconductance,
  currentForTransconductance,
  deviceGain,
  gateSourceVoltage,
  overdriveForCurrent,
} from "../formulas/device.formulas.js";
import type { Derivation } from "../record/derivation.js";
import type { Amperes, PerVolt, Ratio, Siemens, SqrtVolts, Volts } from "../quantity.js";
import { checkCard, checkDevice, defaultPhi, modelOf, polaritySign, type Device, type DeviceCard } from "./card.js";
import { gateVoltageForModel } from "./model-inverse.js";
import { thresholdMagnitude } from "./threshold.js";

export interface SaturationOptions {
  /** Drain-source voltage (SPICE sign) at which the device will sit: sets the (1 + λ·VDS) factor and the saturation check. */
  readonly vds?: Volts;
}

export interface GateDriveOptions extends SaturationOptions {
  /** Source-body voltage (SPICE sign; for a PMOS reverse body bias is VSB < 0). 0 when omitted. */
  readonly vsb?: Volts;
  /** Largest gate-source magnitude |VGS| available (a supply, a driver, the gate-oxide rating). */
  readonly maxGateDrive?: Volts;
}

export interface GateDrive {
  /** Gate-source voltage, SPICE sign (negative for an enhancement PMOS). */
  readonly vgs: Volts;
  /** Overdrive magnitude. */
  readonly vov: Volts;
  /** Threshold with body effect, signed like the card's vt0. */
  readonly vt: Volts;
}

export interface TransconductanceSizing {
  readonly id: Amperes;
  readonly wl: Ratio;
}

const f = (x: number, unit: string) => `${+x.toPrecision(4)} ${unit}`;

function targetCurrent(id: number, origin: string): Amperes {
  return requirePositive(id, origin, "a drain-current magnitude > 0 in A (for a PMOS give |ID|)") as Amperes;
}

/** VDS in the device's own polarity, or 0 when not given. */
function deviceVds(card: DeviceCard, vds: Volts | undefined, origin: string): Volts {
  if (vds === undefined) return 0 as Volts;
  requireFinite(vds, origin, "a finite VDS in V");
  const d = polaritySign(card) * vds;
  if (d < 0)
    throw new InputError(
      vds,
      card.polarity === "nmos" ? "VDS ≥ 0 V for an NMOS in saturation" : "VDS ≤ 0 V for a PMOS in saturation (VSD ≥ 0)",
      origin,
    );
  return d as Volts;
}

function requireSaturation(vov: number, vds: number | undefined, what: string, fix: string, origin: string): void {
  if (vds !== undefined && vds < vov)
    throw new InfeasibleError(
      `${what} needs VOV = ${f(vov, "V")}, but only VDS = ${f(vds, "V")} is available: the device would be in triode, not saturation (needs VDS ≥ VOV, short by ${f(vov - vds, "V")}). ${fix}`,
      origin,
    );
}

/** Overdrive magnitude that gives |ID| = `id` in saturation (with λ at `opts.vds`, when given). */
export function overdriveFor(dev: Device, id: Amperes, opts: SaturationOptions = {}, rec?: Derivation): Volts {
  checkDevice(dev, "overdriveFor.dev");
  if (modelOf(dev.card) !== "square-law") return gateVoltageForModel(dev, id, opts, rec).vov;
  const i = targetCurrent(id, "overdriveFor.id");
  const vds = deviceVds(dev.card, opts.vds, "overdriveFor.opts.vds");
  const lambda = (dev.card.lambda ?? 0) as PerVolt;
  const k = deviceGain.fn(dev.card.kp, dev.w, dev.l);
  const vov = overdriveForCurrent.fn(i, k, lambda, vds);
  if (rec) {
    rec.step(deviceGain, [dev.card.kp, dev.w, dev.l], k);
    rec.step(overdriveForCurrent, [i, k, lambda, vds], vov, opts.vds === undefined ? "λ·VDS taken as 0: no VDS given" : "saturation assumed; checked below");
    if (opts.vds !== undefined) rec.check("Saturation: VDS ≥ VOV", vds, "voltage", { min: vov }, "the device must stay out of triode");
  }
  if (opts.vds !== undefined) {
    const wlMin = aspectRatioForCurrent.fn(i, dev.card.kp, vds, lambda, vds);
    requireSaturation(
      vov,
      vds,
      `|ID| = ${f(i, "A")} with W/L = ${f(dev.w / dev.l, "")}`,
      `Widen the device to W/L ≥ ${f(wlMin, "")}, lower the current, or give it more VDS.`,
      "overdriveFor",
    );
  }
  return vov;
}

/** Gate-source voltage (SPICE sign) for |ID| = `id` in saturation, with the body effect at `opts.vsb`. */
export function gateVoltageFor(dev: Device, id: Amperes, opts: GateDriveOptions = {}, rec?: Derivation): GateDrive {
  checkDevice(dev, "gateVoltageFor.dev");
  if (modelOf(dev.card) !== "square-law") return gateVoltageForModel(dev, id, opts, rec);
  const c = dev.card;
  const s = polaritySign(c);
  const vsb = opts.vsb === undefined ? 0 : s * requireFinite(opts.vsb, "gateVoltageFor.opts.vsb", "a finite VSB in V");
  if (opts.maxGateDrive !== undefined) requirePositive(opts.maxGateDrive, "gateVoltageFor.opts.maxGateDrive", "a gate-drive magnitude |VGS| > 0 in V");
  const vov = overdriveFor(dev, id, opts, rec);
  const vtMag = thresholdMagnitude((s * c.vt0) as Volts, (c.gamma ?? 0) as SqrtVolts, (c.phi ?? defaultPhi) as Volts, vsb as Volts, rec);
  const vgsDev = gateSourceVoltage.fn(vtMag, vov);
  rec?.step(gateSourceVoltage, [vtMag, vov], vgsDev, s < 0 ? "PMOS: VSG = |Vt| + VOV, so VGS = −VSG" : undefined);
  if (opts.maxGateDrive !== undefined) {
    rec?.check("Gate drive within the limit", vgsDev, "voltage", { max: opts.maxGateDrive });
    if (vgsDev > opts.maxGateDrive)
      throw new InfeasibleError(
        `|ID| = ${f(id, "A")} needs ${s < 0 ? "VSG" : "VGS"} = |Vt| + VOV = ${f(vtMag, "V")} + ${f(vov, "V")} = ${f(vgsDev, "V")}, above the gate-drive limit ${f(opts.maxGateDrive, "V")} by ${f(vgsDev - opts.maxGateDrive, "V")}. Widen the device, lower the current, or reduce the body bias.`,
        "gateVoltageFor",
      );
  }
  return { vgs: (s * vgsDev) as Volts, vov, vt: (s * vtMag) as Volts };
}

/** W/L alone does not fix the current of a model with velocity saturation (it depends on L too): refuse, naming the function that does the job. */
function squareLawOnly(card: DeviceCard, fn: string, instead: string): void {
  const m = modelOf(card);
  if (m !== "square-law")
    throw new InputError(m, `a square-law card: ${fn} sizes W/L by the square law's closed form; for a "${m}" card use ${instead}, which hold L and invert the model numerically`, `${fn}.card.model`);
}

function checkedOverdrive(vov: number, origin: string): Volts {
  return requirePositive(vov, origin, "an overdrive VOV > 0 in V (the device must be on)") as Volts;
}

/** Aspect ratio W/L that carries |ID| = `id` in saturation at overdrive `vov`. */
export function aspectRatioFor(card: DeviceCard, id: Amperes, vov: Volts, opts: SaturationOptions = {}, rec?: Derivation): Ratio {
  checkCard(card, "aspectRatioFor.card");
  squareLawOnly(card, "aspectRatioFor", "widthForCurrent(dev, id, vgs) or sizeByGmOverId(dev, id, gm/ID)");
  const i = targetCurrent(id, "aspectRatioFor.id");
  const v = checkedOverdrive(vov, "aspectRatioFor.vov");
  const vds = deviceVds(card, opts.vds, "aspectRatioFor.opts.vds");
  if (opts.vds !== undefined) {
    rec?.check("Saturation: VDS ≥ VOV", vds, "voltage", { min: v });
    requireSaturation(v, vds, `The chosen overdrive`, "Choose VOV ≤ VDS or give the device more VDS.", "aspectRatioFor");
  }
  const lambda = (card.lambda ?? 0) as PerVolt;
  const wl = aspectRatioForCurrent.fn(i, card.kp, v, lambda, vds);
  rec?.step(aspectRatioForCurrent, [i, card.kp, v, lambda, vds], wl);
  return wl;
}

/** Drain current and aspect ratio that give transconductance `gm` in saturation at overdrive `vov`. */
export function sizeForTransconductance(card: DeviceCard, gm: Siemens, vov: Volts, opts: SaturationOptions = {}, rec?: Derivation): TransconductanceSizing {
  checkCard(card, "sizeForTransconductance.card");
  squareLawOnly(card, "sizeForTransconductance", "sizeByGmOverId(dev, id, gm/ID)");
  const g = requirePositive(gm, "sizeForTransconductance.gm", "a transconductance gm > 0 in S") as Siemens;
  const v = checkedOverdrive(vov, "sizeForTransconductance.vov");
  const vds = deviceVds(card, opts.vds, "sizeForTransconductance.opts.vds");
  if (opts.vds !== undefined) {
    rec?.check("Saturation: VDS ≥ VOV", vds, "voltage", { min: v });
    requireSaturation(v, vds, `The chosen overdrive`, "Choose VOV ≤ VDS or give the device more VDS.", "sizeForTransconductance");
  }
  const lambda = (card.lambda ?? 0) as PerVolt;
  const id = currentForTransconductance.fn(g, v);
  const wl = aspectRatioForTransconductance.fn(g, card.kp, v, lambda, vds);
  if (rec) {
    rec.step(currentForTransconductance, [g, v], id);
    rec.step(aspectRatioForTransconductance, [g, card.kp, v, lambda, vds], wl);
  }
  return { id, wl };
}
