/**
 * The design-inputs cell, read and edited as text in Node before anything runs.
 * The cell is the one tagged `design-inputs`; it holds one call
 * `const given = designInputs({ ... });` with one entry per line,
 * `  NAME: ["<value with unit>", "<dimension>"],` (a `//` comment may follow).
 * An override replaces the value string of one entry and nothing else.
 */
import { InputError, PinchoffError } from "../errors.js";
import { dimensions, type Dimension } from "../quantity.js";
import { parseAny, parseQuantity } from "../units/parse.js";
import { cellSource, type Notebook } from "./notebook-file.js";

export const inputsTag = "design-inputs";

export interface InputLine {
  readonly name: string;
  /** The value string as written, e.g. "200 uA". */
  readonly text: string;
  readonly dim: Dimension;
  /** Line index inside the cell source. */
  readonly line: number;
  /** Start and end (exclusive) of the value's string literal, quotes included, in that line. */
  readonly span: readonly [number, number];
}

export interface InputsCell {
  readonly index: number;
  readonly lines: readonly InputLine[];
}

// NAME: ["value", "dimension"],   // comment
const entryLine = /^(\s*)([A-Za-z_$][\w$]*)\s*:\s*\[\s*("(?:[^"\\\n]|\\.)*")\s*,\s*("(?:[^"\\\n]|\\.)*")\s*\]\s*,?\s*(\/\/.*)?$/;
const ignorable = /^\s*(\/\/.*)?$/;

/** Find the one design-inputs cell and read its entries. */
export function findInputsCell(nb: Notebook, origin: string): InputsCell {
  const tagged = nb.cells.flatMap((c, i) => (c.metadata.tags?.includes(inputsTag) ? [i] : []));
  if (tagged.length === 0) throw new PinchoffError("invalid-design", `no design-inputs cell: tag exactly one code cell "${inputsTag}" (cell metadata.tags) holding const given = designInputs({ ... })`, origin);
  if (tagged.length > 1) throw new PinchoffError("invalid-design", `${tagged.length} cells are tagged "${inputsTag}" (cells ${tagged.map((i) => i + 1).join(", ")}); exactly one may be`, origin);
  const index = tagged[0]!;
  const cell = nb.cells[index]!;
  const at = `${origin}: cell ${index + 1} (${inputsTag})`;
  if (cell.cell_type !== "code") throw new PinchoffError("invalid-design", `the "${inputsTag}" cell must be a code cell, not ${cell.cell_type}`, at);
  const src = cellSource(cell).split("\n");
  const start = src.findIndex((l) => /designInputs\s*\(\s*\{\s*(\/\/.*)?$/.test(l));
  if (start < 0) throw new PinchoffError("invalid-design", "no line opening designInputs({ (one entry per line after it)", at);
  const lines: InputLine[] = [];
  let closed = false;
  for (let i = start + 1; i < src.length; i++) {
    const l = src[i]!;
    if (/^\s*\}/.test(l)) {
      closed = true;
      break;
    }
    if (ignorable.test(l)) continue;
    const m = entryLine.exec(l);
    if (!m) throw new PinchoffError("invalid-design", `line ${i + 1} is not an entry of the form NAME: ["<value with unit>", "<dimension>"], (got ${JSON.stringify(l.trim())})`, at);
    const name = m[2]!;
    const text = JSON.parse(m[3]!) as string;
    const dim = JSON.parse(m[4]!) as string;
    if (!(dim in dimensions)) throw new InputError(dim, `a dimension, one of ${Object.keys(dimensions).join(", ")}`, `${at}: ${name}`, "invalid-design");
    if (lines.some((e) => e.name === name)) throw new PinchoffError("invalid-design", `input ${name} is given twice`, at);
    const from = m[1]!.length + l.slice(m[1]!.length).indexOf(m[3]!, name.length);
    lines.push({ name, text, dim: dim as Dimension, line: i, span: [from, from + m[3]!.length] });
  }
  if (!closed) throw new PinchoffError("invalid-design", "designInputs({ is not closed by a line starting with }", at);
  if (lines.length === 0) throw new PinchoffError("invalid-design", "designInputs({ ... }) has no entries", at);
  return { index, lines };
}

export interface ParsedInput extends InputLine {
  /** SI value. */
  readonly value: number;
  /** True when the value came from `--set`. */
  readonly overridden: boolean;
  /** The value written in the notebook, when overridden. */
  readonly original?: string;
}

/** Which dimension a text does parse to, for an error message; undefined when none. */
function dimensionFound(text: string): Dimension | undefined {
  try {
    return parseAny(text, "probe").dim;
  } catch {
    return undefined;
  }
}

function parseInput(name: string, text: string, dim: Dimension, origin: string): number {
  try {
    return parseQuantity(text, dim, origin) as number;
  } catch (e) {
    if (!(e instanceof InputError)) throw e;
    const found = e.code === "wrong-dimension" ? dimensionFound(text) : undefined;
    const foundText = found && found !== dim && !e.expected.includes(dimensions[found].label) ? ` (it reads as a ${dimensions[found].label})` : "";
    throw new InputError(text, `${e.expected}${foundText}, since input ${name} is declared "${dim}"`, origin, e.code);
  }
}

/** One `--set NAME=VALUE` as given on the command line. */
export interface Override {
  readonly name: string;
  readonly text: string;
}

export function parseOverride(arg: string): Override {
  const eq = arg.indexOf("=");
  const name = eq > 0 ? arg.slice(0, eq).trim() : "";
  if (!name || !/^[A-Za-z_$][\w$]*$/.test(name)) throw new InputError(arg, "NAME=VALUE, e.g. ID=200uA", "--set");
  return { name, text: arg.slice(eq + 1).trim() };
}

/**
 * Check every override against the cell (known name, right dimension) and
 * parse every entry; throws before anything is written or executed.
 */
export function resolveInputs(cell: InputsCell, overrides: readonly Override[], origin: string): ParsedInput[] {
  const known = cell.lines.map((l) => l.name);
  const byName = new Map<string, Override>();
  for (const o of overrides) {
    if (!known.includes(o.name)) throw new InputError(o.name, `one of the notebook's inputs: ${known.join(", ")}`, `--set ${o.name}=${o.text}`);
    if (byName.has(o.name)) throw new InputError(`${o.name}=${o.text}`, `each input set once (${o.name} is also set to ${JSON.stringify(byName.get(o.name)!.text)})`, "--set");
    byName.set(o.name, o);
  }
  return cell.lines.map((l) => {
    const o = byName.get(l.name);
    if (o) {
      const value = parseInput(l.name, o.text, l.dim, `--set ${l.name}=${o.text}`);
      return { ...l, text: o.text, value, overridden: true, original: l.text };
    }
    return { ...l, value: parseInput(l.name, l.text, l.dim, `${origin}: input ${l.name}`), overridden: false };
  });
}

/** A copy of the notebook with the overridden value strings replaced; the source object is untouched. */
export function applyOverrides(nb: Notebook, cell: InputsCell, inputs: readonly ParsedInput[]): Notebook {
  const copy = structuredClone(nb);
  const target = copy.cells[cell.index]!;
  const src = cellSource(target).split("\n");
  for (const i of inputs) {
    if (!i.overridden) continue;
    const l = src[i.line]!;
    src[i.line] = l.slice(0, i.span[0]) + JSON.stringify(i.text) + l.slice(i.span[1]);
  }
  const joined = src.join("\n");
  // Keep nbformat's list-of-lines form: every line but the last ends in "\n".
  target.source = joined.split(/(?<=\n)/);
  return copy;
}
