/**
 * The square law as SPICE Level 1 states it (Shichman & Hodges 1968): threshold
 * with body effect, triode and saturation currents, channel-length modulation
 * either continuous (both regions, as SPICE) or in saturation only (the textbook
 * form). Equations: lib/formulas/device.catalog.ts. Exact, closed form, no allocation.
 */
import { deviceGain, saturationCurrentClm, triodeCurrent, triodeCurrentClm } from "../../formulas/device.formulas.js";
import type { AmperesPerVoltSquared, Meters, PerVolt, SqrtVolts, Volts } from "../../quantity.js";
import { defaultPhi } from "../card.js";
import { reversible, type DeviceModel, type ModelParameter } from "../model.js";
import { thresholdMagnitude } from "../threshold.js";

/**
 * How channel-length modulation enters: "continuous" multiplies both triode and
 * saturation currents by (1 + λ·VDS), as SPICE Level 1 does, so ID is continuous
 * at VDS = VOV; "saturation-only" applies it in saturation only (the textbook form).
 */
export type ClmMode = "continuous" | "saturation-only";

/** Square-law channel current for VDS ≥ 0 in device polarity, from the catalog's triode and saturation formulas. */
export function channelCurrent(k: number, vov: number, vds: number, lambda: number, clm: ClmMode): number {
  if (vov <= 0) return 0;
  const kk = k as AmperesPerVoltSquared;
  const v = vov as Volts;
  const d = vds as Volts;
  if (d < v) return clm === "continuous" ? triodeCurrentClm.fn(kk, v, d, lambda as PerVolt) : triodeCurrent.fn(kk, v, d);
  return saturationCurrentClm.fn(kk, v, lambda as PerVolt, d);
}

/** Parameters shared by every model that starts from the square law's threshold and current factor. */
export const thresholdParameters: readonly ModelParameter[] = [
  { name: "vt0", dim: "voltage", meaning: "zero-bias threshold |Vt0| (device polarity)", min: -1, max: 3, initial: 0.7, absent: NaN, geometryScaled: false },
  { name: "kp", dim: "transconductanceParameter", meaning: "process transconductance µ·Cox", min: 1e-7, max: 1e-2, initial: 1e-4, absent: NaN, geometryScaled: true },
  { name: "gamma", dim: "sqrtVoltage", meaning: "body-effect coefficient γ", min: 0, max: 3, initial: 0.5, absent: 0, geometryScaled: false },
  { name: "phi", dim: "voltage", meaning: "surface potential 2φF", min: 0.3, max: 1.5, initial: 0.7, absent: defaultPhi, geometryScaled: false },
  { name: "lambda", dim: "inverseVoltage", meaning: "channel-length modulation λ", min: 0, max: 1, initial: 0.02, absent: 0, geometryScaled: false },
];

const forward = (p: Float64Array, vgs: number, vds: number, vsb: number): number => {
  const vt = thresholdMagnitude(p[0]! as Volts, p[2]! as SqrtVolts, p[3]! as Volts, vsb as Volts);
  const k = deviceGain.fn(p[1]! as AmperesPerVoltSquared, p[5]! as Meters, p[6]! as Meters);
  return channelCurrent(k, vgs - vt, vds, p[4]!, "continuous");
};

export const squareLaw: DeviceModel = {
  id: "square-law",
  title: "Square law (SPICE Level 1)",
  source: "Shichman & Hodges, IEEE JSSC SC-3(3), 1968; SPICE Level 1 as implemented in ngspice",
  parameters: thresholdParameters,
  size: thresholdParameters.length + 3,
  current: reversible(forward),
};
