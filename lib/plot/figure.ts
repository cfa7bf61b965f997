/**
 * The figure spec: plain JSON that Plotly draws (data + layout + config) and
 * that the report builder reads back from a notebook's
 * `application/vnd.pinchoff.plot+json` output. Numbers in `figure` are scaled
 * for the axes (e.g. mA); `axes` says how to get back to SI.
 */
import { InputError } from "../errors.js";
import type { Dimension } from "../quantity.js";
import { scaleFor, type Scale } from "../units/format.js";

export const plotMimeType = "application/vnd.pinchoff.plot+json";
export const plotSchema = "pinchoff.plot/1";

export type PlotKind = "output-characteristics" | "transfer-characteristic" | "transconductance" | "measured-against-model" | "fit-residuals" | "validity-map" | "bode";

export interface Trace {
  readonly type: "scatter";
  readonly mode: "lines" | "markers" | "lines+markers" | "markers+text";
  readonly name: string;
  readonly x: number[];
  readonly y: number[];
  readonly yaxis?: "y" | "y2";
  readonly line?: { readonly color: string; readonly width?: number; readonly dash?: "solid" | "dash" | "dot" | "dashdot" };
  readonly marker?: { readonly color: string; readonly size?: number; readonly symbol?: string; readonly line?: { readonly color: string; readonly width: number } };
  readonly text?: string[];
  readonly textposition?: string;
  readonly hovertemplate?: string;
  readonly showlegend?: boolean;
  /** What the trace is, for readers of the JSON (curve, boundary, load line, operating point). */
  readonly meta?: { readonly role: TraceRole; readonly [key: string]: unknown };
}

export type TraceRole = "curve" | "boundary" | "load-line" | "load-curve" | "operating-point" | "threshold" | "gm" | "gm-over-id" | "measured" | "model" | "residual" | "validity" | "magnitude" | "phase" | "corner";

export interface Axis {
  readonly title: { readonly text: string };
  readonly range?: [number, number];
  readonly zeroline?: boolean;
  readonly gridcolor?: string;
  readonly linecolor?: string;
  readonly ticks?: string;
  readonly overlaying?: "y";
  readonly side?: "left" | "right";
  readonly showgrid?: boolean;
  /** Plotly axis type; linear when omitted. */
  readonly type?: "linear" | "log";
}

export interface Layout {
  readonly title: { readonly text: string; readonly x?: number };
  readonly xaxis: Axis;
  readonly yaxis: Axis;
  readonly yaxis2?: Axis;
  readonly legend: Record<string, unknown>;
  readonly margin: { readonly l: number; readonly r: number; readonly t: number; readonly b: number };
  readonly font: { readonly family: string; readonly size: number; readonly color: string };
  readonly paper_bgcolor: string;
  readonly plot_bgcolor: string;
  readonly hovermode: "closest";
  readonly height: number;
  readonly annotations?: ReadonlyArray<Record<string, unknown>>;
}

export interface Figure {
  readonly data: Trace[];
  readonly layout: Layout;
  readonly config: { readonly responsive: boolean; readonly displaylogo: boolean; readonly toImageButtonOptions: { readonly filename: string } };
}

/** How an axis maps back to SI: SI value = plotted value × divisor. */
export interface AxisInfo {
  readonly quantity: string;
  readonly dim: Dimension;
  readonly divisor: number;
  readonly unit: string;
}

export interface PlotSpec {
  readonly schema: typeof plotSchema;
  readonly kind: PlotKind;
  readonly title: string;
  /** One-paragraph plain-text description: the text/plain fallback and the report caption. */
  readonly summary: string;
  readonly axes: { readonly x: AxisInfo; readonly y: AxisInfo; readonly y2?: AxisInfo };
  readonly figure: Figure;
}

/** Our colours: a deep-to-light teal family for the curves, warm accents for the stage. */
export const palette = {
  curves: ["#0b3954", "#087e8b", "#3fa7b5", "#6cc3c9", "#9ad1d4", "#5c7c8a", "#2e5266"],
  highlight: "#c81d25",
  boundary: "#b08930",
  load: "#5b3f8c",
  threshold: "#7a7a7a",
  second: "#d17a22",
  grid: "#e4e8ea",
  axis: "#4a5a63",
  text: "#1d2a30",
} as const;

export function axisInfo(quantity: string, dim: Dimension, scale: Scale): AxisInfo {
  return { quantity, dim, divisor: scale.divisor, unit: scale.unit };
}

export { scaleFor };

/** An axis title such as `I<sub>D</sub> (mA)`; Plotly reads the small HTML subset. */
export const axisTitle = (symbol: string, unit: string): string => (unit ? `${symbol} (${unit})` : symbol);

export function baseLayout(title: string, x: Axis, y: Axis, extra: Partial<Layout> = {}): Layout {
  return {
    title: { text: title, x: 0.02 },
    xaxis: { zeroline: false, gridcolor: palette.grid, linecolor: palette.axis, ticks: "outside", ...x },
    yaxis: { zeroline: false, gridcolor: palette.grid, linecolor: palette.axis, ticks: "outside", ...y },
    legend: { orientation: "v", x: 1.02, y: 1, xanchor: "left", bgcolor: "rgba(255,255,255,0.8)" },
    margin: { l: 70, r: 30, t: 56, b: 60 },
    font: { family: "Helvetica, Arial, sans-serif", size: 13, color: palette.text },
    paper_bgcolor: "#ffffff",
    plot_bgcolor: "#fbfcfc",
    hovermode: "closest",
    height: 420,
    ...extra,
  };
}

export const baseConfig = (filename: string): Figure["config"] => ({
  responsive: true,
  displaylogo: false,
  toImageButtonOptions: { filename },
});

/** Evenly spaced sweep points, validated. */
export function sweep(from: number, to: number, points: number, origin: string): number[] {
  if (!Number.isFinite(from) || !Number.isFinite(to) || !(to > from))
    throw new InputError([from, to], "a sweep range with finite ends and end > start", origin);
  if (!Number.isInteger(points) || points < 2 || points > 20000)
    throw new InputError(points, "a whole number of sweep points from 2 to 20000", `${origin}.points`);
  const out = new Array<number>(points);
  for (let i = 0; i < points; i++) out[i] = from + ((to - from) * i) / (points - 1);
  out[points - 1] = to;
  return out;
}

/** Round for the JSON: 6 significant digits is far finer than a plot can show and keeps outputs small. */
/** A single-point marker trace at plotted (already scaled) coordinates: how every plot marks its bias point. */
export function pointTrace(name: string, x: number, y: number, meta: NonNullable<Trace["meta"]>, extra: Partial<Trace> = {}): Trace {
  return {
    type: "scatter",
    mode: "markers",
    name,
    x: [trim(x)],
    y: [trim(y)],
    marker: { color: palette.highlight, size: 12, symbol: "diamond", line: { color: "#ffffff", width: 1.5 } },
    meta,
    ...extra,
  };
}

export const trim = (v: number): number => (v === 0 || !Number.isFinite(v) ? v : Number(v.toPrecision(6)));
export const scaled = (values: readonly number[], divisor: number): number[] => values.map((v) => trim(v / divisor));
