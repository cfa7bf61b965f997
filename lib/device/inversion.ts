/**
 * Where the square law stops holding: the EKV inversion coefficient
 * IC = IF / (2·n·k·UT²), the forward current over the specific current.
 * Square-law results are trustworthy in strong inversion only.
 */
import { InputError, requirePositive } from "../errors.js";
import { inversionCoefficient, weakInversionEfficiency } from "../formulas/device.formulas.js";
import type { Derivation } from "../record/derivation.js";
import { thermalVoltage, type Amperes, type AmperesPerVoltSquared, type Kelvin, type Ratio, type SiemensPerAmpere, type Volts } from "../quantity.js";

export const inversionLevels = ["weak", "moderate", "strong"] as const;
export type InversionLevel = (typeof inversionLevels)[number];

/** Subthreshold slope factor n when none is given: from memory, typical bulk CMOS 1.2 to 1.5. */
export const defaultSlopeFactor = 1.3 as Ratio;
/** Device temperature when none is given: 27 °C, the SPICE nominal temperature (TNOM). */
export const defaultTemperature = 300.15 as Kelvin;

/** Boundaries of moderate inversion, 0.1 ≤ IC ≤ 10, as used by Enz & Vittoz. */
export const weakInversionBelow = 0.1;
export const strongInversionAbove = 10;

export interface InversionOptions {
  /** Subthreshold slope factor n (> 1); 1.3 when omitted. */
  readonly slopeFactor?: number;
  /** Device temperature, for UT = kT/q; 300.15 K when omitted. */
  readonly temperature?: Kelvin;
}

export interface Inversion {
  readonly ic: Ratio;
  readonly level: InversionLevel;
  readonly slopeFactor: Ratio;
  readonly ut: Volts;
}

export function inversionLevelOf(ic: number): InversionLevel {
  return ic < weakInversionBelow ? "weak" : ic > strongInversionAbove ? "strong" : "moderate";
}

/**
 * Inversion coefficient and level for a forward current `forward` (saturation-equivalent
 * channel current magnitude) in a device of gain factor k. With `rec`, records the step
 * and, outside strong inversion, a finding that says how far the square law can be trusted.
 */
export function inversion(forward: Amperes, k: AmperesPerVoltSquared, opts: InversionOptions = {}, rec?: Derivation): Inversion {
  if (typeof forward !== "number" || !Number.isFinite(forward) || forward < 0)
    throw new InputError(forward, "a forward current magnitude ≥ 0 in A", "inversion.forward");
  requirePositive(k, "inversion.k", "a device transconductance parameter k > 0 in A/V²");
  const n = (opts.slopeFactor ?? defaultSlopeFactor) as Ratio;
  if (typeof n !== "number" || !Number.isFinite(n) || n < 1)
    throw new InputError(n, "a slope factor n ≥ 1 (typically 1.2 to 1.5)", "options.slopeFactor");
  const t = requirePositive(opts.temperature ?? defaultTemperature, "options.temperature", "a temperature > 0 K");
  const ut = thermalVoltage(t);
  const ic = inversionCoefficient.fn(forward, n, k, ut);
  const level = inversionLevelOf(ic);
  if (rec) {
    if (opts.slopeFactor === undefined) rec.assume(`Slope factor n = ${defaultSlopeFactor} (from memory; typical bulk CMOS 1.2 to 1.5).`);
    if (opts.temperature === undefined) rec.assume("Inversion level evaluated at 27 °C (SPICE nominal temperature).");
    rec.step(inversionCoefficient, [forward, n, k, ut], ic, `inversion level: ${level}`);
    recordInversionFinding({ ic, level, slopeFactor: n, ut }, rec);
  }
  return { ic, level, slopeFactor: n, ut };
}

/** The reader's finding outside strong inversion (one wording for records and analysis findings); none in strong inversion. */
export function inversionFinding(inv: Inversion): { readonly severity: "warning" | "caution"; readonly text: string } | undefined {
  const p = (x: number) => `${+x.toPrecision(3)}`;
  if (inv.level === "strong") return undefined;
  const limit = weakInversionEfficiency.fn(inv.slopeFactor, inv.ut);
  if (inv.level === "weak")
    return {
      severity: "warning",
      text: `Weak inversion (IC = ${p(inv.ic)} < ${weakInversionBelow}): the square law does not hold here. The current is exponential in VGS and gm/ID approaches 1/(n·UT) = ${p(limit)} S/A; square-law currents and gm are not usable. Use a weak-inversion (EKV or subthreshold) model and verify by simulation and measurement.`,
    };
  return {
    severity: "caution",
    text: `Moderate inversion (IC = ${p(inv.ic)}, between ${weakInversionBelow} and ${strongInversionAbove}): the square law overestimates gm (gm/ID cannot exceed ${p(limit)} S/A) and its current error grows as IC falls. Treat these numbers as rough and verify by simulation.`,
  };
}

function recordInversionFinding(inv: Inversion, rec: Derivation): void {
  const f = inversionFinding(inv);
  if (!f) return;
  const limit: SiemensPerAmpere = weakInversionEfficiency.fn(inv.slopeFactor, inv.ut);
  rec.step(weakInversionEfficiency, [inv.slopeFactor, inv.ut], limit, "ceiling on gm/ID, reached in weak inversion");
  rec.find(f.severity, f.text);
}
