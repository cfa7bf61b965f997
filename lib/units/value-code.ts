/**
 * The IEC 60062 letter and digit code for resistance and capacitance values,
 * where a letter stands in for the decimal point and gives the multiplier:
 * "4k7" = 4.7 kΩ, "2R2" = 2.2 Ω, "R47" = 0.47 Ω, "1M5" = 1.5 MΩ, "4n7" = 4.7 nF.
 * Codes are read as part values on schematics and parts lists are written.
 *
 * Letters (IEC 60062:2016, as summarised in secondary references; the
 * standard's own text was not consulted):
 *   resistance  L = 1e-3, R = 1, K = 1e3, M = 1e6, G = 1e9, T = 1e12 (ohm)
 *   capacitance p = 1e-12, n = 1e-9, µ = 1e-6, m = 1e-3, F = 1 (farad)
 * The standard writes the resistance letters in upper case; lower-case "k" and
 * "r" ("4k7", "2r2") and "u" for µ are accepted as common practice. Case
 * matters for M (mega-ohm) against m (milli-farad).
 */
import { scaleDecimal } from "./decimal.js";

export type ValueCodeDimension = "resistance" | "capacitance";

interface CodeLetter {
  readonly shift: number;
  readonly dim: ValueCodeDimension;
}

export const valueCodeLetters: Readonly<Record<string, CodeLetter>> = {
  L: { shift: -3, dim: "resistance" },
  R: { shift: 0, dim: "resistance" },
  r: { shift: 0, dim: "resistance" },
  K: { shift: 3, dim: "resistance" },
  k: { shift: 3, dim: "resistance" },
  M: { shift: 6, dim: "resistance" },
  G: { shift: 9, dim: "resistance" },
  T: { shift: 12, dim: "resistance" },
  p: { shift: -12, dim: "capacitance" },
  n: { shift: -9, dim: "capacitance" },
  "\u00b5": { shift: -6, dim: "capacitance" }, // micro sign
  "\u03bc": { shift: -6, dim: "capacitance" }, // Greek small mu
  u: { shift: -6, dim: "capacitance" },
  m: { shift: -3, dim: "capacitance" },
  F: { shift: 0, dim: "capacitance" },
};

export interface ValueCode {
  /** SI value: ohms or farads. */
  readonly value: number;
  readonly dim: ValueCodeDimension;
  readonly letter: string;
}

const codePattern = /^(\d*)([LRrKkMGTpn\u00b5\u03bcumF])(\d*)$/;

/**
 * Letters that SPICE also reads as scale factors, with a different meaning
 * when nothing follows them: SPICE reads "4M" as 4 milli and "4F" as 4 femto.
 * A code ending in one of these letters ("47K", "4M") is left to the SPICE
 * reader; only R and L, which SPICE does not know, may end a code.
 */
const endingLetters = new Set(["R", "r", "L"]);

/**
 * Read an IEC 60062 value code; undefined when the text is not one. A code
 * with digits after its letter ("4k7", "R47", "1M5") or ending in R or L
 * ("470R") is a code; "47k" is left to the SPICE reader (it means the same).
 */
export function readValueCode(text: string): ValueCode | undefined {
  const m = codePattern.exec(text.trim());
  if (!m) return undefined;
  const [, whole, letter, fraction] = m as unknown as [string, string, string, string];
  if (whole === "" && fraction === "") return undefined;
  if (fraction === "" && !endingLetters.has(letter)) return undefined;
  const code = valueCodeLetters[letter]!;
  const value = scaleDecimal({ mantissa: `${whole || "0"}.${fraction || "0"}`, exponent: 0, length: 0 }, code.shift);
  return { value, dim: code.dim, letter };
}
