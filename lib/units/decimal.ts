/**
 * Decimal numbers as engineers type them, split into digits and a power of
 * ten, so a prefix can be applied by shifting the exponent: "200" with µ is
 * read as the text "200e-6", which gives the double nearest 2e-4 exactly
 * (200 × 1e-6 in floating point would give 1.9999999999999998e-4).
 */

/** A decimal number: optional sign, digits with an optional point, optional exponent. */
export const decimalPattern = /^([+-]?(?:\d+(?:\.\d*)?|\.\d+))(?:[eE]([+-]?\d+))?/;

export interface Decimal {
  /** Sign and digits with the decimal point, e.g. "-4.7". */
  readonly mantissa: string;
  /** Power of ten written after e/E, 0 when absent. */
  readonly exponent: number;
  /** How many characters of the input the number took. */
  readonly length: number;
}

/** Read a decimal number at the start of `text`; undefined when there is none. */
export function readDecimal(text: string): Decimal | undefined {
  const m = decimalPattern.exec(text);
  if (!m) return undefined;
  return { mantissa: m[1]!, exponent: m[2] === undefined ? 0 : Number(m[2]), length: m[0].length };
}

/** The value of mantissa × 10^(exponent + shift), rounded once from the decimal text. */
export function scaleDecimal(d: Decimal, shift: number): number {
  return Number(`${d.mantissa}e${d.exponent + shift}`);
}

/** If `factor` is a power of ten (to 1 part in 1e12), its exponent; otherwise undefined. */
export function powerOfTen(factor: number): number | undefined {
  if (!(factor > 0) || !Number.isFinite(factor)) return undefined;
  const k = Math.round(Math.log10(factor));
  return Math.abs(factor / 10 ** k - 1) < 1e-12 ? k : undefined;
}

/** mantissa × 10^exponent × factor, exact-decimal when the factor is a power of ten. */
export function applyFactor(d: Decimal, factor: number): number {
  const k = powerOfTen(factor);
  return k === undefined ? scaleDecimal(d, 0) * factor : scaleDecimal(d, k);
}
