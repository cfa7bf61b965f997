/**
 * Drain current in every region, with the region test and its margins.
 * `drainCurrent` is the allocation-free hot path for every model (the card's
 * `model` picks the equations, device/models/); `operatingPoint` returns the
 * whole picture and records its steps.
 */
import { deviceGain, overdrive, saturationCurrent, saturationCurrentClm, triodeCurrent, triodeCurrentClm } from "../formulas/device.formulas.js";
import type { Derivation } from "../record/derivation.js";
import type { Amperes, AmperesPerVoltSquared, PerVolt, SqrtVolts, Volts } from "../quantity.js";
import { cardTemperature, defaultPhi, polaritySign, type Device } from "./card.js";
import { regionOf, regionReason, type Region } from "./region.js";
import { thresholdMagnitude } from "./threshold.js";
import { InputError, requireFinite } from "../errors.js";
import { inversion, type InversionOptions } from "./inversion.js";
import { channelCurrent, type ClmMode } from "./models/square-law.js";
import { mobilityChannelCurrent } from "./models/mobility.js";
import { defaultEkvCriticalField, ekvChannelCurrent } from "./models/ekv.js";
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
  /** VDS − VOV in the device's polarity: ≥ 0 in saturation; the margin to the triode edge. */
  readonly saturationMargin: Volts;
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
 * Drain current (SPICE sign) for terminal voltages vgs, vds, vsb. Plain numbers in,
 * plain number out, no allocation: the form for sweeps and Monte Carlo.
 */
export function drainCurrent(dev: Device, vgs: number, vds: number, vsb = 0, clm: ClmMode = "continuous"): Amperes {
  const c = dev.card;
  const s = c.polarity === "nmos" ? 1 : -1;
  let g = s * vgs;
  let d = s * vds;
  let b = s * vsb;
  let dir = 1;
  if (d < 0) {
    g -= d;
    b += d;
    d = -d;
    dir = -1;
  }
  const model = c.model;
  if (model === "ekv")
    return (s * dir * ekvChannelCurrent(c.kp, dev.w, dev.l, s * c.vt0, c.gamma ?? 0, c.phi ?? defaultPhi, c.lambda ?? 0, c.theta ?? 0, c.ecrit ?? defaultEkvCriticalField, c.sigma ?? 0, thermalVoltage(cardTemperature(c)), g, d, b)) as Amperes;
  const vt = thresholdMagnitude((s * c.vt0) as Volts, (c.gamma ?? 0) as SqrtVolts, (c.phi ?? defaultPhi) as Volts, b as Volts);
  if (model === "square-law-mobility") return (s * dir * mobilityChannelCurrent((c.kp * dev.w) / dev.l, g - vt, d, c.lambda ?? 0, c.theta ?? 0, c.ecrit ?? Infinity, dev.l)) as Amperes;
  return (s * dir * channelCurrent((c.kp * dev.w) / dev.l, g - vt, d, c.lambda ?? 0, clm)) as Amperes;
}

/** The whole operating point at given terminal voltages, recorded step by step when `rec` is given. */
export function operatingPoint(dev: Device, bias: TerminalVoltages, opts: ModelOptions = {}, rec?: Derivation): OperatingPoint {
  requireFinite(bias.vgs, "bias.vgs", "a finite VGS in V");
  requireFinite(bias.vds, "bias.vds", "a finite VDS in V");
  if (bias.vsb !== undefined) requireFinite(bias.vsb, "bias.vsb", "a finite VSB in V");
  const c = dev.card;
  if (c.model !== undefined && c.model !== "square-law")
    throw new InputError(c.model, `a square-law card: the operating point of "${c.model}" cards is not wired yet (use drainCurrent or the model's vector form)`, "operatingPoint.dev.card.model");
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
    const forward = plainSat ? (ich as Amperes) : rec.calc(saturationCurrent, [k, vov], "forward current, for the inversion level");
    inversion(forward, k, opts, rec);
  }
  const channel = ((reversed ? -1 : 1) * ich) as Amperes;
  return new OperatingPointValue(region, (s * channel) as Amperes, channel, (s * vtMag) as Volts, vov, g as Volts, d as Volts, b as Volts, reversed, k, pmos);
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
  ) {
    this.saturationMargin = (vdsDevice - vov) as Volts;
    this.#pmos = pmos;
  }
  get reason(): string {
    return regionReason(this.region, this.vov, this.vdsDevice, this.#pmos);
  }
  toJSON(): OperatingPoint {
    const { region, id, channelCurrent, vt, vov, saturationMargin, vgsDevice, vdsDevice, vsbDevice, reversed, k } = this;
    return { region, id, channelCurrent, vt, vov, saturationMargin, vgsDevice, vdsDevice, vsbDevice, reversed, k, reason: this.reason };
  }
}
