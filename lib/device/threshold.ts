/**
 * Threshold voltage with the body effect, Vt(VSB).
 * Works on magnitudes in the device's own polarity (see card.polaritySign).
 */
import { bodyEffectThreshold } from "../formulas/device.formulas.js";
import type { Derivation } from "../record/derivation.js";
import type { SqrtVolts, Volts } from "../quantity.js";

/**
 * |Vt| for a source-body voltage vsb (device polarity, ≥ 0 is reverse body bias).
 * For forward body bias (vsb < 0) it uses the linearisation of SPICE Level 1,
 * √(2φF + VSB) ≈ √(2φF) + VSB/(2√(2φF)), floored at zero, so it agrees with simulators there.
 */
export function thresholdMagnitude(vt0: Volts, gamma: SqrtVolts, phi: Volts, vsb: Volts, rec?: Derivation): Volts {
  if (gamma === 0 || vsb === 0) return vt0;
  if (vsb > 0) {
    const vt = bodyEffectThreshold.fn(vt0, gamma, phi, vsb);
    rec?.step(bodyEffectThreshold, [vt0, gamma, phi, vsb], vt, "source above body: body effect raises |Vt|");
    return vt;
  }
  const sq = Math.sqrt(phi);
  const sarg = Math.max(0, sq + vsb / (2 * sq));
  const vt = (vt0 + gamma * (sarg - sq)) as Volts;
  rec?.note(
    "Threshold under forward body bias",
    `VSB = ${vsb} V < 0: √(2φF + VSB) replaced by its linearisation √(2φF) + VSB/(2√(2φF)) as in SPICE Level 1, giving |Vt| = ${vt} V.`,
  );
  return vt;
}
