/**
 * Quantities from what engineers type: "4.7 kΩ", "20 µA", "200 uA/V^2",
 * "0.4 sqrt(V)", "27 degC", SPICE numbers ("4.7k", "1meg", "10u") and IEC 60062
 * value codes ("4k7", "2R2", "4n7"), into plain SI numbers with their brand.
 *
 * How text is read, in order:
 *  1. an IEC 60062 code (value-code.ts): the letter fixes resistance or capacitance;
 *  2. a bare number, with or without a SPICE scale factor (spice-number.ts): an
 *     SI value in the unit of the expected dimension (SPICE's own convention);
 *  3. a number followed by a unit: the unit is read by mathjs, loaded on the
 *     first such text only, with SI prefixes, so case matters ("1 MΩ" is mega,
 *     "1 mA" milli; SPICE itself would read "1MA" as 1 mA). When mathjs does not
 *     know the unit, a leading SPICE factor is tried ("1megohm", "10UA", "4.7Kohm").
 *
 * The numeric core never imports this module; nothing here loads mathjs until a
 * text with a unit is read (see `unitEngineLoaded`).
 */
import { createRequire } from "node:module";
import type { MathJsInstance, MathNode, Unit } from "mathjs";
import { InputError } from "../errors.js";
import { dimensionArticle as article, celsius, describeDimension, dimensions, type Dimension, type Quantity } from "../quantity.js";
import { applyFactor, readDecimal, scaleDecimal, type Decimal } from "./decimal.js";
import { readSpiceNumber, spiceFactor, splitSpiceFactor } from "./spice-number.js";
import { readValueCode } from "./value-code.js";

/** A parsed value with the dimension found from its unit; narrows on `dim`. */
export type AnyQuantity = { [D in Dimension]: { readonly value: Quantity<D>; readonly dim: D } }[Dimension];

const examples = `"4.7 kΩ", "20 uA", "200 uA/V^2", "0.02 /V", "27 degC", "4.7k" or "4k7"`;

// ---------------------------------------------------------------------------
// The unit engine, loaded on first use.

let engine: MathJsInstance | undefined;

/** True once mathjs has been loaded by a parse in this process. */
export function unitEngineLoaded(): boolean {
  return engine !== undefined;
}

function unitEngine(): MathJsInstance {
  // A synchronous, lazy load keeps parseQuantity synchronous for notebook cells.
  engine ??= createRequire(import.meta.url)("mathjs") as MathJsInstance;
  return engine;
}

/** What one unit text means, computed once per distinct text. */
interface UnitReading {
  /** SI value of 1 of this unit. */
  readonly factor: number;
  /** Dimensions whose SI unit has the same base, in table order. */
  readonly candidates: readonly Dimension[];
  /** Base unit names as written ("A", "V"), to choose between candidates with the same base. */
  readonly names: string;
  /** The SI base units, for messages when no dimension matches. */
  readonly siText: string;
  /** "celsius" for °C, "offset" for another lone offset unit (°F), undefined otherwise. */
  readonly offset?: "celsius" | "offset";
  /** The unit text mathjs read (after normalisation and any SPICE factor split). */
  readonly text: string;
}

const readings = new Map<string, UnitReading | string>();
const readingCacheSize = 512;
let references: { dim: Dimension; unit: Unit; names: string }[] | undefined;

function namesOf(u: Unit): string {
  return u.units
    .map((c) => c.unit.name)
    .sort()
    .join(" ");
}

function referenceUnits(math: MathJsInstance) {
  references ??= (Object.keys(dimensions) as Dimension[])
    .filter((d) => dimensions[d].unit !== "")
    .map((d) => {
      const unit = math.multiply(1, math.evaluate(dimensions[d].unit) as Unit) as Unit;
      return { dim: d, unit, names: namesOf(unit) };
    });
  return references;
}

const allowedOperators = new Set(["multiply", "divide", "pow", "unaryMinus"]);

/** Only unit names, products, quotients, powers and sqrt; numbers only in exponents. Returns a reason when not. */
function disallowed(math: MathJsInstance, node: MathNode, inExponent: boolean): string | undefined {
  const n = node as MathNode & { fn?: unknown; args?: MathNode[]; name?: string; content?: MathNode; value?: unknown };
  switch (n.type) {
    case "SymbolNode":
      return math.Unit.isValuelessUnit(n.name!) ? undefined : `"${n.name}" is not a unit`;
    case "ConstantNode":
      return inExponent && typeof n.value === "number" ? undefined : `a number inside the unit`;
    case "ParenthesisNode":
      return disallowed(math, n.content!, inExponent);
    case "OperatorNode": {
      const fn = n.fn as string;
      if (!allowedOperators.has(fn)) return `the operator "${(n as unknown as { op: string }).op}"`;
      if (fn === "unaryMinus" && !inExponent) return "a minus sign inside the unit";
      const args = n.args!;
      if (fn === "pow") return disallowed(math, args[0]!, inExponent) ?? disallowed(math, args[1]!, true);
      for (const a of args) {
        const why = disallowed(math, a, inExponent);
        if (why) return why;
      }
      return undefined;
    }
    case "FunctionNode": {
      const name = (n.fn as { name?: string } | undefined)?.name;
      if (name !== "sqrt" || n.args?.length !== 1) return `the function "${name ?? "?"}"`;
      return disallowed(math, n.args[0]!, inExponent);
    }
    default:
      return `"${node.toString()}"`;
  }
}

/** Read one unit text with mathjs; a string is the reason it cannot be read. */
function readUnitWithEngine(math: MathJsInstance, unitText: string): UnitReading | string {
  // "/V" is read as 1/V; otherwise the text must be units alone.
  const invert = unitText.startsWith("/");
  const body = invert ? unitText.slice(1).trim() : unitText;
  let node: MathNode;
  try {
    node = math.parse(body);
  } catch {
    return `mathjs cannot read "${unitText}" as a unit`;
  }
  const why = disallowed(math, node, false);
  if (why) return why;
  let u: unknown;
  try {
    u = math.multiply(1, node.evaluate() as Unit);
    if (invert) u = math.divide(1, u as Unit);
  } catch (e) {
    return (e as Error).message;
  }
  if (typeof u === "number") return { factor: u, candidates: ["dimensionless"], names: "", siText: "", text: unitText };
  if (!math.isUnit(u)) return `"${unitText}" is not a unit`;
  const unit = u as Unit;
  if (unit.dimensions.every((p) => p === 0)) return { factor: unit.toSI().toNumber(), candidates: ["dimensionless"], names: "", siText: "", text: unitText };
  const refs = referenceUnits(math);
  const candidates = refs.filter((r) => unit.equalBase(r.unit)).map((r) => r.dim);
  const lone = unit.units.length === 1 && unit.units[0]!.power === 1 ? unit.units[0]! : undefined;
  const offset = lone && lone.unit.offset !== 0 ? (lone.unit.name === "degC" || lone.unit.name === "celsius" ? "celsius" : "offset") : undefined;
  const si = unit.toSI();
  return {
    // For an offset unit the factor is that of a temperature difference.
    factor: offset ? math.unit(1, lone!.unit.name).toNumber("K") - math.unit(0, lone!.unit.name).toNumber("K") : si.toNumber(),
    candidates,
    names: namesOf(unit),
    siText: si.formatUnits(),
    ...(offset ? { offset } : {}),
    text: unitText,
  };
}

/** Read a unit text, trying a leading SPICE scale factor when mathjs does not know it. */
/** Ratios written with a sign mathjs does not read (common practice). */
const ratioSigns: Readonly<Record<string, number>> = { "%": 1e-2, "‰": 1e-3, ppm: 1e-6 };

function readUnit(unitText: string): UnitReading | string {
  const ratio = ratioSigns[unitText];
  if (ratio !== undefined) return { factor: ratio, candidates: ["dimensionless", "fraction"], names: "", siText: "", text: unitText };
  const cached = readings.get(unitText);
  if (cached !== undefined) return cached;
  const math = unitEngine();
  let r = readUnitWithEngine(math, unitText);
  if (typeof r === "string") {
    const split = splitSpiceFactor(unitText);
    if (split && split.rest.trim() !== "") {
      const rest = readUnitWithEngine(math, split.rest.trim());
      if (typeof rest !== "string" && !rest.offset) r = { ...rest, factor: rest.factor * split.factor, text: unitText };
    }
  }
  if (readings.size >= readingCacheSize) readings.clear();
  readings.set(unitText, r);
  return r;
}

// ---------------------------------------------------------------------------
// Text clean-up: the spellings people paste from datasheets and word processors.

const superscripts: Readonly<Record<string, string>> = {
  "\u2070": "0", "\u00b9": "1", "\u00b2": "2", "\u00b3": "3", "\u2074": "4", "\u2075": "5",
  "\u2076": "6", "\u2077": "7", "\u2078": "8", "\u2079": "9", "\u207a": "+", "\u207b": "-",
};

function normalise(text: string): string {
  let t = text.trim();
  // Most texts are plain ASCII; skip the clean-up they do not need (it dominates a cached parse).
  if (/[^\x20-\x7e]/.test(t))
    t = t
      .replace(/[\u2070\u00b9\u00b2\u00b3\u2074-\u2079\u207a\u207b]+/g, (run) => `^${[...run].map((c) => superscripts[c]).join("")}`)
      .replace(/\u2212/g, "-") // minus sign
      .replace(/[\u2126\u03a9]/g, "ohm") // Ω as OHM SIGN or Greek capital omega
      .replace(/[\u00b5\u03bc]/g, "u") // micro sign and Greek small mu
      .replace(/\u2103/g, "degC")
      .replace(/\u00b0\s*C\b/g, "degC")
      .replace(/\u00b0\s*F\b/g, "degF")
      .replace(/\u221a\s*\(/g, "sqrt(")
      .replace(/\u221a\s*([A-Za-z]+)/g, "sqrt($1)");
  // "1.23×10^-7", "1.23 x 10^-7", "1.23·10^3": the way results are printed.
  if (/10\^/.test(t)) t = t.replace(/^([+-]?(?:\d+(?:\.\d*)?|\.\d+))\s*[\u00d7x*\u00b7\u22c5]\s*10\^\(?([+-]?\d+)\)?/, "$1e$2");
  if (/[\u00b7\u22c5]/.test(t)) t = t.replace(/[\u00b7\u22c5]/g, " "); // middle dot, dot operator
  if (/ohm/i.test(t)) t = t.replace(/ohms?\b/gi, "ohm");
  return t;
}

// ---------------------------------------------------------------------------
// Messages.

// describeDimension lives with the dimensions table (quantity.ts), so the numeric core can word errors without this parser.
export { describeDimension };

function describeFound(r: UnitReading): string {
  const d = r.candidates[0];
  if (d) return `${article(dimensions[d].label)} ${dimensions[d].label}${dimensions[d].unit ? ` (${dimensions[d].unit})` : ""}`;
  return `a quantity in ${r.siText}, which is none of pinchoff's dimensions`;
}

function unparseable(text: string, expected: string, origin: string | undefined, why?: string): InputError {
  return new InputError(text, `${expected}${why ? ` (${why})` : ""}, written like ${examples}`, origin, "unparseable");
}

function finite(value: number, text: string, expected: string, origin: string | undefined): number {
  if (!Number.isFinite(value)) throw new InputError(text, `a finite value: ${expected}`, origin);
  return value;
}

// ---------------------------------------------------------------------------
// The readers.

type Reading =
  | { kind: "number"; value: number }
  | { kind: "code"; value: number; dim: "resistance" | "capacitance"; letter: string }
  | { kind: "unit"; number: Decimal; unit: UnitReading };

function read(text: string, expected: string, origin: string | undefined): Reading {
  const t = normalise(text);
  if (t === "") throw new InputError(text, `${expected}, not empty text`, origin, "unparseable");
  const code = readValueCode(t);
  if (code) return { kind: "code", value: code.value, dim: code.dim, letter: code.letter };
  const bare = readSpiceNumber(t);
  if (bare !== undefined) return { kind: "number", value: bare };
  if (/^[+-]?(nan|inf(inity)?)\b/i.test(t)) throw new InputError(text, `a finite value: ${expected}`, origin);
  const number = readDecimal(t);
  if (!number) throw unparseable(text, expected, origin, "it does not start with a number");
  const rawRest = t.slice(number.length);
  let unitText = rawRest.trim();
  if (/^1\s*\//.test(unitText)) unitText = unitText.replace(/^1\s*/, ""); // "0.02 1/V"
  const unit = readUnit(unitText);
  if (typeof unit === "string") {
    const hint = spiceFactor(unitText) !== undefined && rawRest !== unitText ? `; for a SPICE scale factor write it without a space, "${number.mantissa}${unitText}"` : "";
    throw unparseable(text, expected, origin, `${unit}${hint}`);
  }
  return { kind: "unit", number, unit };
}

function valueOf(number: Decimal, unit: UnitReading): number {
  if (unit.offset === "celsius") return celsius(scaleDecimal(number, 0));
  if (unit.offset === "offset") return unitEngine().unit(scaleDecimal(number, 0), unit.text).toNumber("K");
  return applyFactor(number, unit.factor);
}

/**
 * Parse text (or take a number, already in SI) as a quantity of the expected
 * dimension, in SI units. A bare number is taken in the dimension's SI unit.
 * Throws InputError: "wrong-dimension" when the unit is of another dimension,
 * "unparseable" when the text is not a quantity, "invalid-value" when the
 * value is not finite.
 */
export function parseQuantity<D extends Dimension>(input: string | number, dim: D, origin?: string): Quantity<D> {
  if (!Object.prototype.hasOwnProperty.call(dimensions, dim)) throw new InputError(dim, `a dimension, one of ${Object.keys(dimensions).join(", ")}`, origin ? `${origin} (dimension)` : "dimension");
  const expected = describeDimension(dim);
  if (typeof input === "number") return finite(input, String(input), expected, origin) as Quantity<D>;
  if (typeof input !== "string") throw new InputError(input, `${expected}, as text or a number`, origin);
  const r = read(input, expected, origin);
  switch (r.kind) {
    case "number":
      return finite(r.value, input, expected, origin) as Quantity<D>;
    case "code":
      if (r.dim !== dim) throw new InputError(input, `${expected}, but the IEC 60062 letter "${r.letter}" marks ${article(r.dim)} ${r.dim}`, origin, "wrong-dimension");
      return finite(r.value, input, expected, origin) as Quantity<D>;
    case "unit":
      if (!r.unit.candidates.includes(dim)) {
        const hint = dim === "temperature" && /(^|\s)C$/.test(r.unit.names) ? `; "C" is the coulomb, write "degC" or "°C" for Celsius` : "";
        throw new InputError(input, `${expected}, but it is ${describeFound(r.unit)}${hint}`, origin, "wrong-dimension");
      }
      return finite(valueOf(r.number, r.unit), input, expected, origin) as Quantity<D>;
  }
}

/**
 * Parse text and find its dimension from the unit: "20 uA" → current, "4k7" →
 * resistance, a bare number → dimensionless. Where two dimensions share SI base
 * units (1/V and S/A), the one written the same way wins, else the first in
 * the `dimensions` table.
 */
export function parseAny(input: string | number, origin?: string): AnyQuantity {
  const expected = "a quantity";
  if (typeof input === "number") return { value: finite(input, String(input), expected, origin), dim: "dimensionless" } as AnyQuantity;
  if (typeof input !== "string") throw new InputError(input, `${expected}, as text or a number`, origin);
  const r = read(input, expected, origin);
  switch (r.kind) {
    case "number":
      return { value: finite(r.value, input, expected, origin), dim: "dimensionless" } as AnyQuantity;
    case "code":
      return { value: finite(r.value, input, expected, origin), dim: r.dim } as AnyQuantity;
    case "unit": {
      const { candidates, names } = r.unit;
      if (candidates.length === 0) throw new InputError(input, `a quantity of a known dimension, but it is ${describeFound(r.unit)}`, origin, "wrong-dimension");
      const refs = references ?? [];
      const dim = candidates.find((d) => refs.find((x) => x.dim === d)?.names === names) ?? candidates[0]!;
      return { value: finite(valueOf(r.number, r.unit), input, expected, origin), dim } as AnyQuantity;
    }
  }
}
