/**
 * Drain current in every region, with the region test and its margins.
 * `drainCurrent` is the allocation-free hot path for every model (the card's
 * `model` picks the equations, device/models/); `operatingPoint` returns the
 * whole picture and records its steps.
 */
import { deviceGain, forwardCurrent, overdrive, saturationCurrent, saturationCurrentClm, triodeCurrent, triodeCurrentClm } from "../formulas/device.formulas.js";
import type { Derivation } from "../record/derivation.js";
import type { Amperes, AmperesPerVoltSquared, PerVolt, Ratio, SqrtVolts, Volts } from "../quantity.js";
import { cardTemperature, checkDevice, defaultPhi, isDevice, polaritySign, type Device, type ModelId } from "./card.js";
import { modelRegionReason, regionOf, regionReason, type Region } from "./region.js";
import { thresholdMagnitude } from "./threshold.js";
import { InputError, requireFinite } from "../errors.js";
import { inversion, type InversionOptions } from "./inversion.js";
import { channelCurrent, type ClmMode } from "./models/square-law.js";
import { mobilityBias, mobilityChannelCurrent } from "./models/mobility.js";
import { defaultEkvCriticalField, ekvBias, ekvChannelCurrent } from "./models/ekv.js";
import { thermalVoltage } from "../quantity.js";

export { channelCurrent, type ClmMode } from "./models/square-law.js";

/** Model choices; the inversion options only affect the recorded inversion-level finding. */
export interface ModelOptions extends InversionOptions {
  readonly clm?: ClmMode;
}

/** Terminal voltages as measured (for a PMOS these are normally negative). */
export interface TerminalVoltages {
  readonly vgs: Volts;
  readonly vds: Volts;
  /** Source-body voltage; 0 when the body is tied to the source. */
  readonly vsb?: Volts;
}

export interface OperatingPoint {
  readonly region: Region;
  /** Current into the drain terminal, SPICE sign: positive for a conducting NMOS, negative for a conducting PMOS. */
  readonly id: Amperes;
  /** Channel current in the device's normal direction (drain→source for NMOS, source→drain for PMOS). */
  readonly channelCurrent: Amperes;
  /** Threshold with body effect, signed like the card's vt0. */
  readonly vt: Volts;
  /** Overdrive in the device's polarity: VGS − Vt (NMOS), VSG − |Vt| (PMOS). Negative in cutoff. */
  readonly vov: Volts;
  /** VDS − VDsat in the device's polarity: ≥ 0 in saturation; the margin to the triode edge. */
  readonly saturationMargin: Volts;
  /** The model's drain saturation voltage (device polarity): VOV for the square law; with velocity saturation, or the EKV all-region value, below it. */
  readonly vdsat: Volts;
  /** The model that produced this operating point (the card's `model`). */
  readonly model: ModelId;
  /** EKV only: the inversion coefficient IC = IF/IS of the bias point. */
  readonly ic?: Ratio;
  /** Gate-source, drain-source and source-body voltages in the device's polarity, after any source/drain swap. */
  readonly vgsDevice: Volts;
  readonly vdsDevice: Volts;
  readonly vsbDevice: Volts;
  /** True when VDS < 0 in the device's polarity, so drain and source swap roles (as in SPICE). */
  readonly reversed: boolean;
  readonly k: AmperesPerVoltSquared;
  readonly reason: string;
}

/**
 * Channel current in the device's own polarity (VGS, VDS, VSB as for an NMOS; any
 * sign of VDS, the drain and source swapping roles when it is negative), for every
 * model. Plain numbers, no allocation.
 */
export function deviceCurrent(dev: Device, g: number, d: number, b: number, clm: ClmMode = "continuous"): number {
  if (d < 0) return -deviceCurrent(dev, g - d, -d, b + d, clm);
  const c = dev.card;
  const s = c.polarity === "nmos" ? 1 : -1;
  const model = c.model;
  if (model === "ekv")
    return ekvChannelCurrent(c.kp, dev.w, dev.l, s * c.vt0, c.gamma ?? 0, c.phi ?? defaultPhi, c.lambda ?? 0, c.theta ?? 0, c.thetaB ?? 0, c.ecrit ?? defaultEkvCriticalField, c.sigma ?? 0, c.cit ?? 0, thermalVoltage(cardTemperature(c)), g, d, b);
  const vt = thresholdMagnitude((s * c.vt0) as Volts, (c.gamma ?? 0) as SqrtVolts, (c.phi ?? defaultPhi) as Volts, b as Volts);
  if (model === "square-law-mobility") return mobilityChannelCurrent((c.kp * dev.w) / dev.l, g - vt, d, c.lambda ?? 0, c.theta ?? 0, c.ecrit ?? Infinity, dev.l);
  return channelCurrent((c.kp * dev.w) / dev.l, g - vt, d, c.lambda ?? 0, clm);
}

/**
 * Drain current (SPICE sign) for terminal voltages vgs, vds, vsb, for every model.
 * Plain numbers in, plain number out, no allocation: the form for sweeps and Monte
 * Carlo. The device must come from `device()`/`checkDevice()` (one WeakSet
 * look-up proves it); the card's values are then known good and are not checked again.
 */
export function drainCurrent(dev: Device, vgs: number, vds: number, vsb = 0, clm: ClmMode = "continuous"): Amperes {
  if (!isDevice(dev)) throw new InputError(dev, "a device made by device(card, W, L) or checkDevice(...)", "drainCurrent.dev");
  const s = dev.card.polarity === "nmos" ? 1 : -1;
  return (s * deviceCurrent(dev, s * vgs, s * vds, s * vsb, clm)) as Amperes;
}

/** The whole operating point at given terminal voltages, recorded step by step when `rec` is given. */
export function operatingPoint(device: Device, bias: TerminalVoltages, opts: ModelOptions = {}, rec?: Derivation): OperatingPoint {
  const dev = checkDevice(device, "operatingPoint.dev");
  if (!bias || typeof bias !== "object") throw new InputError(bias, "terminal voltages { vgs, vds, vsb? } in V", "operatingPoint.bias");
  requireFinite(bias.vgs, "bias.vgs", "a finite VGS in V");
  requireFinite(bias.vds, "bias.vds", "a finite VDS in V");
  if (bias.vsb !== undefined) requireFinite(bias.vsb, "bias.vsb", "a finite VSB in V");
  const c = dev.card;
  const pmos = c.polarity === "pmos";
  const s = polaritySign(c);
  const clm = opts.clm ?? "continuous";
  const lambda = (c.lambda ?? 0) as PerVolt;
  let g = s * bias.vgs;
  let d = s * bias.vds;
  let b = s * (bias.vsb ?? 0);
  const reversed = d < 0;
  if (reversed) {
    g -= d;
    b += d;
    d = -d;
    rec?.note("Source and drain swap", `${pmos ? "VSD" : "VDS"} < 0: the drain terminal acts as the source; voltages are taken from it and the current reverses.`);
  }
  if (c.model === "square-law-mobility" || c.model === "ekv") {
    const k = deviceGain.fn(c.kp, dev.w, dev.l);
    rec?.step(deviceGain, [c.kp, dev.w, dev.l], k, "current factor of the card, for reference");
    const m = c.model === "ekv" ? ekvBias(dev, g, d, b, rec) : mobilityBias(dev, g, d, b, rec);
    const channel = ((reversed ? -1 : 1) * m.id) as Amperes;
    return new OperatingPointValue(m.region, (s * channel) as Amperes, channel, (s * m.vt) as Volts, m.vov as Volts, g as Volts, d as Volts, b as Volts, reversed, k, pmos, m.vdsat as Volts, c.model, m.ic);
  }
  const k = deviceGain.fn(c.kp, dev.w, dev.l);
  rec?.step(deviceGain, [c.kp, dev.w, dev.l], k);
  const vtMag = thresholdMagnitude((s * c.vt0) as Volts, (c.gamma ?? 0) as SqrtVolts, (c.phi ?? defaultPhi) as Volts, b as Volts, rec);
  const vov = overdrive.fn(g as Volts, vtMag);
  rec?.step(overdrive, [g, vtMag], vov, pmos ? "PMOS: magnitudes VSG and |Vt|" : undefined);
  const region = regionOf(vov, d);
  rec?.note(`Region: ${region}`, regionReason(region, vov, d, pmos));
  let ich = 0;
  const vds = d as Volts;
  if (region === "triode") {
    if (clm === "continuous" && lambda !== 0) ich = rec ? rec.calc(triodeCurrentClm, [k, vov, vds, lambda]) : triodeCurrentClm.fn(k, vov, vds, lambda);
    else ich = rec ? rec.calc(triodeCurrent, [k, vov, vds]) : triodeCurrent.fn(k, vov, vds);
  } else if (region === "saturation") {
    if (lambda !== 0) ich = rec ? rec.calc(saturationCurrentClm, [k, vov, lambda, vds]) : saturationCurrentClm.fn(k, vov, lambda, vds);
    else ich = rec ? rec.calc(saturationCurrent, [k, vov]) : saturationCurrent.fn(k, vov);
  } else {
    rec?.note("Drain current in cutoff", "ID = 0 in the square-law model (subthreshold leakage is not modelled).");
  }
  if (rec && region !== "cutoff") {
    // The inversion level rests on the forward current ½·k·VOV² (no λ), in triode as in saturation.
    const plainSat = region === "saturation" && lambda === 0;
    const forward = plainSat ? (ich as Amperes) : rec.calc(forwardCurrent, [k, vov], "for the inversion level");
    inversion(forward, k, opts, rec);
  }
  const channel = ((reversed ? -1 : 1) * ich) as Amperes;
  return new OperatingPointValue(region, (s * channel) as Amperes, channel, (s * vtMag) as Volts, vov, g as Volts, d as Volts, b as Volts, reversed, k, pmos, vov, "square-law", undefined);
}

/**
 * The operating point as returned. A class so that `reason` is built on first
 * read from the prototype: formatting the sentence costs more than the rest of
 * the operating point, and an accessor on an object literal is slower still.
 * `toJSON` includes `reason`; an object spread (`{ ...op }`) does not.
 */
class OperatingPointValue implements OperatingPoint {
  readonly saturationMargin: Volts;
  readonly #pmos: boolean;
  readonly ic?: Ratio;
  constructor(
    readonly region: Region,
    readonly id: Amperes,
    readonly channelCurrent: Amperes,
    readonly vt: Volts,
    readonly vov: Volts,
    readonly vgsDevice: Volts,
    readonly vdsDevice: Volts,
    readonly vsbDevice: Volts,
    readonly reversed: boolean,
    readonly k: AmperesPerVoltSquared,
    pmos: boolean,
    readonly vdsat: Volts,
    readonly model: ModelId,
    ic: number | undefined,
  ) {
    this.saturationMargin = (vdsDevice - vdsat) as Volts;
    this.#pmos = pmos;
    if (ic !== undefined) this.ic = ic as Ratio;
  }
  get reason(): string {
    return this.model === "square-law"
      ? regionReason(this.region, this.vov, this.vdsDevice, this.#pmos)
      : modelRegionReason(this.region, this.vov, this.vdsDevice, this.vdsat, this.#pmos, this.ic);
  }
  toJSON(): OperatingPoint {
    const { region, id, channelCurrent, vt, vov, saturationMargin, vdsat, model, ic, vgsDevice, vdsDevice, vsbDevice, reversed, k } = this;
    return { region, id, channelCurrent, vt, vov, saturationMargin, vdsat, model, ...(ic === undefined ? {} : { ic }), vgsDevice, vdsDevice, vsbDevice, reversed, k, reason: this.reason };
  }
}
