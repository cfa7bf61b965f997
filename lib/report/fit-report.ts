/**
 * The fit report: one standalone HTML page (plots drawn offline by the
 * embedded library) per `pinchoff fit` run. Per fitted device: the model and
 * its source, the window, the parameters with their standard errors, the
 * error table (inside the window; over every point, per region), the
 * stretches of each measured curve where the model holds within ±5 % and
 * ±10 %, the figures, and the cautions.
 */
import escapeHtml from "escape-html";
import type { FitResult } from "../fit/fit.js";
import { describeWindow } from "../fit/fit.js";
import { regionNames, type ErrorSummary } from "../fit/accuracy.js";
import type { Sweep } from "../measure/select.js";
import { fitFigures } from "../plot/fit.js";
import { plotHtml, plotLibraryHtml } from "../plot/html.js";
import { cautionList } from "../record/cautions.js";

export const fitReportMarker = '<meta name="generator" content="pinchoff fit report">';

const pct = (v?: number) => (v === undefined ? "–" : `${(100 * v).toFixed(v < 0.1 ? 2 : 1)} %`);
const num = (v: number) => (Number.isFinite(v) ? String(+v.toPrecision(4)) : "not determined");
const um = (m: number) => `${+(m * 1e6).toPrecision(4)} µm`;

function errorRow(name: string, e: ErrorSummary): string {
  return `<tr><td>${escapeHtml(name)}</td><td>${e.points}</td><td>${pct(e.rms)}</td><td>${pct(e.p95)}</td><td>${pct(e.max)}</td></tr>`;
}

function section(fit: FitResult, s: Sweep): string {
  const d = fit.device;
  const params = fit.parameters
    .map((p) => `<tr><td>${escapeHtml(p.name)}</td><td>${num(p.value)}</td><td>${p.held ? "held (no data for it in the window)" : Number.isFinite(p.stdErr) ? `± ${num(p.stdErr)}` : "not determined (at its bound or not separable)"}</td><td>${escapeHtml(p.unit)}</td><td>${escapeHtml(p.meaning)}</td></tr>`)
    .join("");
  const regions = regionNames.map((r) => errorRow(r, fit.accuracy.regions[r])).join("");
  const curves = fit.accuracy.map
    .map((c) => {
      const fixed = c.kind === "transfer" ? `VDS = ${c.fixed.vds} V, VBS = ${c.fixed.vbs} V` : `VGS = ${c.fixed.vgs} V, VBS = ${c.fixed.vbs} V`;
      const x = c.kind === "transfer" ? "VGS" : "VDS";
      const span = (r: [number, number][]) => (r.length ? r.map(([a, b]) => (a === b ? `${a}` : `${a} to ${b}`)).join("; ") + " V" : "nowhere");
      return `<tr><td>${c.kind}</td><td>${fixed}</td><td>${x} ${span(c.within5)}</td><td>${x} ${span(c.within10)}</td></tr>`;
    })
    .join("");
  const verdict = fit.meetsTarget ? `meets the target RMS of ${pct(fit.target)} in its window` : `does <strong>not</strong> reach the target RMS of ${pct(fit.target)} in any window tried; the narrowest is shown`;
  return `<section>
<h2>${escapeHtml(d.polarity.toUpperCase())} W = ${um(d.w)}, L = ${um(d.l)}, ${(d.temp - 273.15).toFixed(1)} °C${d.corner ? `, ${escapeHtml(d.corner)}` : ""}</h2>
<p>Model: ${escapeHtml(fit.title)} (${escapeHtml(fit.source)}). Data: ${escapeHtml(d.origin)}, ${d.points} points. Window (${fit.window.chosen === "auto" ? "chosen automatically" : "set by the user"}): ${escapeHtml(describeWindow(fit.window))}, ${fit.window.points} points, |VGS| ${num(Math.abs(fit.window.vgs[0]))} to ${num(Math.abs(fit.window.vgs[1]))} V; the fit ${verdict}. Start: threshold ${num(fit.start.vt)} V by ${fit.start.method} at |VDS| = ${fit.start.vds} V. Levenberg–Marquardt stopped by ${fit.stop} after ${fit.iterations} iterations.</p>
<h3>Parameters</h3>
<table><thead><tr><th>parameter</th><th>value</th><th>standard error</th><th>unit</th><th>meaning</th></tr></thead><tbody>${params}</tbody></table>
<h3>Relative error (model − measured)/measured, points with |ID| ≥ ${fit.accuracy.minCurrent} A</h3>
<table><thead><tr><th>where</th><th>points</th><th>RMS</th><th>95th percentile</th><th>maximum</th></tr></thead><tbody>
${errorRow("inside the window", fit.inWindow)}${errorRow("every point", fit.accuracy.overall)}${regions}</tbody></table>
<h3>Where the model holds</h3>
<table><thead><tr><th>curve</th><th>fixed</th><th>within ±5 %</th><th>within ±10 %</th></tr></thead><tbody>${curves}</tbody></table>
${fitFigures(fit, s).map((f) => plotHtml(f)).join("\n")}
</section>`;
}

/** Parameters against L when several lengths of one width were fitted (the card set's rows). */
function againstLength(fits: readonly { fit: FitResult }[]): string {
  if (fits.length < 2) return "";
  const names = fits[0]!.fit.parameters.map((p) => p.name);
  const head = names.map((n) => `<th>${escapeHtml(n)} (${escapeHtml(fits[0]!.fit.parameters.find((p) => p.name === n)!.unit)})</th>`).join("");
  const rows = [...fits]
    .sort((a, b) => a.fit.device.l - b.fit.device.l)
    .map(({ fit }) => `<tr><td>${um(fit.device.l)}</td>${fit.parameters.map((p) => `<td>${p.held ? "–" : num(p.value)}</td>`).join("")}<td>${pct(fit.inWindow.rms)}</td></tr>`)
    .join("");
  return `<h2>Parameters against L</h2><p>One fit per drawn length; the card set interpolates these in 1/L (– : not fitted, no data for it in the window).</p><table><thead><tr><th>L</th>${head}<th>RMS in window</th></tr></thead><tbody>${rows}</tbody></table>`;
}

/** The whole page for one or more fits. */
export function fitReportHtml(title: string, fits: readonly { fit: FitResult; sweep: Sweep }[]): string {
  return `<!doctype html><html lang="en"><head><meta charset="utf-8">${fitReportMarker}<title>${escapeHtml(title)}</title>
<style>body{font:15px/1.45 Helvetica,Arial,sans-serif;color:#1d2a30;max-width:980px;margin:2em auto;padding:0 1em}table{border-collapse:collapse;margin:.5em 0}td,th{border-bottom:1px solid #d8dee1;padding:.2em .6em;text-align:left}th{background:#eef3f4}h2{border-top:2px solid #087e8b;padding-top:.6em;margin-top:2em}.cautions{background:#fbf6ea;border-left:4px solid #b08930;padding:.5em 1em}</style>
</head><body><h1>${escapeHtml(title)}</h1>
<div class="cautions"><p><strong>Cautions.</strong> A fitted model describes the measured device inside the ranges shown here and nowhere else.</p><ul>${cautionList.map((c) => `<li>${escapeHtml(c)}</li>`).join("")}</ul></div>
${plotLibraryHtml()}
${againstLength(fits)}
${fits.map((f) => section(f.fit, f.sweep)).join("\n")}
</body></html>`;
}
