/**
 * Figures of a fit: measured points against the fitted model (transfer curves
 * on a log current axis, output curves on a linear one), the relative
 * residuals, and the validity map (every measured point in the VGS × VDS
 * plane, coloured by whether the model holds within ±5 %, ±10 % or neither).
 * Built from a `FitResult` and the sweep it was fitted to; the model's currents
 * are those the fit computed at the measured points.
 */
import type { FitResult } from "../fit/fit.js";
import type { Sweep } from "../measure/select.js";
import { axisTitle, baseConfig, baseLayout, palette, plotSchema, scaleFor, trim, type PlotSpec, type Trace } from "./figure.js";

const colour = (i: number) => palette.curves[i % palette.curves.length]!;
export const validityColours = { within5: "#2b8a3e", within10: "#d9a400", outside: palette.highlight } as const;

function figure(kind: PlotSpec["kind"], title: string, summary: string, x: { sym: string; unit: string; dim: "voltage" }, y: { sym: string; unit: string; divisor: number; dim: "current" | "fraction" | "voltage"; log?: boolean }, data: Trace[]): PlotSpec {
  return {
    schema: plotSchema,
    kind,
    title,
    summary,
    axes: { x: { quantity: x.sym, dim: x.dim, divisor: 1, unit: x.unit }, y: { quantity: y.sym, dim: y.dim, divisor: y.divisor, unit: y.unit } },
    figure: {
      data,
      layout: baseLayout(title, { title: { text: axisTitle(x.sym, x.unit) } }, { title: { text: axisTitle(y.sym, y.unit) }, ...(y.log ? { type: "log" as const } : {}) }),
      config: baseConfig(kind),
    },
  };
}

/** Measured against model, residuals and validity map for one fit. */
export function fitFigures(fit: FitResult, s: Sweep): PlotSpec[] {
  const map = fit.accuracy.map;
  const model = fit.accuracy.model;
  const sign = s.polarity === "nmos" ? 1 : -1;
  const index = new Map<string, number>();
  for (let i = 0; i < s.id.length; i++) index.set(`${s.vgs[i]!.toPrecision(6)}|${s.vds[i]!.toPrecision(6)}|${s.vbs[i]!.toPrecision(6)}`, i);
  const at = (vgs: number, vds: number, vbs: number) => index.get(`${vgs.toPrecision(6)}|${vds.toPrecision(6)}|${vbs.toPrecision(6)}`)!;
  const transfer = map.filter((c) => c.kind === "transfer");
  const output = map.filter((c) => c.kind === "output" && c.fixed.vbs === 0);
  let imax = 0;
  for (let i = 0; i < s.id.length; i++) imax = Math.max(imax, Math.abs(s.id[i]!));
  const iscale = scaleFor([imax], "current");
  const label = `${fit.title}, ${s.polarity} W/L = ${trim(s.w * 1e6)}/${trim(s.l * 1e6)} µm, ${trim(s.temp - 273.15)} °C`;
  const curveTraces = (curves: typeof map, xOf: (c: (typeof map)[number]) => number[], name: (c: (typeof map)[number]) => string, abs: boolean, divisor: number) =>
    curves.flatMap((c, k) => {
      const idx = c.x.map((x) => (c.kind === "transfer" ? at(x, c.fixed.vds!, c.fixed.vbs) : at(c.fixed.vgs!, x, c.fixed.vbs)));
      const f = (v: number) => trim((abs ? Math.abs(v) : v) / divisor);
      const keep = abs ? idx.map((i) => Math.abs(s.id[i]!) >= fit.accuracy.minCurrent) : idx.map(() => true);
      const xs = xOf(c).filter((_, j) => keep[j]);
      return [
        { type: "scatter", mode: "markers", name: `measured ${name(c)}`, x: xs, y: idx.filter((_, j) => keep[j]).map((i) => f(s.id[i]!)), marker: { color: colour(k), size: 5 }, meta: { role: "measured" } },
        { type: "scatter", mode: "lines", name: `model ${name(c)}`, x: xs, y: idx.filter((_, j) => keep[j]).map((i) => f(model[i]!)), line: { color: colour(k), width: 2 }, showlegend: false, meta: { role: "model" } },
      ] as Trace[];
    });
  const vName = (v: number) => `${trim(v)} V`;
  const figs: PlotSpec[] = [];
  if (transfer.length)
    figs.push(
      figure("measured-against-model", `Transfer curves, log scale: ${label}`, `Measured |ID| (markers) and the fitted model (lines) against VGS at fixed VDS and VBS, on a log axis, points with |ID| ≥ ${fit.accuracy.minCurrent} A.`, { sym: "V<sub>GS</sub>", unit: "V", dim: "voltage" }, { sym: "|I<sub>D</sub>|", unit: "A", divisor: 1, dim: "current", log: true },
        curveTraces(transfer, (c) => c.x, (c) => `VDS=${vName(c.fixed.vds!)} VBS=${vName(c.fixed.vbs)}`, true, 1)),
    );
  if (output.length)
    figs.push(
      figure("measured-against-model", `Output curves: ${label}`, `Measured ID (markers) and the fitted model (lines) against VDS at fixed VGS, VBS = 0, in ${iscale.unit}.`, { sym: "V<sub>DS</sub>", unit: "V", dim: "voltage" }, { sym: "I<sub>D</sub>", unit: iscale.unit, divisor: iscale.divisor, dim: "current" },
        curveTraces(output, (c) => c.x, (c) => `VGS=${vName(c.fixed.vgs!)}`, false, iscale.divisor)),
    );
  const residual = (curves: typeof map, name: (c: (typeof map)[number]) => string) =>
    curves.map((c, k) => ({ type: "scatter", mode: "lines+markers", name: name(c), x: c.x.filter((_, j) => c.error[j] !== null), y: c.error.filter((e) => e !== null).map((e) => trim(100 * e!)), line: { color: colour(k), width: 1 }, marker: { color: colour(k), size: 4 }, meta: { role: "residual" } }) as Trace);
  figs.push(
    figure("fit-residuals", `Relative error against VGS (transfer curves): ${label}`, "Model minus measured over measured, in %, per transfer curve; points below the current floor left out.", { sym: "V<sub>GS</sub>", unit: "V", dim: "voltage" }, { sym: "error", unit: "%", divisor: 0.01, dim: "fraction" },
      residual(transfer, (c) => `VDS=${vName(c.fixed.vds!)} VBS=${vName(c.fixed.vbs)}`)),
    figure("fit-residuals", `Relative error against VDS (output curves): ${label}`, "Model minus measured over measured, in %, per output curve.", { sym: "V<sub>DS</sub>", unit: "V", dim: "voltage" }, { sym: "error", unit: "%", divisor: 0.01, dim: "fraction" },
      residual(output, (c) => `VGS=${vName(c.fixed.vgs!)}`)),
  );
  // Validity map over the VGS × VDS plane, VBS = 0 points.
  const bands = { within5: { x: [] as number[], y: [] as number[], t: [] as string[] }, within10: { x: [] as number[], y: [] as number[], t: [] as string[] }, outside: { x: [] as number[], y: [] as number[], t: [] as string[] } };
  for (let i = 0; i < s.id.length; i++) {
    const e = fit.accuracy.error[i]!;
    if (Number.isNaN(e) || s.vbs[i] !== 0) continue;
    const b = Math.abs(e) <= 0.05 ? bands.within5 : Math.abs(e) <= 0.1 ? bands.within10 : bands.outside;
    b.x.push(trim(sign * s.vds[i]!));
    b.y.push(trim(sign * s.vgs[i]!));
    b.t.push(`${trim(100 * e)} %`);
  }
  const names = { within5: "within ±5 %", within10: "within ±10 %", outside: "beyond ±10 %" } as const;
  figs.push({
    ...figure("validity-map", `Where the model holds: ${label}`, `Each measured point (VBS = 0, |ID| ≥ ${fit.accuracy.minCurrent} A) in the |VDS| × |VGS| plane, coloured by the model's relative error: within ±5 %, within ±10 %, beyond.`, { sym: "|V<sub>DS</sub>|", unit: "V", dim: "voltage" }, { sym: "|V<sub>GS</sub>|", unit: "V", divisor: 1, dim: "voltage" },
      (Object.keys(bands) as (keyof typeof bands)[]).map((k) => ({ type: "scatter", mode: "markers", name: names[k], x: bands[k].x, y: bands[k].y, text: bands[k].t, hovertemplate: "VDS %{x} V, VGS %{y} V: %{text}<extra></extra>", marker: { color: validityColours[k], size: 6, symbol: "square" }, meta: { role: "validity", band: k } }) as Trace)),
  });
  return figs;
}
