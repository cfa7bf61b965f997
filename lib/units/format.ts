/**
 * Display of SI numbers: `2.20 mA`, `4.70 kΩ`, `12.0 µA/V²`, `0.0200 V⁻¹`.
 * Values arrive as plain SI numbers (the numeric path never sees prefixes);
 * this module is the only place that picks a prefix and a digit count. It is
 * light on purpose (no mathjs, no KaTeX): the CLI, the renderers and the plots
 * all load it.
 */
import { InputError } from "../errors.js";
import type { Dimension } from "../quantity.js";

export interface FormatOptions {
  /** Significant digits; 3 unless told. */
  readonly digits?: number;
  /** Temperatures: append the Celsius value, `300 K (26.9 °C)`. */
  readonly celsius?: boolean;
  /** Where the value came from, named in the error if it cannot be shown. */
  readonly origin?: string;
}

/**
 * How a dimension is written on the page. `scale` converts the SI value into
 * the written unit (e.g. F/m² → fF/µm² is 1e3); `prefix` says whether an SI
 * prefix goes in front of `text` (on the numerator for compound units).
 */
interface DisplayUnit {
  readonly text: string;
  readonly tex: string;
  readonly prefix: boolean;
  readonly scale?: number;
}

const displayUnits: Record<Dimension, DisplayUnit> = {
  voltage: { text: "V", tex: "\\mathrm{V}", prefix: true },
  current: { text: "A", tex: "\\mathrm{A}", prefix: true },
  resistance: { text: "Ω", tex: "\\Omega", prefix: true },
  conductance: { text: "S", tex: "\\mathrm{S}", prefix: true },
  // µA/V² reads naturally: the prefix belongs to the ampere.
  transconductanceParameter: { text: "A/V²", tex: "\\mathrm{A/V^{2}}", prefix: true },
  inverseVoltage: { text: "V⁻¹", tex: "\\mathrm{V^{-1}}", prefix: false },
  sqrtVoltage: { text: "√V", tex: "\\sqrt{\\mathrm{V}}", prefix: false },
  voltagePerKelvin: { text: "V/K", tex: "\\mathrm{V/K}", prefix: true },
  length: { text: "m", tex: "\\mathrm{m}", prefix: true },
  // Gate areas, slew rates and Pelgrom coefficients in the units the trade quotes them (common practice).
  area: { text: "µm²", tex: "\\mathrm{\\mu m^{2}}", prefix: false, scale: 1e12 },
  slewRate: { text: "V/µs", tex: "\\mathrm{V/\\mu s}", prefix: false, scale: 1e-6 },
  voltageLength: { text: "mV·µm", tex: "\\mathrm{mV\\,\\mu m}", prefix: false, scale: 1e9 },
  temperature: { text: "K", tex: "\\mathrm{K}", prefix: false },
  power: { text: "W", tex: "\\mathrm{W}", prefix: true },
  // Datasheets quote RθJA in °C/W; a kelvin step equals a degree Celsius step.
  thermalResistance: { text: "K/W", tex: "\\mathrm{K/W}", prefix: false },
  capacitance: { text: "F", tex: "\\mathrm{F}", prefix: true },
  // Oxide capacitance is quoted per square micrometre in the trade (common practice).
  capacitancePerArea: { text: "fF/µm²", tex: "\\mathrm{fF/\\mu m^{2}}", prefix: false, scale: 1e3 },
  // Mobility is quoted in cm²/(V·s) (common practice).
  mobility: { text: "cm²/(V·s)", tex: "\\mathrm{cm^{2}/(V\\,s)}", prefix: false, scale: 1e4 },
  time: { text: "s", tex: "\\mathrm{s}", prefix: true },
  inverseVoltageEfficiency: { text: "S/A", tex: "\\mathrm{S/A}", prefix: false },
  // Current density and gate capacitance per width are quoted per micrometre of width (common practice).
  currentPerWidth: { text: "A/µm", tex: "\\mathrm{A/\\mu m}", prefix: true, scale: 1e-6 },
  capacitancePerWidth: { text: "F/µm", tex: "\\mathrm{F/\\mu m}", prefix: true, scale: 1e-6 },
  frequency: { text: "Hz", tex: "\\mathrm{Hz}", prefix: true },
  dimensionless: { text: "", tex: "", prefix: false },
  count: { text: "", tex: "", prefix: false },
  fraction: { text: "%", tex: "\\%", prefix: false, scale: 100 },
};

/** SI prefixes by power of ten (SI Brochure, 9th edition, table 7). */
const prefixes: ReadonlyArray<readonly [number, string, string]> = [
  [-18, "a", "\\mathrm{a}"],
  [-15, "f", "\\mathrm{f}"],
  [-12, "p", "\\mathrm{p}"],
  [-9, "n", "\\mathrm{n}"],
  [-6, "µ", "\\mu"],
  [-3, "m", "\\mathrm{m}"],
  [0, "", ""],
  [3, "k", "\\mathrm{k}"],
  [6, "M", "\\mathrm{M}"],
  [9, "G", "\\mathrm{G}"],
  [12, "T", "\\mathrm{T}"],
];
const minPrefix = prefixes[0]![0];
const maxPrefix = prefixes[prefixes.length - 1]![0];

/** A value split into what is written: mantissa digits, optional power of ten, unit. */
interface Parts {
  readonly sign: string;
  /** Digits without sign, e.g. "2.20" or "∞". */
  readonly digits: string;
  /** Power of ten still to print (×10ⁿ), 0 when none. */
  readonly exponent: number;
  readonly unitText: string;
  readonly unitTex: string;
}

function checkDigits(digits: number, origin?: string): number {
  if (!Number.isInteger(digits) || digits < 1 || digits > 17)
    throw new InputError(digits, "a whole number of significant digits from 1 to 17", origin ?? "format digits");
  return digits;
}

/** Mantissa and exponent with `digits` significant digits, never `0.0021999999`. */
function significant(abs: number, digits: number): { digits: string; exponent: number } {
  if (abs === 0) return { digits: (0).toFixed(digits - 1), exponent: 0 };
  const [m, e] = abs.toExponential(digits - 1).split("e") as [string, string];
  return { digits: m, exponent: Number(e) };
}

/** Write mantissa·10^e as plain decimal digits (e small) keeping the significant digits. */
function plainDigits(mantissa: string, e: number): string {
  const [int, frac = ""] = mantissa.split(".") as [string, string?];
  const all = int + frac; // first digit is the leading one
  const point = 1 + e; // position of the decimal point in `all`
  if (point <= 0) return `0.${"0".repeat(-point)}${all}`;
  if (point >= all.length) return all + "0".repeat(point - all.length);
  return `${all.slice(0, point)}.${all.slice(point)}`;
}

function split(value: number, dim: Dimension, opts: FormatOptions): Parts {
  if (typeof value !== "number" || Number.isNaN(value))
    throw new InputError(value, `a number to display as ${dim}`, opts.origin ?? "format");
  const digits = checkDigits(opts.digits ?? 3, opts.origin);
  const unit = displayUnits[dim];
  if (!unit) throw new InputError(dim, "a dimension from lib/quantity.ts", opts.origin ?? "format");
  const sign = value < 0 ? "-" : "";
  // A whole count is shown whole: "23 cases", not "23.0".
  if (dim === "count" && Number.isSafeInteger(value)) return { sign, digits: String(Math.abs(value)), exponent: 0, unitText: "", unitTex: "" };
  const scaled = Math.abs(value) * (unit.scale ?? 1);
  if (scaled === Infinity) return { sign, digits: "∞", exponent: 0, unitText: unit.text, unitTex: unit.tex };
  const s = significant(scaled, digits);
  if (unit.prefix && scaled !== 0) {
    let p = Math.floor(s.exponent / 3) * 3;
    p = Math.min(maxPrefix, Math.max(minPrefix, p));
    const entry = prefixes.find(([q]) => q === p)!;
    const rest = s.exponent - p; // 0, 1 or 2 inside the prefix range
    if (rest >= 0 && rest <= 2)
      return { sign, digits: plainDigits(s.digits, rest), exponent: 0, unitText: entry[1] + unit.text, unitTex: entry[2] + unit.tex };
    return { sign, digits: s.digits, exponent: rest, unitText: entry[1] + unit.text, unitTex: entry[2] + unit.tex };
  }
  // No prefix: plain decimals across a readable range, powers of ten outside it.
  if (scaled === 0 || (s.exponent >= -3 && s.exponent < 6))
    return { sign, digits: plainDigits(s.digits, scaled === 0 ? 0 : s.exponent), exponent: 0, unitText: unit.text, unitTex: unit.tex };
  return { sign, digits: s.digits, exponent: s.exponent, unitText: unit.text, unitTex: unit.tex };
}

const superscript: Record<string, string> = { "-": "⁻", "0": "⁰", "1": "¹", "2": "²", "3": "³", "4": "⁴", "5": "⁵", "6": "⁶", "7": "⁷", "8": "⁸", "9": "⁹" };
const sup = (n: number) => [...String(n)].map((c) => superscript[c] ?? c).join("");

/** Just the number, with significant digits and no unit: `0.0200`, `150`, `2.00×10⁻⁵`. */
export function formatNumber(value: number, opts: FormatOptions = {}): string {
  return formatQuantity(value, "dimensionless", opts);
}

/** A value with its unit and an SI prefix where it reads naturally. */
export function formatQuantity(value: number, dim: Dimension, opts: FormatOptions = {}): string {
  const p = split(value, dim, opts);
  const num = p.sign + p.digits + (p.exponent ? `×10${sup(p.exponent)}` : "");
  let out = p.unitText ? `${num} ${p.unitText}` : num;
  if (dim === "temperature" && opts.celsius && Number.isFinite(value))
    out += ` (${formatCelsius(value, opts)})`;
  return out;
}

/** A temperature in kelvin written in degrees Celsius (exact 273.15 offset, SI Brochure). */
export function formatCelsius(kelvin: number, opts: FormatOptions = {}): string {
  const c = kelvin - 273.15;
  // Celsius keeps the same absolute resolution as the kelvin value, not the same digit count.
  const ref = significant(Math.abs(kelvin), checkDigits(opts.digits ?? 3, opts.origin)).exponent;
  const decimals = Math.max(0, (opts.digits ?? 3) - 1 - ref);
  const fixed = (Math.round(c * 10 ** decimals) / 10 ** decimals).toFixed(decimals);
  return `${fixed === `-${(0).toFixed(decimals)}` ? (0).toFixed(decimals) : fixed} °C`;
}

/** The same value as TeX, for typeset steps: `2.20\,\mathrm{mA}`. */
export function texQuantity(value: number, dim: Dimension, opts: FormatOptions = {}): string {
  const p = split(value, dim, opts);
  const digits = p.digits === "∞" ? "\\infty" : p.digits;
  const num = (p.sign ? "-" : "") + digits + (p.exponent ? `\\times10^{${p.exponent}}` : "");
  return p.unitTex ? `${num}\\,${p.unitTex}` : num;
}

/** The written unit of a dimension, without prefix: `Ω`, `A/V²`. */
export const unitText = (dim: Dimension): string => displayUnits[dim].text;
export const unitTex = (dim: Dimension): string => displayUnits[dim].tex;

/** A common scale for several values, e.g. an axis: divide SI values by `divisor` and label with `unit`. */
export interface Scale {
  readonly divisor: number;
  readonly unit: string;
  readonly tex: string;
}

/** Pick the prefix that suits the largest magnitude of a set (a plot axis, a table column). */
export function scaleFor(values: readonly number[], dim: Dimension): Scale {
  const unit = displayUnits[dim];
  const scale = unit.scale ?? 1;
  const finite = values.filter((v) => Number.isFinite(v)).map((v) => Math.abs(v) * scale);
  const top = finite.length ? Math.max(...finite) : 0;
  if (!unit.prefix || top === 0) return { divisor: 1 / scale, unit: unit.text, tex: unit.tex };
  let p = Math.floor(Math.log10(top) / 3) * 3;
  p = Math.min(maxPrefix, Math.max(minPrefix, p));
  const entry = prefixes.find(([q]) => q === p)!;
  return { divisor: 10 ** p / scale, unit: entry[1] + unit.text, tex: entry[2] + unit.tex };
}
