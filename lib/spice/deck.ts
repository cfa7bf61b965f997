/**
 * The deck writer: every string that reaches a SPICE deck passes here.
 *
 * Method: a deck is assembled from validated tokens, never from free text.
 * Names (nodes, elements, models, devices, library sections) must match a strict
 * identifier pattern or are refused with an `InputError`; numbers must be finite;
 * titles and comments are reduced to one printable line (control characters and
 * line breaks removed); file paths are refused when they hold a quote or a
 * control character. `deckText` then checks that every line it emits is one line
 * and that no circuit line is a dot-command the writer did not make itself, so a
 * user string cannot add a `.control` block, `.include` or `shell` line.
 */
import { InputError } from "../errors.js";

/** Node, element, model and section names: a letter or underscore, then letters, digits, `_`, `.`, `-`, `+` … no spaces, quotes, `=` or line breaks. */
const identifier = /^[A-Za-z_][A-Za-z0-9_.+\-#]{0,63}$/;
/** Node names may also be digits (`0` is ground). */
const nodeName = /^(?:[0-9]+|[A-Za-z_][A-Za-z0-9_.+\-#]{0,63})$/;
/** Any ASCII or Unicode control character (line breaks, tabs, escape, NUL, DEL, line/paragraph separators). */
const control = /[\u0000-\u001f\u007f-\u009f\u2028\u2029]/g;

/** A device, model or section name, or an element name's body; refused unless it is a plain identifier. */
export function spiceIdentifier(name: unknown, origin: string): string {
  if (typeof name !== "string" || !identifier.test(name)) throw new InputError(name, "a SPICE name: a letter or _, then up to 63 letters, digits or _ . + - # (no spaces, quotes or line breaks)", origin);
  return name;
}

/** A node name: an identifier or a non-negative integer. */
export function spiceNode(name: unknown, origin: string): string {
  if (typeof name !== "string" || !nodeName.test(name)) throw new InputError(name, "a SPICE node name: digits, or a letter or _ then letters, digits or _ . + - #", origin);
  return name;
}

/** A name prefix shared by several stages in one deck: empty, or identifier characters. */
export function spicePrefix(prefix: unknown, origin: string): string {
  if (prefix === "" || prefix === undefined) return "";
  if (typeof prefix !== "string" || !/^[A-Za-z0-9_]{1,32}$/.test(prefix)) throw new InputError(prefix, "a name prefix of up to 32 letters, digits or _", origin);
  return prefix;
}

/** A number as SPICE reads it: the shortest exact decimal form; finite only. */
export function spiceNumber(x: number, origin = "SPICE value"): string {
  if (typeof x !== "number" || !Number.isFinite(x)) throw new InputError(x, "a finite number", origin);
  return String(x);
}

/** Free text (title, comment) as one printable line: control characters and line breaks become spaces. */
export function spiceText(text: unknown): string {
  return String(text ?? "").replace(control, " ").replace(/\s+/g, " ").trim();
}

/** A comment line. */
export const spiceComment = (text: unknown): string => `* ${spiceText(text)}`;

/** A file path inside `.lib`/`.include`: refused when it holds a quote or a control character. */
export function spicePath(path: unknown, origin: string): string {
  if (typeof path !== "string" || path.length === 0 || /["'\u0000-\u001f\u007f-\u009f\u2028\u2029]/.test(path))
    throw new InputError(path, "a file path without quotes or control characters", origin);
  return path;
}

/** `.lib "file" section` */
export const libLine = (path: string, section: string, origin = "library"): string =>
  `.lib "${spicePath(path, `${origin} file`)}" ${spiceIdentifier(section, `${origin} section`)}`;

/** `.include "file"` */
export const includeLine = (path: string, origin = "include"): string => `.include "${spicePath(path, origin)}"`;

/** An element line: a name (its first letter is the element kind), nodes, then values or `key=value` parameters. */
export function element(name: string, nodes: readonly string[], ...rest: ReadonlyArray<number | string | Readonly<Record<string, number>>>): string {
  const parts = [spiceIdentifier(name, "element name"), ...nodes.map((n, i) => spiceNode(n, `${name} node ${i + 1}`))];
  for (const r of rest) {
    if (typeof r === "number") parts.push(spiceNumber(r, name));
    else if (typeof r === "string") parts.push(spiceIdentifier(r, `${name} model`));
    else for (const [k, v] of Object.entries(r)) parts.push(`${spiceIdentifier(k, `${name} parameter`)}=${spiceNumber(v, `${name} ${k}`)}`);
  }
  return parts.join(" ");
}

/** A `.model` line: name, type and finite parameters. */
export function modelCard(name: string, type: "nmos" | "pmos", params: Readonly<Record<string, number>>): string {
  if (type !== "nmos" && type !== "pmos") throw new InputError(type, '"nmos" or "pmos"', `model ${name} type`);
  const ps = Object.entries(params).map(([k, v]) => `${spiceIdentifier(k, `model ${name} parameter`)}=${spiceNumber(v, `model ${name} ${k}`)}`);
  return [".model", spiceIdentifier(name, "model name"), type, ...ps].join(" ");
}

/** A deck: title, comments, setup lines made by this module (`.lib`, `.include`, `.model`), circuit, optional control block. */
export interface DeckParts {
  readonly title: string;
  readonly comments?: readonly string[];
  /** Lines from `libLine`, `includeLine`, `modelCard`, `element`. */
  readonly lines: readonly string[];
  /** Analysis lines (`.op`, `.tf …`), written after the circuit. */
  readonly analyses?: readonly string[];
  /** Lines of a `.control` block (written by pinchoff, not by users). */
  readonly control?: readonly string[];
}

const writerDot = /^\.(?:lib|include|model|op|tf|dc|ac|tran|options|option|save|param|temp|nodeset|ic)\b/i;
const forbiddenDot = /^\.(?:control|endc|end|endl|subckt|ends)\b/i;

/** One line, or refused: the last guard against a string that slipped past a validator. */
function oneLine(line: string, where: string): string {
  if (/[\r\n\u2028\u2029\u0000-\u0008\u000b-\u001f\u007f]/.test(line)) throw new InputError(line, "one deck line without line breaks or control characters", where);
  return line;
}

/** The deck text: each line checked to be one line; circuit lines may not open or close blocks. */
export function writeDeck(parts: DeckParts): string {
  const out = [spiceComment(parts.title)];
  for (const c of parts.comments ?? []) out.push(spiceComment(c));
  for (const l of parts.lines) {
    oneLine(l, "deck circuit line");
    const t = l.trimStart();
    if (t.startsWith(".") && (forbiddenDot.test(t) || !writerDot.test(t))) throw new InputError(l, "an element or a .lib/.include/.model line", "deck circuit line");
    out.push(l);
  }
  for (const a of parts.analyses ?? []) out.push(oneLine(a, "deck analysis line"));
  if (parts.control && parts.control.length > 0) {
    out.push(".control");
    for (const c of parts.control) {
      const t = oneLine(c, "deck control line").trim();
      if (/^\.?(?:endc|control)\b/i.test(t) || /^shell\b/i.test(t)) throw new InputError(c, "a control command other than shell/.endc", "deck control line");
      out.push(c);
    }
    out.push(".endc");
  }
  out.push(".end", "");
  return out.join("\n");
}
