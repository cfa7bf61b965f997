/**
 * Numbers with SPICE scale factors, as written in a SPICE deck: "4.7k", "1meg",
 * "10u", "2.2n", "25mil". As in SPICE the factor is case-insensitive, so "m"
 * and "M" are both milli and mega is "meg" ("1M" is 1e-3, not 1e6). The
 * factors are those ngspice accepts (checked against ngspice 39 in the tests;
 * ngspice does not take "a" for atto).
 *
 * Unlike SPICE, letters after the factor are not silently dropped here: "10x"
 * is not a number. Text with a unit goes to the unit parser instead.
 */
import { applyFactor, readDecimal } from "./decimal.js";

/** Scale factor (lower case) → multiplier. */
export const spiceScaleFactors: Readonly<Record<string, number>> = {
  t: 1e12,
  g: 1e9,
  meg: 1e6,
  k: 1e3,
  mil: 25.4e-6,
  m: 1e-3,
  u: 1e-6,
  n: 1e-9,
  p: 1e-12,
  f: 1e-15,
};

/** Longest first, so "meg" and "mil" win over "m". */
const factorNames = Object.keys(spiceScaleFactors).sort((a, b) => b.length - a.length);

/** The multiplier of a SPICE scale factor written on its own ("k", "MEG", "Mil"); undefined otherwise. */
export function spiceFactor(suffix: string): number | undefined {
  return Object.prototype.hasOwnProperty.call(spiceScaleFactors, suffix.toLowerCase()) ? spiceScaleFactors[suffix.toLowerCase()] : undefined;
}

/** Split a leading SPICE factor off a unit ("KOHM" → 1e3 and "OHM"); undefined when none leads. */
export function splitSpiceFactor(text: string): { factor: number; rest: string } | undefined {
  const lower = text.toLowerCase();
  for (const name of factorNames) if (lower.startsWith(name)) return { factor: spiceScaleFactors[name]!, rest: text.slice(name.length) };
  return undefined;
}

/**
 * A bare number with an optional SPICE scale factor and nothing else
 * ("4.7k", "1MEG", "-2.5e-3", "10u"), as an SI value; undefined when the text
 * is anything else. Surrounding white space is ignored.
 */
export function readSpiceNumber(text: string): number | undefined {
  const t = text.trim();
  const d = readDecimal(t);
  if (!d) return undefined;
  const suffix = t.slice(d.length);
  if (suffix === "") return applyFactor(d, 1);
  const factor = spiceFactor(suffix);
  return factor === undefined ? undefined : applyFactor(d, factor);
}
