/**
 * Reading results back from an executed notebook: the derivations and plots
 * our display helpers put into MIME outputs, and the first lines of any cell
 * that failed. Everything here reads saved JSON only; nothing is trusted to be
 * well-formed, since a notebook may have been edited by hand.
 */
import type { CheckEntry, DerivationData } from "../record/derivation.js";
import { plotHeight } from "../plot/html.js";
import type { CellStatus } from "./execute.js";
import { cellSource, type Notebook, type NotebookOutput } from "./notebook-file.js";

export const derivationMime = "application/vnd.pinchoff.derivation+json";
export const plotMime = "application/vnd.pinchoff.plot+json";
/** Marked parts (summary table, corner spread, SPICE deck): see `reportParts` in lib/notebook/display.ts. */
export const partMime = "application/vnd.pinchoff.part+json";
const partNames = ["summary", "corner-spread", "spice-deck", "frequency"] as const;

export interface CollectedPartRow {
  readonly name: string;
  readonly text: string;
  readonly note?: string;
}

export type CollectedPart =
  | { readonly cell: number; readonly part: "summary" | "corner-spread" | "frequency"; readonly title: string; readonly rows: readonly CollectedPartRow[] }
  | { readonly cell: number; readonly part: "spice-deck"; readonly title: string; readonly text: string };

export interface CollectedDerivation {
  readonly cell: number;
  readonly data: DerivationData;
  readonly fingerprint?: string;
}

export interface PlotFigure {
  readonly data: unknown[];
  readonly layout?: Record<string, unknown>;
  readonly config?: Record<string, unknown>;
}

export interface CollectedPlot {
  readonly cell: number;
  readonly figure: PlotFigure;
  readonly title?: string;
  readonly summary?: string;
}

export interface CellFailure {
  readonly cell: number;
  readonly status: CellStatus;
  /** First lines of the error as the kernel reported it. */
  readonly lines: readonly string[];
  readonly source: string;
}

export interface Collected {
  readonly derivations: readonly CollectedDerivation[];
  readonly plots: readonly CollectedPlot[];
  readonly parts: readonly CollectedPart[];
  readonly failures: readonly CellFailure[];
  /** Cells that did not run because an earlier one failed. */
  readonly skipped: readonly number[];
}

const asText = (t: string | string[] | undefined): string => (Array.isArray(t) ? t.join("") : (t ?? ""));

function jsonPayload(v: unknown): unknown {
  if (typeof v !== "string") return v;
  try {
    return JSON.parse(v);
  } catch {
    return undefined;
  }
}

function isDerivation(v: unknown): v is DerivationData & { fingerprint?: string } {
  const d = v as DerivationData;
  return !!d && typeof d === "object" && typeof d.title === "string" && Array.isArray(d.checks) && Array.isArray(d.steps) && Array.isArray(d.inputs);
}

function isFigure(v: unknown): v is PlotFigure {
  return !!v && typeof v === "object" && Array.isArray((v as PlotFigure).data);
}

/**
 * A saved notebook may have been edited by anyone: a layout height that is not
 * a plain number in range is dropped (the plot takes the default height), so
 * it can never reach an HTML attribute.
 */
function saneFigure(fig: PlotFigure): PlotFigure {
  const h = fig.layout?.height;
  if (h === undefined) return fig;
  try {
    plotHeight(h, "layout.height");
    return fig;
  } catch {
    const { height: _dropped, ...layout } = fig.layout!;
    return { ...fig, layout };
  }
}

/** A marked part read back from a saved notebook; anything malformed is left out (it is shown in the notebook itself). */
function asPart(v: unknown, cell: number): CollectedPart | undefined {
  if (!v || typeof v !== "object") return undefined;
  const p = v as { part?: unknown; title?: unknown; rows?: unknown; text?: unknown };
  if (!partNames.includes(p.part as (typeof partNames)[number])) return undefined;
  const title = typeof p.title === "string" ? p.title : String(p.part);
  if (p.part === "spice-deck") return typeof p.text === "string" ? { cell, part: "spice-deck", title, text: p.text } : undefined;
  if (!Array.isArray(p.rows)) return undefined;
  const rows = p.rows.flatMap((r: unknown) => {
    const x = r as { name?: unknown; text?: unknown; note?: unknown };
    return x && typeof x.name === "string" && typeof x.text === "string" ? [{ name: x.name, text: x.text, ...(typeof x.note === "string" && x.note ? { note: x.note } : {}) }] : [];
  });
  return { cell, part: p.part as "summary" | "corner-spread" | "frequency", title, rows };
}

/** The text a failed cell left: error outputs first, else its stderr. */
function errorLines(outputs: readonly NotebookOutput[], max = 6): string[] {
  const err = outputs.find((o) => o.output_type === "error");
  const text = err ? [`${err.ename ?? "Error"}: ${err.evalue ?? ""}`, ...(err.traceback ?? [])].join("\n") : outputs.filter((o) => o.output_type === "stream" && o.name === "stderr").map((o) => asText(o.text)).join("");
  // Terminal colour codes from tracebacks are not for a report.
  const lines = text.replace(/\x1b\[[0-9;]*m/g, "").split("\n").map((l) => l.trimEnd()).filter((l, i, a) => l !== "" || (i > 0 && a[i - 1] !== ""));
  // Node's "evalmachine.<anonymous>:2" preamble repeats the source; keep from the error line when there is one.
  const at = lines.findIndex((l) => /^[A-Za-z]*Error\b|^\d+:\d+ - /.test(l));
  return (at > 0 ? lines.slice(at) : lines).slice(0, max);
}

export function collect(nb: Notebook, status: ReadonlyMap<number, CellStatus>): Collected {
  const derivations: CollectedDerivation[] = [];
  const plots: CollectedPlot[] = [];
  const parts: CollectedPart[] = [];
  const failures: CellFailure[] = [];
  const skipped: number[] = [];
  nb.cells.forEach((cell, i) => {
    if (cell.cell_type !== "code") return;
    const outputs = Array.isArray(cell.outputs) ? cell.outputs : [];
    for (const o of outputs) {
      if (!o || typeof o !== "object" || !o.data || typeof o.data !== "object") continue;
      const d = jsonPayload(o.data[derivationMime]);
      if (isDerivation(d)) derivations.push({ cell: i, data: d, ...(typeof d.fingerprint === "string" ? { fingerprint: d.fingerprint } : {}) });
      const part = asPart(jsonPayload(o.data[partMime]), i);
      if (part) parts.push(part);
      const p = jsonPayload(o.data[plotMime]);
      const fig = isFigure(p) ? p : isFigure((p as { figure?: unknown })?.figure) ? (p as { figure: PlotFigure }).figure : undefined;
      if (fig) {
        const title = (p as { title?: unknown }).title ?? (fig.layout?.title as { text?: unknown } | string | undefined);
        const t = typeof title === "string" ? title : typeof (title as { text?: unknown })?.text === "string" ? ((title as { text: string }).text) : undefined;
        const summary = (p as { summary?: unknown }).summary;
        plots.push({ cell: i, figure: saneFigure(fig), ...(t ? { title: t } : {}), ...(typeof summary === "string" ? { summary } : {}) });
      }
    }
    const s = status.get(i);
    if (s === "error" || s === "timeout") failures.push({ cell: i, status: s, lines: s === "timeout" ? ["the cell did not finish within the time limit (--timeout)"] : errorLines(outputs), source: cellSource(cell) });
    else if (s === "abort" || s === "not run") skipped.push(i);
  });
  return { derivations, plots, parts, failures, skipped };
}

export interface CheckLine extends CheckEntry {
  readonly derivation: string;
  readonly cell: number;
}

export const allChecks = (c: Collected): CheckLine[] => c.derivations.flatMap((d) => (Array.isArray(d.data.checks) ? d.data.checks : []).map((k) => ({ ...k, derivation: d.data.title, cell: d.cell })));
