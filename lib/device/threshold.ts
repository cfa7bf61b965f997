/**
 * Threshold voltage with the body effect, Vt(VSB).
 * Works on magnitudes in the device's own polarity (see card.polaritySign).
 */
import { bodyEffectThreshold, bodyEffectThresholdForward } from "../formulas/device.formulas.js";
import type { Derivation } from "../record/derivation.js";
import type { SqrtVolts, Volts } from "../quantity.js";

/**
 * Forward body bias (vsb < 0) is taken no further than VSB = −2·PHI (PHI = 2φF):
 * there the linearised root √PHI + VSB/(2√PHI) reaches zero, and SPICE Level 1 floors it.
 */
export const forwardBiasLimit = (phi: Volts): Volts => (-2 * phi) as Volts;

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
  const floor = forwardBiasLimit(phi);
  const v = (vsb < floor ? floor : vsb) as Volts;
  const vt = bodyEffectThresholdForward.fn(vt0, gamma, v, phi);
  rec?.step(
    bodyEffectThresholdForward,
    [vt0, gamma, v, phi],
    vt,
    vsb < floor
      ? `forward body bias VSB = ${vsb} V beyond −2·PHI: the linearised root is floored at zero as in SPICE Level 1`
      : "forward body bias: √(2φF + VSB) linearised as in SPICE Level 1",
  );
  return vt;
}
