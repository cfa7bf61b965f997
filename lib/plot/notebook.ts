/**
 * Plots as notebook outputs: one display_data bundle per plot with our JSON
 * type (the figure spec, read back by the report builder), HTML that draws it
 * and a plain-text fallback. The Plotly library rides inline in the first plot
 * output of a kernel session; later outputs reuse window.Plotly.
 */
import { emit, type MimeBundle } from "../notebook/display.js";
import { plotMimeType, type PlotSpec } from "./figure.js";
import { plotHtml } from "./html.js";

/**
 * "auto": embed the library in the first plot of this kernel session only;
 * "always": embed it in this output too (use for the first plot cell of a
 * notebook, so re-running that cell keeps the saved notebook self-contained);
 * "never": rely on an earlier output.
 */
export type LibraryMode = "auto" | "always" | "never";

// Kept on globalThis so a second copy of this module (a re-import under another path) shares it.
const sentKey = Symbol.for("pinchoff.plot.librarySent");
const state = globalThis as unknown as Record<symbol, boolean | undefined>;

export function plotBundle(spec: PlotSpec, library: boolean): MimeBundle {
  return {
    [plotMimeType]: spec,
    "text/html": plotHtml(spec, { library }),
    "text/plain": spec.summary,
  };
}

/** Show a plot in the running notebook; outside a kernel, print its summary. */
export function showPlot(spec: PlotSpec, opts: { library?: LibraryMode } = {}): void {
  const mode = opts.library ?? "auto";
  const library = mode === "always" || (mode === "auto" && !state[sentKey]);
  if (emit(plotBundle(spec, library))) {
    if (library) state[sentKey] = true;
  } else {
    console.log(spec.summary);
  }
}
