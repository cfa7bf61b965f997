/**
 * A device card moved to another temperature: the threshold drifts linearly,
 * k' follows the mobility power law µ ∝ T^−m and a critical field for velocity
 * saturation (where the card has one) rises as µ falls (Esat ∝ vsat/µ, vsat
 * held). γ, 2φF and λ are held at their
 * reference values (a first-cut model; verify over temperature by simulation
 * and measurement).
 */
import { requirePositive } from "../errors.js";
import { criticalFieldAtTemperature, mobilityAtTemperature, thresholdAtTemperature } from "../formulas/device.formulas.js";
import type { Derivation } from "../record/derivation.js";
import type { Kelvin, Ratio, Volts, VoltsPerKelvin } from "../quantity.js";
import { checkCard, polaritySign, type DeviceCard, type TemperatureCoefficients } from "./card.js";

/**
 * Coefficients used when a card has none: −2 mV/K threshold drift, mobility
 * exponent 1.5, referred to 27 °C (from memory, common practice for bulk CMOS).
 */
export const defaultTemperatureCoefficients: TemperatureCoefficients = {
  t0: 300.15 as Kelvin,
  alphaVt: -2e-3 as VoltsPerKelvin,
  muExp: 1.5,
};

/** The temperature range over which the linear drift and power law are usually trusted: −55 °C to 150 °C (common practice). */
export const trustedTemperatureRange = { min: 218.15 as Kelvin, max: 423.15 as Kelvin } as const;

/**
 * The card at temperature `t`. The threshold drifts in the device's own polarity
 * (an enhancement device's |Vt| falls for alphaVt < 0). The returned card is
 * referred to `t`, with the same coefficients, so applying it twice does not double the drift.
 */
export function cardAtTemperature(card: DeviceCard, t: Kelvin, rec?: Derivation): DeviceCard {
  checkCard(card, "cardAtTemperature.card");
  requirePositive(t, "cardAtTemperature.t", "a device temperature > 0 K");
  const coeffs = card.temperature ?? defaultTemperatureCoefficients;
  if (!card.temperature)
    rec?.assume(
      `Card "${card.name}" has no temperature coefficients: using threshold drift −2 mV/K and mobility exponent 1.5 referred to 27 °C (from memory, common practice).`,
    );
  rec?.assume("γ, 2φF and λ are taken as independent of temperature.");
  const s = polaritySign(card);
  const vtDev = (s * card.vt0) as Volts;
  const vtAtT = thresholdAtTemperature.fn(vtDev, coeffs.alphaVt, t, coeffs.t0);
  const muExp = coeffs.muExp as Ratio;
  const kp = mobilityAtTemperature.fn(card.kp, t, coeffs.t0, muExp);
  const ecrit = card.ecrit === undefined ? undefined : criticalFieldAtTemperature.fn(card.ecrit, t, coeffs.t0, muExp);
  if (rec) {
    rec.step(thresholdAtTemperature, [vtDev, coeffs.alphaVt, t, coeffs.t0], vtAtT, s < 0 ? "PMOS: threshold magnitude |Vt0|" : undefined);
    rec.step(mobilityAtTemperature, [card.kp, t, coeffs.t0, muExp], kp);
    if (ecrit !== undefined) rec.step(criticalFieldAtTemperature, [card.ecrit!, t, coeffs.t0, muExp], ecrit, "the saturation velocity held");
    rec.check("Temperature within the range the drift model is trusted", t, "temperature", trustedTemperatureRange, "−55 °C to 150 °C, common practice");
    if (t < trustedTemperatureRange.min || t > trustedTemperatureRange.max)
      rec.find("caution", `Temperature ${+(t - 273.15).toFixed(1)} °C is outside −55 °C to 150 °C: the linear threshold drift and mobility power law are extrapolated there.`);
    if (vtDev > 0 && vtAtT <= 0)
      rec.find("warning", `At ${+(t - 273.15).toFixed(1)} °C the threshold magnitude has drifted to ${+vtAtT.toPrecision(3)} V ≤ 0: the enhancement device would conduct at zero gate drive.`);
  }
  return { ...card, vt0: (s * vtAtT) as Volts, kp, ...(ecrit === undefined ? {} : { ecrit }), temperature: { ...coeffs, t0: t } };
}
