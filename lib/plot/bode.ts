/**
 * Bode plot of a stage: magnitude (dB) and phase (degrees, right axis) of the
 * hand-analysis transfer function, the simulated response overlaid when one is
 * given (lib/bias/frequency-sim.ts), and the corners and poles marked.
 */
import { InputError } from "../errors.js";
import { handResponse, type FrequencyAnalysis } from "../bias/frequency.js";
import type { SimulatedResponse } from "../bias/frequency-sim.js";
import { formatQuantity } from "../units/format.js";
import { axisTitle, baseConfig, baseLayout, palette, plotSchema, trim, type PlotSpec, type Trace } from "./figure.js";

export interface BodeOptions {
  readonly title?: string;
  /** Sweep; by default two decades beyond each corner, 40 points a decade. */
  readonly from?: number;
  readonly to?: number;
  readonly simulated?: SimulatedResponse;
}

const db = (x: number) => 20 * Math.log10(x);

/** Whether a figure (its JSON form) is a Bode plot: a trace carries the magnitude role `bodePlot` gives it. */
export function isBodeFigure(figure: { readonly data: readonly unknown[] }): boolean {
  return figure.data.some((t) => (t as { meta?: { role?: unknown } } | null)?.meta?.role === "magnitude");
}

export function bodePlot(fa: FrequencyAnalysis, opts: BodeOptions = {}): PlotSpec {
  const hi = fa.high.corner;
  const top = Number.isFinite(hi) ? hi * 100 : fa.high.octcCorner * 100;
  const lo = fa.low && fa.low.corner > 0 ? fa.low.corner / 100 : top / 1e8;
  const from = opts.from ?? 10 ** Math.floor(Math.log10(lo));
  const to = opts.to ?? 10 ** Math.ceil(Math.log10(top));
  if (!(from > 0) || !(to > from) || !Number.isFinite(to)) throw new InputError([from, to], "a frequency range 0 < from < to in Hz", "bodePlot");
  const n = Math.min(4000, Math.max(2, Math.round(Math.log10(to / from) * 40) + 1));
  const f = Array.from({ length: n }, (_, i) => from * (to / from) ** (i / (n - 1)));
  const h = handResponse(fa, f);
  const data: Trace[] = [
    { type: "scatter", mode: "lines", name: "|H| hand analysis", x: f.map(trim), y: h.magnitude.map((m) => trim(db(m))), line: { color: palette.curves[0]!, width: 2.4 }, meta: { role: "magnitude", source: "hand" } },
    { type: "scatter", mode: "lines", name: "phase hand analysis", x: f.map(trim), y: h.phaseDeg.map(trim), yaxis: "y2", line: { color: palette.curves[2]!, width: 1.6, dash: "dash" }, meta: { role: "phase", source: "hand" } },
  ];
  const sim = opts.simulated;
  if (sim) {
    data.push(
      { type: "scatter", mode: "lines", name: "|H| simulated", x: sim.frequency.map(trim), y: sim.magnitude.map((m) => trim(db(m))), line: { color: palette.second, width: 1.4, dash: "dot" }, meta: { role: "magnitude", source: sim.source } },
      { type: "scatter", mode: "lines", name: "phase simulated", x: sim.frequency.map(trim), y: sim.phaseDeg.map(trim), yaxis: "y2", line: { color: palette.boundary, width: 1.2, dash: "dot" }, meta: { role: "phase", source: sim.source } },
    );
  }
  const mid = db(Math.abs(fa.midbandGain));
  const marks: Array<[string, number]> = [];
  if (fa.low && fa.low.corner > 0) marks.push([`f<sub>L</sub> = ${formatQuantity(fa.low.corner, "frequency")}`, fa.low.corner]);
  if (Number.isFinite(fa.high.corner)) marks.push([`f<sub>H</sub> = ${formatQuantity(fa.high.corner, "frequency")}`, fa.high.corner]);
  if (fa.high.nonDominantPole && fa.high.nonDominantPole < to) marks.push([`f<sub>p2</sub> = ${formatQuantity(fa.high.nonDominantPole, "frequency")}`, fa.high.nonDominantPole]);
  for (const [name, x] of marks)
    data.push({ type: "scatter", mode: "markers", name, x: [trim(x)], y: [trim(name.startsWith("f<sub>p2") ? db(h.magnitude[nearest(f, x)]!) : mid - 3.0103)], marker: { color: palette.highlight, size: 11, symbol: "diamond", line: { color: "#ffffff", width: 1.5 } }, meta: { role: "corner", frequency: x } });
  const title = opts.title ?? `Frequency response, ${fa.view}`;
  // A current-driven stage (the mirror) has a transimpedance: its magnitude is in dB relative to 1 V/A.
  const unit = fa.drive === "current" ? "dBΩ" : "dB";
  const summary =
    `${title}: midband ${fa.drive === "current" ? "transimpedance" : "gain"} ${trim(fa.midbandGain)}${fa.drive === "current" ? " V/A" : ""} (${trim(mid)} ${unit})` +
    (fa.low && fa.low.corner > 0 ? `, low corner ${formatQuantity(fa.low.corner, "frequency")} (short-circuit sum ${formatQuantity(fa.low.sctcCorner, "frequency")})` : "") +
    (Number.isFinite(fa.high.corner) ? `, upper corner ${formatQuantity(fa.high.corner, "frequency")} (open-circuit estimate ${formatQuantity(fa.high.octcCorner, "frequency")})` : ", no upper −3 dB corner") +
    `. Hand-analysis transfer function${sim ? `; dotted: ${sim.source}` : ""}.`;
  return {
    schema: plotSchema,
    kind: "bode",
    title,
    summary,
    axes: { x: { quantity: "f", dim: "frequency", divisor: 1, unit: "Hz" }, y: { quantity: "|H|", dim: "dimensionless", divisor: 1, unit }, y2: { quantity: "phase", dim: "dimensionless", divisor: 1, unit: "°" } },
    figure: {
      data,
      layout: baseLayout(
        title,
        { title: { text: axisTitle("f", "Hz") }, type: "log" },
        { title: { text: axisTitle("|H|", unit) } },
        { yaxis2: { title: { text: axisTitle("phase", "°") }, overlaying: "y", side: "right", showgrid: false, zeroline: false } },
      ),
      config: baseConfig("bode"),
    },
  };
}

function nearest(xs: readonly number[], x: number): number {
  let k = 0;
  for (let i = 1; i < xs.length; i++) if (Math.abs(Math.log(xs[i]! / x)) < Math.abs(Math.log(xs[k]! / x))) k = i;
  return k;
}
