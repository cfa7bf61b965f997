/**
 * Reading a notebook file (nbformat 4 JSON) and checking the parts the runner
 * relies on, so a bad file is reported with its name and the place of the
 * fault before anything is staged or executed.
 */
import { readFileSync } from "node:fs";
import { parse as jsoncParse, printParseErrorCode, type ParseError } from "jsonc-parser";
import { InputError, PinchoffError } from "../errors.js";

export interface NotebookCell {
  cell_type: "code" | "markdown" | "raw";
  id?: string;
  source: string | string[];
  metadata: { tags?: string[]; [key: string]: unknown };
  outputs?: NotebookOutput[];
  execution_count?: number | null;
  [key: string]: unknown;
}

export interface NotebookOutput {
  output_type: "stream" | "display_data" | "execute_result" | "error";
  name?: string;
  text?: string | string[];
  data?: Record<string, unknown>;
  ename?: string;
  evalue?: string;
  traceback?: string[];
  [key: string]: unknown;
}

export interface Notebook {
  nbformat: number;
  nbformat_minor: number;
  metadata: Record<string, unknown>;
  cells: NotebookCell[];
}

/** A cell's source as one string (nbformat allows a string or a list of lines). */
export const cellSource = (cell: NotebookCell): string => (Array.isArray(cell.source) ? cell.source.join("") : cell.source);

/** Line and column (1-based) of a character offset, for parse errors. */
export function lineColumn(text: string, offset: number): { line: number; column: number } {
  const before = text.slice(0, Math.max(0, Math.min(offset, text.length)));
  const lines = before.split("\n");
  return { line: lines.length, column: lines[lines.length - 1]!.length + 1 };
}

/** Parse notebook text; `origin` is the file name used in errors. */
export function parseNotebook(text: string, origin: string): Notebook {
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    // JSON.parse does not always say where; jsonc-parser (strict mode) finds the offset.
    const errors: ParseError[] = [];
    jsoncParse(text, errors, { disallowComments: true, allowTrailingComma: false, allowEmptyContent: false });
    const first = errors[0];
    const where = first ? lineColumn(text, first.offset) : undefined;
    const what = first ? printParseErrorCode(first.error) : (e as Error).message;
    const at = where ? ` at line ${where.line}, column ${where.column}` : "";
    throw new PinchoffError("invalid-design", `not valid notebook JSON${at}: ${what}`, origin);
  }
  return checkNotebook(raw, origin);
}

/** Check the nbformat 4 shape the runner needs; returns the same object typed. */
export function checkNotebook(raw: unknown, origin: string): Notebook {
  if (!raw || typeof raw !== "object" || Array.isArray(raw)) throw new InputError(raw === null ? null : typeof raw, "a notebook object (nbformat 4 JSON)", origin, "invalid-design");
  const nb = raw as Partial<Notebook>;
  if (nb.nbformat !== 4) throw new InputError(nb.nbformat, "nbformat 4", `${origin}: nbformat`, "invalid-design");
  if (!Array.isArray(nb.cells)) throw new InputError(nb.cells, "a list of cells", `${origin}: cells`, "invalid-design");
  nb.cells.forEach((c, i) => {
    const at = `${origin}: cell ${i + 1}`;
    if (!c || typeof c !== "object") throw new InputError(c, "a cell object", at, "invalid-design");
    if (!["code", "markdown", "raw"].includes(c.cell_type)) throw new InputError(c.cell_type, `cell_type "code", "markdown" or "raw"`, at, "invalid-design");
    if (typeof c.source !== "string" && !(Array.isArray(c.source) && c.source.every((s) => typeof s === "string"))) throw new InputError(c.source, "source as a string or a list of strings", at, "invalid-design");
    if (c.metadata === undefined) c.metadata = {};
    if (typeof c.metadata !== "object" || c.metadata === null) throw new InputError(c.metadata, "a metadata object", at, "invalid-design");
    if (c.metadata.tags !== undefined && !(Array.isArray(c.metadata.tags) && c.metadata.tags.every((t) => typeof t === "string"))) throw new InputError(c.metadata.tags, "metadata.tags as a list of strings", at, "invalid-design");
  });
  if (nb.metadata === undefined) nb.metadata = {};
  if (typeof nb.nbformat_minor !== "number") nb.nbformat_minor = 4;
  return nb as Notebook;
}

export function readNotebook(path: string): { notebook: Notebook; text: string } {
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (e) {
    throw new PinchoffError("io", `cannot read the notebook (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`, path);
  }
  return { notebook: parseNotebook(text, path), text };
}

/** nbformat 4.5 wants a unique id per cell; give missing ones a stable one. */
export function ensureCellIds(nb: Notebook): void {
  const seen = new Set<string>();
  nb.cells.forEach((c, i) => {
    if (typeof c.id !== "string" || !/^[a-zA-Z0-9-_]{1,64}$/.test(c.id) || seen.has(c.id)) {
      let n = i + 1;
      while (seen.has(`cell-${n}`) || nb.cells.some((o) => o !== c && o.id === `cell-${n}`)) n++;
      c.id = `cell-${n}`;
    }
    seen.add(c.id);
  });
  if (nb.nbformat_minor < 5) nb.nbformat_minor = 5;
}
