/**
 * IEC 60063 preferred-number series (E3 … E192) for resistors and capacitors.
 *
 * The base values per decade are tabulated exactly as IEC 60063 lists them
 * (tables written from memory of IEC 60063:2015 and cross-checked in the tests:
 * E48/E96/E192 against round(10^(i/N)) to three significant figures, whose only
 * departure is 9.20 in E192 where the rounding gives 9.19). E3–E24 are NOT the
 * rounded geometric sequence: the standard keeps the older values 2.7, 3.0, 3.3,
 * 3.6, 3.9, 4.3, 4.7 and 8.2 (rounding would give 2.6, 2.9, 3.2, 3.5, 3.8, 4.2,
 * 4.6 and 8.3).
 *
 * Values are stored as integers (tenths or hundredths of the mantissa), so a
 * standard value is built as integer × 10^p and prints exactly (4.7 kΩ is 4700,
 * never 4700.000000000001).
 */
import { InputError } from "../errors.js";

export const seriesNames = ["E3", "E6", "E12", "E24", "E48", "E96", "E192"] as const;
export type SeriesName = (typeof seriesNames)[number];

export interface ESeries {
  readonly name: SeriesName;
  /** Values per decade. */
  readonly count: number;
  /** Significant figures of the tabulated values (2 for E3–E24, 3 for E48–E192). */
  readonly digits: 2 | 3;
  /** Base values as integers: mantissa × 10^(digits − 1), e.g. 47 for 4.7, 487 for 4.87. */
  readonly table: readonly number[];
  /** Tolerances IEC 60063 associates with the series, widest first, as fractions. */
  readonly tolerances: readonly number[];
  /** The widest associated tolerance, the one assumed when the engineer states none. */
  readonly tolerance: number;
}

const e3 = [10, 22, 47];
const e6 = [10, 15, 22, 33, 47, 68];
const e12 = [10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82];
const e24 = [10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91];
const e192 = [
  100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114, 115, 117, 118, 120, 121, 123, 124, 126, 127, 129, 130, 132,
  133, 135, 137, 138, 140, 142, 143, 145, 147, 149, 150, 152, 154, 156, 158, 160, 162, 164, 165, 167, 169, 172, 174, 176,
  178, 180, 182, 184, 187, 189, 191, 193, 196, 198, 200, 203, 205, 208, 210, 213, 215, 218, 221, 223, 226, 229, 232, 234,
  237, 240, 243, 246, 249, 252, 255, 258, 261, 264, 267, 271, 274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309, 312,
  316, 320, 324, 328, 332, 336, 340, 344, 348, 352, 357, 361, 365, 370, 374, 379, 383, 388, 392, 397, 402, 407, 412, 417,
  422, 427, 432, 437, 442, 448, 453, 459, 464, 470, 475, 481, 487, 493, 499, 505, 511, 517, 523, 530, 536, 542, 549, 556,
  562, 569, 576, 583, 590, 597, 604, 612, 619, 626, 634, 642, 649, 657, 665, 673, 681, 690, 698, 706, 715, 723, 732, 741,
  750, 759, 768, 777, 787, 796, 806, 816, 825, 835, 845, 856, 866, 876, 887, 898, 909, 920, 931, 942, 953, 965, 976, 988,
];
// IEC 60063: E96 is every second E192 value and E48 every fourth.
const e96 = e192.filter((_, i) => i % 2 === 0);
const e48 = e192.filter((_, i) => i % 4 === 0);

const make = (name: SeriesName, table: number[], tolerances: number[]): ESeries =>
  Object.freeze({
    name,
    count: table.length,
    digits: table[0]! >= 100 ? 3 : 2,
    table: Object.freeze(table),
    tolerances: Object.freeze(tolerances),
    tolerance: tolerances[0]!,
  }) as ESeries;

/** The series with the tolerances IEC 60063 pairs them with (E3: wider than 20 %, quoted here as 40 %, from memory). */
export const eSeries: Readonly<Record<SeriesName, ESeries>> = Object.freeze({
  E3: make("E3", e3, [0.4]),
  E6: make("E6", e6, [0.2]),
  E12: make("E12", e12, [0.1]),
  E24: make("E24", e24, [0.05, 0.02, 0.01]),
  E48: make("E48", e48, [0.02]),
  E96: make("E96", e96, [0.01]),
  E192: make("E192", e192, [0.005, 0.0025, 0.001]),
});

/** Accepted values, 1 µ to 1 P in SI units (fF capacitors to TΩ resistors); beyond that a number is almost surely a unit slip. */
export const saneRange = { min: 1e-6, max: 1e15 } as const;

/** Look up a series by name, with a typed error naming the choices. */
export function seriesOf(name: SeriesName | ESeries, origin = "series"): ESeries {
  if (typeof name === "object" && name !== null && seriesNames.includes(name.name)) return name;
  const s = eSeries[name as SeriesName];
  if (!s) throw new InputError(name, `one of ${seriesNames.join(", ")}`, origin);
  return s;
}

function requireInRange(value: number, origin: string): void {
  if (typeof value !== "number" || !Number.isFinite(value) || value < saneRange.min || value > saneRange.max)
    throw new InputError(value, `a finite value between ${saneRange.min} and ${saneRange.max} (SI units)`, origin);
}

/** The standard value at table index i of decade exponent e: table[i] × 10^(e − digits + 1), built exactly. */
function valueAt(s: ESeries, decade: number, i: number): number {
  // Normalise i into the table, carrying into the neighbouring decades.
  const d = decade + Math.floor(i / s.count);
  const j = ((i % s.count) + s.count) % s.count;
  const p = d - (s.digits - 1);
  const n = s.table[j]!;
  return p >= 0 ? n * 10 ** p : n / 10 ** -p;
}

/** Decade exponent e and the position of value within it, robust to floating error at decade edges. */
function locate(s: ESeries, value: number): { decade: number; below: number } {
  let decade = Math.floor(Math.log10(value));
  if (valueAt(s, decade, 0) > value) decade -= 1;
  else if (valueAt(s, decade + 1, 0) <= value) decade += 1;
  // Largest index whose value is ≤ value.
  let below = 0;
  for (let i = 1; i < s.count; i++) if (valueAt(s, decade, i) <= value) below = i;
  return { decade, below };
}

/** All standard values of one decade, e.g. standardValues("E12", 3) → 1000 … 8200. */
export function standardValues(series: SeriesName | ESeries, decade: number): number[] {
  const s = seriesOf(series);
  if (!Number.isInteger(decade) || decade < Math.log10(saneRange.min) || decade > Math.log10(saneRange.max))
    throw new InputError(decade, `an integer decade exponent between ${Math.log10(saneRange.min)} and ${Math.log10(saneRange.max)}`, "decade");
  return s.table.map((_, i) => valueAt(s, decade, i));
}

export interface Neighbours {
  /** Largest standard value ≤ the value. */
  readonly below: number;
  /** Smallest standard value ≥ the value (equal to below when the value is standard). */
  readonly above: number;
}

/** The standard values either side of a value. */
export function neighbours(value: number, series: SeriesName | ESeries, origin = "value"): Neighbours {
  const s = seriesOf(series);
  requireInRange(value, origin);
  const { decade, below } = locate(s, value);
  const lo = valueAt(s, decade, below);
  if (sameValue(lo, value)) return { below: lo, above: lo };
  return { below: lo, above: valueAt(s, decade, below + 1) };
}

/** Distance in decades between two positive values (the distance that matters for a geometric series). */
export const logDistance = (a: number, b: number): number => Math.abs(Math.log10(a / b));

/** The standard value nearest in log distance (ties go to the lower value). */
export function nearestStandard(value: number, series: SeriesName | ESeries, origin = "value"): number {
  const { below, above } = neighbours(value, series, origin);
  return logDistance(value, below) <= logDistance(value, above) ? below : above;
}

/**
 * The n standard values nearest to a value in log distance, in increasing order:
 * the candidates a combination search tries for one component.
 */
/** Most standard values tried per component: a set search tries candidates^components combinations (8⁴ = 4096 for four). */
export const maxCandidates = 8;

export function standardValuesAround(value: number, series: SeriesName | ESeries, n = 2, origin = "value"): number[] {
  const s = seriesOf(series);
  requireInRange(value, origin);
  if (!Number.isInteger(n) || n < 1 || n > maxCandidates)
    throw new InputError(n, `an integer count of candidates from 1 to ${maxCandidates} (the combinations tried grow as candidates^components)`, `${origin} candidates`);
  const { decade, below } = locate(s, value);
  const pool: number[] = [];
  for (let i = below - n; i <= below + n; i++) pool.push(valueAt(s, decade, i));
  return pool
    .sort((a, b) => logDistance(value, a) - logDistance(value, b) || a - b)
    .slice(0, n)
    .sort((a, b) => a - b);
}

/** True when the value is a member of the series (within 1e-9 relative). */
export function isStandard(value: number, series: SeriesName | ESeries, origin = "value"): boolean {
  const { below } = neighbours(value, series, origin);
  return sameValue(below, value);
}

/** Values within 1e-9 relative of a standard value are that value (decimal input such as 4.7e3 lands within a few ulp). */
const sameValue = (a: number, b: number): boolean => Math.abs(a - b) <= 1e-9 * Math.abs(b);

/** The series' associated tolerance (or a stated one), validated. */
export function toleranceOf(series: SeriesName | ESeries, stated?: number, origin = "tolerance"): number {
  const s = seriesOf(series);
  if (stated === undefined) return s.tolerance;
  if (typeof stated !== "number" || !Number.isFinite(stated) || stated < 0 || stated >= 1)
    throw new InputError(stated, "a tolerance as a fraction, 0 ≤ t < 1 (0.01 for 1 %)", origin);
  return stated;
}
