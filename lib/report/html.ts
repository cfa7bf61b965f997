/**
 * The standalone run report: one HTML file a reviewer opens offline and signs.
 * It opens with a results box (the verdict, the notebook's summary table with
 * the chosen values, operating point, region and margin, and every design check
 * with pass/fail and margin, the solver's own checks apart), then the design inputs (overrides marked), every
 * derivation with typeset formulas, the corner-spread table, the SPICE deck,
 * the checks with margins, the plots, the fingerprints, the tool version, the
 * date, the notebook path and the cautions. Every string from the notebook or
 * the command line is escaped; scripts and styles come from installed packages.
 */
import escapeHtml from "escape-html";
import type { Dimension } from "../quantity.js";
import { formatQuantity } from "../units/format.js";
import type { CellFailure, CheckLine, CollectedPart, CollectedPlot } from "../runner/collect.js";
import { plotHtml, plotLibraryHtml } from "../plot/html.js";
import { cautionList } from "../record/cautions.js";
import { isBodeFigure } from "../plot/bode.js";
import { splitSolverChecks } from "../record/derivation.js";

/** Marks a file as a pinchoff run report, so a later run may replace it. */
export const reportMarker = '<meta name="generator" content="pinchoff run report">';

export interface ReportInput {
  readonly name: string;
  readonly text: string;
  readonly dim: Dimension;
  readonly value: number;
  readonly overridden: boolean;
  readonly original?: string;
}

export interface ReportDerivation {
  readonly title: string;
  readonly cell: number;
  readonly fingerprint?: string;
  /** Rendered HTML of the derivation (from "pinchoff/render"); trusted markup. */
  readonly html: string;
  /** "frequency": a frequency analysis's record, shown under the frequency heading, apart from the DC record. */
  readonly section?: "frequency";
}

export interface ReportModel {
  readonly title: string;
  readonly notebookPath: string;
  readonly toolVersion: string;
  readonly date: Date;
  readonly sourceFingerprint: string;
  readonly inputsFingerprint: string;
  readonly inputs: readonly ReportInput[];
  readonly derivations: readonly ReportDerivation[];
  readonly checks: readonly CheckLine[];
  readonly plots: readonly CollectedPlot[];
  /** The notebook's marked parts: summary table, corner-spread table, SPICE deck. */
  readonly parts?: readonly CollectedPart[];
  readonly failures: readonly CellFailure[];
  readonly skipped: readonly number[];
  /** <style> elements the derivation markup needs (from "pinchoff/render"), placed once. */
  readonly formulaStyles?: string;
}


const esc = (s: unknown): string => escapeHtml(String(s));
const q = (v: number | null | undefined, dim: Dimension): string => (typeof v === "number" && !Number.isNaN(v) ? formatQuantity(v, dim, { celsius: true }) : "—");

/** JSON inside a <script type="application/json"> block: no "<" survives, so no tag can close it. */

function bound(c: CheckLine): string {
  const parts: string[] = [];
  if (typeof c.min === "number") parts.push(`≥ ${q(c.min, c.dim)}`);
  if (typeof c.max === "number") parts.push(`≤ ${q(c.max, c.dim)}`);
  return parts.join(" and ") || "—";
}

function verdict(m: ReportModel): { cls: string; text: string } {
  const failed = m.checks.filter((c) => !c.passed).length;
  if (m.failures.length) return { cls: "bad", text: `Incomplete: cell ${m.failures[0]!.cell + 1} failed${m.skipped.length ? `, ${m.skipped.length} later cell(s) not run` : ""}` };
  if (failed) return { cls: "bad", text: `${failed} of ${m.checks.length} checks fail` };
  if (!m.checks.length) return { cls: "none", text: "No checks were recorded" };
  return { cls: "good", text: m.checks.length === 1 ? "The check passes" : `All ${m.checks.length} checks pass` };
}

const style = `
:root{--ink:#1d2430;--muted:#5b6472;--line:#d8dce3;--band:#f3f5f8;--good:#17603a;--good-bg:#e3f3ea;--bad:#9c1c1c;--bad-bg:#fbe6e6;--mark:#7a4b00;--mark-bg:#fff3d6}
*{box-sizing:border-box}body{margin:0;font:15px/1.5 system-ui,-apple-system,"Segoe UI",sans-serif;color:var(--ink);background:#fff}
main{max-width:980px;margin:0 auto;padding:24px 28px 48px}
h1{font-size:1.6em;margin:0 0 4px}h2{font-size:1.2em;margin:32px 0 10px;padding-bottom:4px;border-bottom:2px solid var(--ink)}
.sub{color:var(--muted);margin:0 0 16px}
.verdict{padding:10px 14px;border-radius:4px;font-weight:600;margin:12px 0}
.verdict.good{background:var(--good-bg);color:var(--good)}.verdict.bad{background:var(--bad-bg);color:var(--bad)}.verdict.none{background:var(--band)}
table{border-collapse:collapse;width:100%;margin:6px 0 12px}th,td{text-align:left;padding:5px 8px;border-bottom:1px solid var(--line);vertical-align:top}
th{background:var(--band);font-weight:600}td.num{font-variant-numeric:tabular-nums;white-space:nowrap}
.pass{color:var(--good);font-weight:600}.fail{color:var(--bad);font-weight:600}
.set{background:var(--mark-bg);color:var(--mark);border-radius:3px;padding:0 5px;font-size:.85em;font-weight:600}
dl.meta{display:grid;grid-template-columns:max-content 1fr;gap:2px 14px;margin:0}dl.meta dt{color:var(--muted)}dl.meta dd{margin:0;overflow-wrap:anywhere}dl.meta code.fp{overflow-wrap:normal;word-break:normal}
code,pre{font-family:ui-monospace,"DejaVu Sans Mono",monospace;font-size:.9em}pre{background:var(--band);padding:8px 10px;overflow-x:auto;white-space:pre-wrap}
section.derivation{border-left:3px solid var(--line);padding-left:14px;margin:18px 0}
.plot{width:100%;height:420px}
.results{border:2px solid var(--ink);border-radius:6px;padding:4px 16px 8px;margin:16px 0 8px}.results h2{margin-top:12px}.results h3{font-size:1em;margin:14px 0 4px}
.cautions{background:var(--band);padding:10px 14px 10px 30px;border-radius:4px}
footer{margin-top:28px;color:var(--muted);font-size:.85em}
@media print{.plot{page-break-inside:avoid}main{max-width:none}}
`;

export function buildReport(m: ReportModel): string {
  const v = verdict(m);
  const out: string[] = [];
  out.push(`<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8">${reportMarker}`);
  out.push(`<meta name="viewport" content="width=device-width,initial-scale=1"><title>${esc(m.title)} — pinchoff report</title>`);
  out.push(`<style>${style}</style>`);
  if (m.derivations.length && m.formulaStyles) out.push(m.formulaStyles);
  out.push(`</head><body><main>`);
  out.push(`<h1>${esc(m.title)}</h1><p class="sub">Design calculation report from <code>${esc(m.notebookPath)}</code></p>`);
  const parts = m.parts ?? [];
  const table = (p: Extract<CollectedPart, { rows: unknown }>) => {
    const notes = p.rows.some((r) => r.note);
    return `<table data-part="${esc(p.part)}"><thead><tr><th>Quantity</th><th>Value</th>${notes ? "<th>Note</th>" : ""}</tr></thead><tbody>${p.rows.map((r) => `<tr><td>${esc(r.name)}</td><td class="num">${esc(r.text)}</td>${notes ? `<td>${esc(r.note ?? "")}</td>` : ""}</tr>`).join("")}</tbody></table>`;
  };
  const tablesOf = (kind: "summary" | "corner-spread" | "frequency") => parts.filter((p): p is Extract<CollectedPart, { rows: unknown }> => p.part === kind);

  // The results box: what the reviewer signs, first.
  out.push(`<section class="results"><h2>Results</h2>`);
  out.push(`<div class="verdict ${v.cls}">${esc(v.text)}</div>`);
  const summaries = tablesOf("summary");
  if (summaries.length) for (const p of summaries) out.push(`<h3>${esc(p.title)} <small>(cell ${p.cell + 1})</small></h3>${table(p)}`);
  else out.push(`<p>The notebook marked no summary table (show one with <code>showTable(rows, title, { part: "summary" })</code>).</p>`);
  // The design's checks, then the solver's own (KCL residuals) under their own heading, as the records print them.
  const { design, solver } = splitSolverChecks(m.checks);
  const checkTable = (kind: "design" | "solver", cs: readonly CheckLine[]) => {
    out.push(`<table data-checks="${kind}"><thead><tr><th></th><th>Check</th><th>Value</th><th>Required</th><th>Margin</th><th>Derivation</th></tr></thead><tbody>`);
    for (const c of cs)
      out.push(`<tr><td class="${c.passed ? "pass" : "fail"}">${c.passed ? "pass" : "FAIL"}</td><td>${esc(c.title)}${c.detail ? `<br><small>${esc(c.detail)}</small>` : ""}</td><td class="num">${esc(q(c.value, c.dim))}</td><td class="num">${esc(bound(c))}</td><td class="num">${esc(q(c.margin, c.dim))}</td><td>${esc(c.derivation)} <small>(cell ${c.cell + 1})</small></td></tr>`);
    out.push(`</tbody></table>`);
  };
  out.push(`<h3>Checks</h3>`);
  if (!design.length) out.push(`<p>No derivation in this notebook recorded a design check.</p>`);
  else checkTable("design", design);
  if (solver.length) {
    out.push(`<h3>Solver checks</h3><p>The solver's own residuals at the solved operating point (not design requirements); the verdict counts them too.</p>`);
    checkTable("solver", solver);
  }
  out.push(`</section>`);

  out.push(`<h2>Record</h2><dl class="meta">`);
  out.push(`<dt>Notebook</dt><dd><code>${esc(m.notebookPath)}</code></dd>`);
  out.push(`<dt>Run on</dt><dd>${esc(m.date.toISOString())}</dd>`);
  out.push(`<dt>Tool</dt><dd>${esc(m.toolVersion)}</dd>`);
  out.push(`<dt>Notebook fingerprint</dt><dd>${fingerprintCode(m.sourceFingerprint)} (SHA-256 of the source file, before overrides)</dd>`);
  out.push(`<dt>Inputs fingerprint</dt><dd>${fingerprintCode(m.inputsFingerprint)} (SHA-256 of the design inputs as run)</dd>`);
  for (const d of m.derivations) if (d.fingerprint) out.push(`<dt>Derivation fingerprint</dt><dd>${fingerprintCode(d.fingerprint)} — ${esc(d.title)}</dd>`);
  out.push(`</dl>`);

  out.push(`<h2>Design inputs</h2><table><thead><tr><th>Name</th><th>As written</th><th>Value</th><th>Dimension</th><th></th></tr></thead><tbody>`);
  for (const i of m.inputs)
    out.push(`<tr><td><code>${esc(i.name)}</code></td><td><code>${esc(i.text)}</code></td><td class="num">${esc(q(i.value, i.dim))}</td><td>${esc(i.dim)}</td><td>${i.overridden ? `<span class="set">set on the command line</span> notebook value <code>${esc(i.original ?? "")}</code>` : ""}</td></tr>`);
  out.push(`</tbody></table>`);

  if (m.failures.length || m.skipped.length) {
    out.push(`<h2>Cells that failed</h2>`);
    for (const f of m.failures) out.push(`<p class="fail">Cell ${f.cell + 1}: ${f.status === "timeout" ? "timed out" : "raised an error"}</p><pre>${esc(f.lines.join("\n"))}</pre><details><summary>Cell source</summary><pre>${esc(f.source)}</pre></details>`);
    if (m.skipped.length) out.push(`<p>Not run after the failure: cell${m.skipped.length > 1 ? "s" : ""} ${m.skipped.map((i) => i + 1).join(", ")}. Results below are incomplete.</p>`);
  }

  const dcRecords = m.derivations.filter((d) => d.section !== "frequency");
  const freqRecords = m.derivations.filter((d) => d.section === "frequency");
  out.push(`<h2>Derivations</h2>`);
  if (!dcRecords.length) out.push(`<p>No derivation${freqRecords.length ? " other than the frequency analysis" : ""} was displayed by the notebook.</p>`);
  for (const d of dcRecords) out.push(`<section class="derivation" data-cell="${d.cell + 1}">${d.html}</section>`);

  // The frequency response under its own heading: its table (corners, poles, conditions, capacitors), its record, its Bode plot.
  const freqTables = tablesOf("frequency");
  const bode = m.plots.filter((p) => isBodeFigure(p.figure));
  const otherPlots = m.plots.filter((p) => !isBodeFigure(p.figure));
  let libraryPlaced = false;
  const library = () => {
    if (libraryPlaced) return "";
    libraryPlaced = true;
    return plotLibraryHtml();
  };
  if (freqTables.length || freqRecords.length || bode.length) {
    out.push(`<h2>Frequency response</h2><section class="frequency">`);
    out.push(`<p>Hand analysis of the small-signal response: short-circuit time constants for the low corner, open-circuit time constants, the two-pole denominator and the Miller approximation for the upper corner, each with the condition it assumes. Approximate: verify by simulation (the Bode plot overlays ngspice's <code>.ac</code> response when ngspice was available).</p>`);
    for (const p of freqTables) out.push(`<h3>${esc(p.title)} <small>(cell ${p.cell + 1})</small></h3>${table(p)}`);
    for (const d of freqRecords) out.push(`<section class="derivation" data-cell="${d.cell + 1}">${d.html}</section>`);
    if (bode.length) out.push(library());
    for (const p of bode) out.push(plotHtml({ figure: p.figure, title: p.title ?? "Bode plot", ...(p.summary ? { summary: p.summary } : {}) }));
    out.push(`</section>`);
  }

  const spreads = tablesOf("corner-spread");
  if (spreads.length) {
    out.push(`<h2>Spread over the corners</h2>`);
    for (const p of spreads) out.push(`<h3>${esc(p.title)} <small>(cell ${p.cell + 1})</small></h3>${table(p)}`);
  }

  if (otherPlots.length) {
    out.push(`<h2>Plots</h2>`);
    out.push(library());
    for (const p of otherPlots) out.push(plotHtml({ figure: p.figure, title: p.title ?? "plot", ...(p.summary ? { summary: p.summary } : {}) }));
  }

  const decks = parts.filter((p): p is Extract<CollectedPart, { text: string }> => p.part === "spice-deck");
  if (decks.length) {
    out.push(`<h2>SPICE deck</h2><p>For the cross-check by simulation; it runs unchanged in ngspice.</p>`);
    for (const d of decks) out.push(`<pre data-part="spice-deck">${esc(d.text)}</pre>`);
  }

  out.push(`<h2>Cautions</h2><ul class="cautions">${cautionList.map((c) => `<li>${esc(c)}</li>`).join("")}</ul>`);
  out.push(`<footer>Written by ${esc(m.toolVersion)} on ${esc(m.date.toISOString())}. Numbers are SI values shown with three significant digits; the notebook as run and the run record (JSON) beside this file hold the full record.</footer>`);
  out.push(`</main></body></html>\n`);
  return out.join("\n");
}

/**
 * A fingerprint that wraps only between blocks of 8 hex digits (a <wbr> between
 * blocks; copying still gives the unbroken digest), never inside a block.
 */
function fingerprintCode(fp: string): string {
  const blocks = fp.match(/.{1,8}/gs) ?? [fp];
  return `<code class="fp">${blocks.map(esc).join("<wbr>")}</code>`;
}
