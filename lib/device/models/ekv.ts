/**
 * The EKV all-region model (equations and sources: lib/formulas/ekv.catalog.ts).
 * One expression from weak through strong inversion, continuous in ID, gm, gds
 * and gm/ID; the inversion coefficient IC = IF/IS comes with it.
 * Closed form, no allocation; the card's temperature sets UT = kT/q.
 */
import {
  ekvDrainCurrent,
  ekvEffectiveGate,
  ekvEquivalentLength,
  ekvForwardCurrent,
  ekvGainFactor,
  ekvLimitedDrainVoltage,
  ekvPinchOffVoltage,
  ekvReverseCurrent,
  ekvSaturationVoltage,
  ekvSlopeFactor,
  ekvSpecificCurrent,
} from "../../formulas/ekv.formulas.js";
import { thermalVoltage, type AmperesPerVoltSquared, type Kelvin, type Meters, type PerVolt, type Ratio, type SqrtVolts, type Volts, type VoltsPerMeter } from "../../quantity.js";
import { reversible, type DeviceModel, type ModelParameter } from "../model.js";
import { mobilityParameters } from "./mobility.js";

/** Critical field when an EKV card gives none: 2·10⁶ V/m, the EPFL-EKV 2.6 default UCRIT (from memory). */
export const defaultEkvCriticalField = 2e6 as VoltsPerMeter;

/**
 * Channel current for VDS ≥ 0 in device polarity (VGS, VDS, VSB source-referenced).
 * Where the forward current underflows (a source tens of volts above the pinch-off
 * voltage) the channel carries nothing and 0 is returned.
 */
export function ekvChannelCurrent(
  kp: number, w: number, l: number, vt0: number, gamma: number, phi: number, lambda: number, theta: number, ecrit: number, sigma: number, ut: number,
  vgs: number, vds: number, vsb: number,
): number {
  const u = ut as Volts;
  const g = gamma as SqrtVolts;
  const ph = phi as Volts;
  const e = ecrit as VoltsPerMeter;
  const len = l as Meters;
  const vp = ekvPinchOffVoltage.fn(ekvEffectiveGate.fn(vgs as Volts, vsb as Volts, vt0 as Volts, sigma as Ratio, vds as Volts, ph, g), ph, g);
  const ic = ekvForwardCurrent.fn(vp, vsb as Volts, u);
  if (ic === 0) return 0;
  const vdss = ekvSaturationVoltage.fn(u, ic, e, len);
  const vip = ekvLimitedDrainVoltage.fn(vdss, u, vds as Volts);
  const ir = ekvReverseCurrent.fn(vp, vsb as Volts, vds as Volts, vip, u);
  const beta = ekvGainFactor.fn(kp as AmperesPerVoltSquared, w as Meters, ekvEquivalentLength.fn(len, vds as Volts, vip, e), theta as PerVolt, vp);
  const is = ekvSpecificCurrent.fn(ekvSlopeFactor.fn(g, vp, ph, u), beta, u);
  return ekvDrainCurrent.fn(is, ic, ir, lambda as PerVolt, vds as Volts);
}

/** The forward normalised current IF/IS, the inversion coefficient, for VDS ≥ 0 in device polarity. */
export function ekvInversionCoefficient(vt0: number, gamma: number, phi: number, sigma: number, ut: number, vgs: number, vds: number, vsb: number): number {
  const ph = phi as Volts;
  const g = gamma as SqrtVolts;
  const vp = ekvPinchOffVoltage.fn(ekvEffectiveGate.fn(vgs as Volts, vsb as Volts, vt0 as Volts, sigma as Ratio, vds as Volts, ph, g), ph, g);
  return ekvForwardCurrent.fn(vp, vsb as Volts, ut as Volts);
}

export const ekvParameters: readonly ModelParameter[] = [
  ...mobilityParameters.filter((q) => q.name !== "ecrit"),
  { name: "ecrit", dim: "electricField", meaning: "critical field for velocity saturation (EKV UCRIT)", min: 1e5, max: 1e9, initial: 5e6, absent: defaultEkvCriticalField, geometryScaled: false },
  { name: "sigma", dim: "dimensionless", meaning: "drain-induced threshold lowering σ", min: 0, max: 0.3, initial: 0, absent: 0, geometryScaled: false },
];

const forward = (p: Float64Array, vgs: number, vds: number, vsb: number): number =>
  ekvChannelCurrent(p[1]!, p[8]!, p[9]!, p[0]!, p[2]!, p[3]!, p[4]!, p[5]!, p[6]!, p[7]!, thermalVoltage(p[10]! as Kelvin), vgs, vds, vsb);

export const ekv: DeviceModel = {
  id: "ekv",
  title: "EKV all-region model",
  source: "Enz, Krummenacher & Vittoz, Analog Integrated Circuits and Signal Processing 8(1), 83–114, 1995; EPFL-EKV 2.6, Bucher et al., EPFL technical report, 1999",
  parameters: ekvParameters,
  size: ekvParameters.length + 3,
  current: reversible(forward),
};
