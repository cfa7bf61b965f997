/**
 * The square law with mobility degradation and velocity saturation
 * (equations: lib/formulas/square-law-mobility.catalog.ts; source named there).
 * Threshold and body effect as the square law; λ continuous as SPICE Level 1.
 * Closed form, continuous in ID and gds at VDsat; no allocation.
 */
import { deviceGain } from "../../formulas/device.formulas.js";
import { degradedDeviceGain, velocitySaturatedCurrent, velocitySaturatedTriodeCurrent, velocitySaturationVoltage } from "../../formulas/square-law-mobility.formulas.js";
import type { AmperesPerVoltSquared, Meters, PerVolt, SqrtVolts, Volts, VoltsPerMeter } from "../../quantity.js";
import { reversible, type DeviceModel, type ModelBias, type ModelParameter } from "../model.js";
import type { Derivation } from "../../record/derivation.js";
import { defaultPhi, type Device } from "../card.js";
import { overdrive } from "../../formulas/device.formulas.js";
import { thresholdMagnitude } from "../threshold.js";
import { thresholdParameters } from "./square-law.js";

/** Channel current for VDS ≥ 0 in device polarity; ecrit = Infinity gives no velocity saturation. */
export function mobilityChannelCurrent(k: number, vov: number, vds: number, lambda: number, theta: number, ecrit: number, l: number): number {
  if (vov <= 0) return 0;
  const v = vov as Volts;
  const e = ecrit as VoltsPerMeter;
  const len = l as Meters;
  const keff = degradedDeviceGain.fn(k as AmperesPerVoltSquared, theta as PerVolt, v);
  const vdsat = velocitySaturationVoltage.fn(v, e, len);
  return vds < vdsat
    ? velocitySaturatedTriodeCurrent.fn(keff, v, vds as Volts, lambda as PerVolt, e, len)
    : velocitySaturatedCurrent.fn(keff, v, vdsat, lambda as PerVolt, vds as Volts, e, len);
}

/** The drain saturation voltage VDsat for an overdrive (device polarity). */
export function mobilitySaturationVoltage(vov: number, ecrit: number, l: number): number {
  return vov <= 0 ? 0 : velocitySaturationVoltage.fn(vov as Volts, ecrit as VoltsPerMeter, l as Meters);
}

export const mobilityParameters: readonly ModelParameter[] = [
  ...thresholdParameters,
  { name: "theta", dim: "inverseVoltage", meaning: "mobility degradation θ", min: 0, max: 5, initial: 0.1, absent: 0, geometryScaled: false },
  { name: "ecrit", dim: "electricField", meaning: "critical field for velocity saturation Esat", min: 1e5, max: 1e9, initial: 5e6, absent: Infinity, geometryScaled: false },
];

const forward = (p: Float64Array, vgs: number, vds: number, vsb: number): number => {
  const vt = thresholdMagnitude(p[0]! as Volts, p[2]! as SqrtVolts, p[3]! as Volts, vsb as Volts);
  const k = deviceGain.fn(p[1]! as AmperesPerVoltSquared, p[7]! as Meters, p[8]! as Meters);
  return mobilityChannelCurrent(k, vgs - vt, vds, p[4]!, p[5]!, p[6]!, p[8]!);
};

export const squareLawMobility: DeviceModel = {
  id: "square-law-mobility",
  title: "Square law with mobility degradation and velocity saturation",
  source: "Sodini, Ko & Moll, IEEE Trans. Electron Devices 31(10), 1984; Tsividis & McAndrew, Operation and Modeling of the MOS Transistor, 3rd ed., Oxford 2011",
  parameters: mobilityParameters,
  size: mobilityParameters.length + 3,
  current: reversible(forward),
};

/**
 * The bias point of a square-law-mobility device (device polarity, VDS ≥ 0), recorded
 * with the catalog's formulas when `rec` is given.
 */
export function mobilityBias(dev: Device, g: number, d: number, b: number, rec?: Derivation): ModelBias {
  const c = dev.card;
  const s = c.polarity === "nmos" ? 1 : -1;
  const k = deviceGain.fn(c.kp, dev.w, dev.l);
  const vt = thresholdMagnitude((s * c.vt0) as Volts, (c.gamma ?? 0) as SqrtVolts, (c.phi ?? defaultPhi) as Volts, b as Volts, rec);
  const vov = overdrive.fn(g as Volts, vt);
  rec?.step(overdrive, [g, vt], vov, s < 0 ? "PMOS: magnitudes VSG and |Vt|" : undefined);
  if (vov <= 0) {
    rec?.note("Drain current in cutoff", "ID = 0: the square law with mobility degradation has no subthreshold conduction.");
    return { region: "cutoff", id: 0, vt, vov, vdsat: 0 };
  }
  const theta = (c.theta ?? 0) as PerVolt;
  const lambda = (c.lambda ?? 0) as PerVolt;
  const l = dev.l;
  const e = (c.ecrit ?? Infinity) as VoltsPerMeter;
  const keff = rec ? rec.calc(degradedDeviceGain, [k, theta, vov]) : degradedDeviceGain.fn(k, theta, vov);
  let vdsat: Volts;
  if (c.ecrit === undefined) {
    vdsat = vov;
    rec?.note("No velocity saturation", "The card gives no critical field Esat, so VDsat = VOV as in the square law.");
  } else vdsat = rec ? rec.calc(velocitySaturationVoltage, [vov, e, l]) : velocitySaturationVoltage.fn(vov, e, l);
  const vds = d as Volts;
  if (d < vdsat) {
    const id = rec ? rec.calc(velocitySaturatedTriodeCurrent, [keff, vov, vds, lambda, e, l]) : velocitySaturatedTriodeCurrent.fn(keff, vov, vds, lambda, e, l);
    return { region: "triode", id, vt, vov, vdsat };
  }
  const id = rec ? rec.calc(velocitySaturatedCurrent, [keff, vov, vdsat, lambda, vds, e, l]) : velocitySaturatedCurrent.fn(keff, vov, vdsat, lambda, vds, e, l);
  return { region: "saturation", id, vt, vov, vdsat };
}
