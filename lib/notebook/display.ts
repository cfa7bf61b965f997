/**
 * Rich notebook output from inside the tslab kernel.
 *
 * tslab 1.0.22's public `display` API (`display.html(...)`, `display.raw(type, data)`)
 * sends one MIME type per display_data message, so a cell showing html, markdown
 * and plain text that way gets three separate outputs. Its kernel, however,
 * keeps the writer of the running cell in `tslab/dist/jupyter.js` as
 * `lastWriteDisplayData(content, update)`, which takes a whole display_data
 * content ({ data, metadata, transient }) with any number of MIME types. We find
 * that module in Node's module cache (whichever tslab installation runs the
 * kernel) and send one bundle per output, as a front end expects: it picks the
 * richest type it can draw, and tools read our JSON type back from the saved
 * notebook. Outside a kernel `emit` reports false and callers fall back to text.
 */
import { createRequire } from "node:module";
import escapeHtml from "escape-html";
import type { Dimension } from "../quantity.js";
import { InputError } from "../errors.js";
import type { Derivation, DerivationData } from "../record/derivation.js";
import { renderHtmlFragment, type HtmlOptions } from "../record/render-html.js";
import { renderMarkdown, escapeMarkdown } from "../record/render-markdown.js";
import { renderText, textTable } from "../record/render-text.js";
import { renderJson, toData } from "../record/render.js";
import { pinchoffCss } from "../record/styles.js";
import { formatQuantity, type FormatOptions } from "../units/format.js";

/** MIME type → payload: strings for text types, plain JSON values for `+json` types. */
export type MimeBundle = Readonly<Record<string, unknown>>;

type Writer = (content: { data: MimeBundle; metadata: Record<string, unknown>; transient: Record<string, unknown> }, update: boolean) => void;

interface TslabJupyterModule {
  lastWriteDisplayData?: Writer | null;
}

const requireHere = createRequire(import.meta.url);
const kernelModule = /[\\/]tslab[\\/]dist[\\/]jupyter\.js$/;

/** The display writer of the cell now running, or undefined outside a tslab kernel. */
export function kernelWriter(): Writer | undefined {
  const cache = requireHere.cache as Record<string, { exports?: TslabJupyterModule } | undefined>;
  for (const [file, mod] of Object.entries(cache)) {
    if (!kernelModule.test(file)) continue;
    const w = mod?.exports?.lastWriteDisplayData;
    if (typeof w === "function") return w;
  }
  return undefined;
}

/** True when running inside a tslab kernel cell. */
export const inKernel = (): boolean => kernelWriter() !== undefined;

/**
 * Send one display_data message carrying every MIME type of `bundle`.
 * Returns false (and sends nothing) outside a tslab kernel.
 */
export function emit(bundle: MimeBundle, metadata: Record<string, unknown> = {}): boolean {
  const write = kernelWriter();
  if (!write) return false;
  write({ data: bundle, metadata, transient: {} }, false);
  return true;
}

// ---------------------------------------------------------------------------
// Showing derivations and quantities.
/** Our MIME type: one derivation's `toJSON()` (schemaVersion, fingerprint, checks, …) per output. */
export const derivationMime = "application/vnd.pinchoff.derivation+json";

/** Options for notebook display. `math` defaults to "mathml": no stylesheet or fonts in every output. */
export type ShowOptions = HtmlOptions;

/** A named value for `showQuantity` and `showTable`. */
export interface QuantityRow {
  readonly name: string;
  readonly value: number;
  readonly dim: Dimension;
  readonly note?: string;
}

const style = `<style>${pinchoffCss}</style>`;
const isDerivationLike = (x: unknown): x is Derivation | DerivationData =>
  !!x && typeof x === "object" && Array.isArray((x as DerivationData).steps) && Array.isArray((x as DerivationData).checks) && typeof (x as DerivationData).title === "string";

/** The MIME bundle for one derivation: html, markdown, plain text and our JSON. */
export function derivationBundle(d: Derivation | DerivationData, opts: ShowOptions = {}): MimeBundle {
  if (!isDerivationLike(d)) throw new InputError(d, "a Derivation or its toJSON() data", "show");
  const data = toData(d);
  const o: ShowOptions = { math: "mathml", celsius: true, ...opts };
  return {
    "text/html": `${style}${renderHtmlFragment(data, o)}`,
    "text/markdown": renderMarkdown(data, o),
    "text/plain": renderText(data, o),
    // Through renderJson: Infinity becomes "Infinity" (JSON has none), NaN is refused.
    [derivationMime]: JSON.parse(renderJson(data, 0)) as unknown,
  };
}

function checkRow(r: QuantityRow, origin: string): QuantityRow {
  if (!r || typeof r !== "object" || typeof r.name !== "string") throw new InputError(r, "a row { name, value, dim }", origin);
  if (typeof r.value !== "number" || Number.isNaN(r.value)) throw new InputError(r.value, "a number in SI units", `${origin} "${r.name}"`);
  return r;
}

// ---------------------------------------------------------------------------
// Parts of a design the report carries in full.

/**
 * The parts a design-run report lifts out of the notebook by role: the
 * summary table (shown in the results box at the top), the corner-spread
 * table and the SPICE deck. A cell marks an output as one of them with
 * `showTable(rows, title, { part: "summary" })` or `showDeck(text)`.
 */
export const reportParts = {
  summary: "the summary table: chosen values, operating point, region and margin",
  "corner-spread": "the spread of the figures over the tolerance and temperature corners",
  "spice-deck": "the SPICE deck for the cross-check by simulation",
  frequency: "the frequency response: gain, capacitors, corners, poles and the methods' conditions",
} as const;
export type ReportPart = keyof typeof reportParts;

/** Our MIME type for a marked part: { part, title, rows } for a table, { part, title, text } for a deck. */
export const partMime = "application/vnd.pinchoff.part+json";

export interface PartRow {
  readonly name: string;
  /** SI value, or null where JSON cannot hold it (NaN). Infinity is written as the string "Infinity". */
  readonly value: number | string | null;
  readonly dim: Dimension;
  /** The value as the notebook showed it, with its unit. */
  readonly text: string;
  readonly note?: string;
}

export interface TableOptions extends FormatOptions {
  /** Mark the table as a part the report carries (see `reportParts`). */
  readonly part?: ReportPart;
}

function checkPart(part: unknown, origin: string): ReportPart {
  if (typeof part !== "string" || !Object.prototype.hasOwnProperty.call(reportParts, part)) throw new InputError(part, `one of ${Object.keys(reportParts).join(", ")}`, origin);
  return part as ReportPart;
}

/** The MIME bundle for a small table of named quantities. */
export function tableBundle(rows: readonly QuantityRow[], title?: string, opts: TableOptions = {}): MimeBundle {
  rows.forEach((r, i) => checkRow(r, `table row ${i + 1}`));
  const shown = rows.map((r) => [r.name, formatQuantity(r.value, r.dim, { celsius: true, ...opts, origin: r.name }), r.note ?? ""] as const);
  const hasNote = rows.some((r) => r.note);
  const head = hasNote ? ["quantity", "value", "note"] : ["quantity", "value"];
  const cut = (r: readonly string[]) => (hasNote ? r : r.slice(0, 2));
  const html = `${style}<div class="pinchoff">${title ? `<h3 class="po-part">${escapeHtml(title)}</h3>` : ""}<table><thead><tr>${head.map((h) => `<th>${h}</th>`).join("")}</tr></thead><tbody>${shown
    .map((r) => `<tr><td>${escapeHtml(r[0])}</td><td class="po-num">${escapeHtml(r[1])}</td>${hasNote ? `<td>${escapeHtml(r[2])}</td>` : ""}</tr>`)
    .join("")}</tbody></table></div>`;
  const md = [title ? `**${escapeMarkdown(title)}**\n` : "", `| ${head.join(" | ")} |`, `|${head.map(() => " --- ").join("|")}|`, ...shown.map((r) => `| ${cut(r).map(escapeMarkdown).join(" | ")} |`)].join("\n");
  const text = (title ? `${title}\n` : "") + textTable(head, shown.map(cut), "");
  const bundle: Record<string, unknown> = { "text/html": html, "text/markdown": md, "text/plain": text };
  if (opts.part !== undefined) {
    const part = checkPart(opts.part, "showTable part");
    const jsonValue = (v: number) => (Number.isFinite(v) ? v : Number.isNaN(v) ? null : String(v));
    const partRows: PartRow[] = rows.map((r, i) => ({ name: r.name, value: jsonValue(r.value), dim: r.dim, text: shown[i]![1], ...(r.note ? { note: r.note } : {}) }));
    bundle[partMime] = { part, title: title ?? reportParts[part], rows: partRows };
  }
  return bundle;
}

/** The MIME bundle for a SPICE deck: preformatted text, marked as the report's deck part. */
export function deckBundle(deck: string, title = "SPICE deck"): MimeBundle {
  if (typeof deck !== "string" || deck.trim() === "") throw new InputError(deck, "the deck's text (spiceDeck(stage))", "showDeck");
  return {
    "text/html": `${style}<div class="pinchoff"><h3 class="po-part">${escapeHtml(title)}</h3><pre>${escapeHtml(deck)}</pre></div>`,
    "text/markdown": `**${escapeMarkdown(title)}**\n\n\`\`\`\n${deck.replace(/\`\`\`/g, "` ` `")}\n\`\`\``,
    "text/plain": deck,
    [partMime]: { part: "spice-deck", title, text: deck },
  };
}

/** The MIME bundle for one named quantity: `ID = 81.0 µA`. */
export function quantityBundle(value: number, dim: Dimension, name?: string, opts: FormatOptions = {}): MimeBundle {
  checkRow({ name: name ?? "value", value, dim }, "quantity");
  const v = formatQuantity(value, dim, { celsius: true, ...opts, origin: name ?? "quantity" });
  const text = name ? `${name} = ${v}` : v;
  return {
    "text/html": `<span class="pinchoff" style="font-variant-numeric:tabular-nums">${name ? `<b>${escapeHtml(name)}</b> = ` : ""}${escapeHtml(v)}</span>`,
    "text/markdown": name ? `**${escapeMarkdown(name)}** = ${escapeMarkdown(v)}` : escapeMarkdown(v),
    "text/plain": text,
  };
}

function send(bundle: MimeBundle): void {
  if (!emit(bundle)) console.log(bundle["text/plain"]);
}

/**
 * Show a derivation (or a whole design's list of them, one output each) as a
 * rich notebook output. Outside a tslab kernel the plain-text form is printed.
 */
export function show(item: Derivation | DerivationData | ReadonlyArray<Derivation | DerivationData>, opts: ShowOptions = {}): void {
  const list = Array.isArray(item) ? (item as ReadonlyArray<Derivation | DerivationData>) : [item as Derivation | DerivationData];
  for (const d of list) send(derivationBundle(d, opts));
}

/** Show one quantity with its SI prefix: `showQuantity(op.id, "current", "ID")`. */
export function showQuantity(value: number, dim: Dimension, name?: string, opts: FormatOptions = {}): void {
  send(quantityBundle(value, dim, name, opts));
}

/** Show a small table of named quantities; `{ part: "summary" }` (or "corner-spread", "frequency") puts it in the run report too. */
export function showTable(rows: readonly QuantityRow[], title?: string, opts: TableOptions = {}): void {
  send(tableBundle(rows, title, opts));
}

/** Show a SPICE deck; the run report carries it in full. */
export function showDeck(deck: string, title?: string): void {
  send(deckBundle(deck, title));
}
