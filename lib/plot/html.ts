/**
 * HTML for a figure spec, drawn by Plotly in the page, with no network access:
 * the library is embedded once per page (see `plotLibraryHtml`) and every plot
 * waits for it, so a plot placed above the library in a page (an nbconvert
 * export of cells run out of order) still draws. Used by notebook outputs and
 * reports alike.
 */
import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import escapeHtml from "escape-html";
import { InputError, PinchoffError } from "../errors.js";
import type { PlotSpec } from "./figure.js";

/** Event the library script fires once window.Plotly exists. */
export const plotReadyEvent = "pinchoff-plotly-ready";

let librarySource: { version: string; code: string } | undefined;

/** The Plotly bundle installed with pinchoff (plotly.js-basic-dist-min: scatter traces are all pinchoff draws), read once. */
export function plotLibrary(): { version: string; code: string } {
  if (librarySource) return librarySource;
  const req = createRequire(import.meta.url);
  let file: string;
  let version = "unknown";
  try {
    file = req.resolve("plotly.js-basic-dist-min");
    version = (req("plotly.js-basic-dist-min/package.json") as { version: string }).version;
  } catch (e) {
    throw new PinchoffError("io", `the plotting library plotly.js-basic-dist-min is not installed (${(e as Error).message}); run npm install`, "plot library");
  }
  // Inline in a <script>: no "</script" or "<!--" may appear in the text (both only occur inside string literals, where \x3C is the same character).
  const code = readFileSync(file, "utf8").replace(/<\/(script)/gi, "\\x3C/$1").replace(/<!--/g, "\\x3C!--");
  librarySource = { version, code };
  return librarySource;
}

/**
 * One <script> that defines window.Plotly unless the page has it already, then
 * tells waiting plots. AMD/CommonJS globals (the classic Notebook loads
 * RequireJS) are shadowed so the bundle always sets window.Plotly.
 */
export function plotLibraryHtml(): string {
  const { version, code } = plotLibrary();
  return (
    `<script data-pinchoff-plot-library="${escapeHtml(version)}">/* plotly.js ${version} (MIT licence), embedded by pinchoff so plots draw offline */\n` +
    `if (!window.Plotly) { (function (define, module, exports) {\n${code}\n}).call(window); }\n` +
    `window.dispatchEvent(new Event(${JSON.stringify(plotReadyEvent)}));</script>`
  );
}

let counter = 0;
const plotId = () => `pinchoff-plot-${Date.now().toString(36)}-${(counter++).toString(36)}-${Math.random().toString(36).slice(2, 8)}`;

/** JSON safe inside a <script>: no "</script>", no "<!--". */
const scriptJson = (value: unknown): string => JSON.stringify(value).replace(/</g, "\\u003c").replace(/\u2028/g, "\\u2028").replace(/\u2029/g, "\\u2029");

export interface PlotHtmlOptions {
  /** Prepend the library script (once per page). */
  readonly library?: boolean;
  /** CSS height of the plot box in px; the layout's height unless told. */
  readonly height?: number;
}

/** What plotHtml draws: a whole spec, or a figure read back from a saved notebook with its title. */
export type DrawablePlot = Pick<PlotSpec, "title"> & Partial<Pick<PlotSpec, "summary" | "kind">> & { readonly figure: { readonly data: unknown; readonly layout?: { readonly height?: number }; readonly config?: unknown } };

/** Plot heights a page accepts, in CSS px. */
export const plotHeightRange = { min: 50, max: 10_000, default: 420 } as const;

/** A height that may go into a style attribute: a finite number of px in range, nothing else (a string could carry markup). */
export function plotHeight(value: unknown, origin: string): number {
  if (value === undefined) return plotHeightRange.default;
  if (typeof value !== "number" || !Number.isFinite(value) || value < plotHeightRange.min || value > plotHeightRange.max)
    throw new InputError(value, `a plot height in px, a number from ${plotHeightRange.min} to ${plotHeightRange.max}`, origin);
  return value;
}

/** Trace types the embedded bundle (plotly.js-basic-dist-min) draws; any other would leave an empty box. */
export const drawableTraceTypes: readonly string[] = ["scatter", "bar", "pie"];

function checkTraceTypes(spec: DrawablePlot): void {
  const data = spec.figure.data;
  if (!Array.isArray(data)) return;
  for (const t of data as Array<{ type?: unknown }>)
    if (t && t.type !== undefined && !drawableTraceTypes.includes(t.type as string))
      throw new InputError(t.type, `a trace type the embedded plotting bundle draws (${drawableTraceTypes.join(", ")})`, `plot "${spec.title}" trace type`);
}

/** A figure as an HTML fragment: a box, a note shown until drawn, and the drawing script. Every value in an attribute is escaped or checked. */
export function plotHtml(spec: DrawablePlot, opts: PlotHtmlOptions = {}): string {
  checkTraceTypes(spec);
  const id = plotId();
  const height = opts.height !== undefined ? plotHeight(opts.height, "plot height option") : plotHeight(spec.figure.layout?.height, `layout.height of plot "${spec.title}"`);
  const note =
    `Plot “${escapeHtml(spec.title)}” is drawn by the embedded plotting library. If this text stays, the library is not in this page: ` +
    `run the notebook again from the top (restart the kernel and run all cells), so the first plot output carries it.`;
  const script = `(function () {
  var id = ${JSON.stringify(id)}, spec = ${scriptJson(spec.figure)}, tries = 0;
  function draw() {
    var el = document.getElementById(id);
    if (!el) { if (tries++ < 100) setTimeout(draw, 50); return; }
    if (!window.Plotly || el.getAttribute("data-drawn")) return;
    el.setAttribute("data-drawn", "1");
    window.Plotly.newPlot(el, spec.data, spec.layout || {}, spec.config || {}).then(function () {
      var n = document.getElementById(id + "-note"); if (n) n.style.display = "none";
    });
  }
  if (window.Plotly) draw(); else window.addEventListener(${JSON.stringify(plotReadyEvent)}, draw);
})();`;
  return (
    (opts.library ? plotLibraryHtml() : "") +
    `<figure class="pinchoff-plot" data-plot-kind="${escapeHtml(spec.kind ?? "figure")}" style="margin:0.5em 0;max-width:900px">` +
    `<div id="${id}" class="pinchoff-plot-area" style="width:100%;height:${height}px"></div>` +
    `<p id="${id}-note" class="pinchoff-plot-note" style="font:12px sans-serif;color:#555">${note}</p>` +
    (spec.summary ? `<figcaption style="font:12px sans-serif;color:#333">${escapeHtml(spec.summary)}</figcaption>` : "") +
    `<script>${script}</script></figure>`
  );
}
