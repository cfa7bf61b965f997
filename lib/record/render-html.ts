/**
 * Self-contained HTML rendering of derivations. Formulas are typeset here, on
 * the server side, with KaTeX (`renderToString`), so the page needs no script
 * and no network: KaTeX's stylesheet is inlined with its WOFF2 fonts embedded
 * as data URLs. A lighter form, `math: "mathml"`, emits MathML only (drawn by
 * the browser itself, no stylesheet or fonts), which suits notebook outputs.
 *
 * The head pieces (`htmlStyles`) are exported apart from the body
 * (`renderHtmlFragment`) so a report can hold many derivations and plots with
 * KaTeX's stylesheet once. Every user string is escaped with escape-html.
 */
import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import { dirname, join } from "node:path";
import escapeHtml from "escape-html";
import katex from "katex";
import { PinchoffError } from "../errors.js";
import { formatQuantity } from "../units/format.js";
import type { DerivationData, FormulaStep, Step } from "./derivation.js";
import { fingerprint, shortFingerprint } from "./fingerprint.js";
import { asList, boundText, cautions, checkGroups, fingerprintOf, marginText, noInputsNote, shortFingerprintOf, valueText, verdict, type DerivationLike, type RenderOptions } from "./render-parts.js";
import { stepTex } from "./substitute.js";
import { pinchoffCss } from "./styles.js";

/** "katex": KaTeX HTML+MathML, needs `htmlStyles({ katex: true })` in the page; "mathml": MathML only. */
export type MathOutput = "katex" | "mathml";

export interface HtmlOptions extends RenderOptions {
  readonly math?: MathOutput;
}

const esc = (s: string): string => escapeHtml(s);

let katexCssCache: string | undefined;

/** KaTeX's stylesheet with its WOFF2 fonts inlined as data URLs (other font formats dropped: every current browser reads WOFF2). */
export function katexCss(): string {
  if (katexCssCache) return katexCssCache;
  const req = createRequire(import.meta.url);
  let cssPath: string;
  try {
    cssPath = req.resolve("katex/dist/katex.min.css");
  } catch (e) {
    throw new PinchoffError("io", `KaTeX's stylesheet was not found (${(e as Error).message}); reinstall the npm package katex`, "katex/dist/katex.min.css");
  }
  const dir = dirname(cssPath);
  const css = readFileSync(cssPath, "utf8");
  katexCssCache = css.replace(/src:([^;}]+)/g, (whole, list: string) => {
    const m = /url\(([^)]+\.woff2)\)/.exec(list);
    if (!m) return whole;
    const file = join(dir, m[1]!.replace(/^["']|["']$/g, ""));
    let data: Buffer;
    try {
      data = readFileSync(file);
    } catch (e) {
      throw new PinchoffError("io", `KaTeX font missing (${(e as Error).message})`, file);
    }
    return `src:url(data:font/woff2;base64,${data.toString("base64")}) format("woff2")`;
  });
  return katexCssCache;
}

/** The `<style>` elements a page needs once: KaTeX's (for math "katex") and ours. */
export function htmlStyles(opts: { readonly katex?: boolean } = {}): string {
  return `${opts.katex === false ? "" : `<style data-pinchoff="katex">${katexCss()}</style>\n`}<style data-pinchoff="record">${pinchoffCss}</style>`;
}

/** Typeset one TeX string; a TeX error shows as red source text (KaTeX's errorColor) instead of stopping the report. */
export function typeset(tex: string, math: MathOutput = "katex", display = true): string {
  return katex.renderToString(tex, { displayMode: display, output: math === "mathml" ? "mathml" : "htmlAndMathml", throwOnError: false });
}

function formulaStep(s: FormulaStep, opts: HtmlOptions): string {
  const math = opts.math ?? "katex";
  const t = stepTex(s, opts);
  return [
    `<li class="po-formula" data-formula="${esc(s.formula)}">`,
    `<div class="po-step-title">${esc(s.title)}${s.because ? `<span class="po-because">${esc(s.because)}</span>` : ""}</div>`,
    `<div class="po-eq">${typeset(t.formula, math)}</div>`,
    `<div class="po-eq">${typeset(t.substituted, math)}</div>`,
    `<div class="po-eq po-result">${typeset(t.result, math)}</div>`,
    s.source ? `<div class="po-source">${esc(s.source)}</div>` : "",
    `</li>`,
  ].join("");
}

function step(s: Step, opts: HtmlOptions): string {
  if (s.kind === "formula") return formulaStep(s, opts);
  return `<li class="po-note"><div class="po-step-title">${esc(s.title)}</div><p>${esc(s.text)}</p></li>`;
}

function record(d: DerivationData, opts: HtmlOptions): string {
  const v = verdict(d);
  const out: string[] = [];
  out.push(`<section class="po-record" data-fingerprint="${esc(fingerprintOf(d))}">`);
  out.push(`<h2 class="po-title">${esc(d.title)}</h2>`);
  if (d.subtitle) out.push(`<p class="po-subtitle">${esc(d.subtitle)}</p>`);
  out.push(
    `<div class="po-meta"><span class="po-verdict ${v.passed ? "po-ok" : "po-bad"}">${v.passed ? "✓" : "✗"} ${esc(v.text)}</span><span>inputs <code title="SHA-256 of the canonical inputs: ${esc(fingerprintOf(d))}">${esc(shortFingerprintOf(d))}</code>${esc(noInputsNote(d))}</span></div>`,
  );
  if (d.inputs.length) {
    out.push(`<h3 class="po-part">Given</h3><table class="po-inputs"><thead><tr><th>Quantity</th><th>Value</th><th>From</th></tr></thead><tbody>`);
    for (const i of d.inputs)
      out.push(
        `<tr><td>${esc(i.name)}</td><td class="po-num">${esc(formatQuantity(i.value, i.dim, { ...opts, origin: `input ${i.name}` }))}</td><td>${esc(i.origin ?? "")}${i.text ? ` <code>${esc(i.text)}</code>` : ""}</td></tr>`,
      );
    out.push(`</tbody></table>`);
  }
  if (d.steps.length) out.push(`<h3 class="po-part">Working</h3><ol class="po-steps">${d.steps.map((s) => step(s, opts)).join("")}</ol>`);
  for (const g of checkGroups(d)) {
    out.push(`<h3 class="po-part">${esc(g.heading)}</h3><table class="po-checks"><thead><tr><th></th><th>Check</th><th>Value</th><th>Required</th><th>Margin</th></tr></thead><tbody>`);
    for (const c of g.checks)
      out.push(
        `<tr class="${c.passed ? "po-passed" : "po-failed"}"><td class="${c.passed ? "po-pass" : "po-fail"}">${c.passed ? "✓ pass" : "✗ FAIL"}</td><td>${esc(c.title)}${c.detail ? `<div class="po-source">${esc(c.detail)}</div>` : ""}</td><td class="po-num">${esc(valueText(c, opts))}</td><td class="po-num">${esc(boundText(c, opts))}</td><td class="po-num">${esc(marginText(c, opts))}</td></tr>`,
      );
    out.push(`</tbody></table>`);
  }
  if (d.assumptions.length) out.push(`<h3 class="po-part">Assumptions</h3><ul>${d.assumptions.map((a) => `<li>${esc(a)}</li>`).join("")}</ul>`);
  if (d.findings.length)
    out.push(`<h3 class="po-part">Findings</h3><ul class="po-findings">${d.findings.map((f) => `<li class="po-${esc(f.severity)}"><span class="po-severity">${esc(f.severity)}</span>${esc(f.text)}</li>`).join("")}</ul>`);
  if (d.sources.length) out.push(`<h3 class="po-part">Sources</h3><ol class="po-sources">${d.sources.map((s) => `<li>${esc(s)}</li>`).join("")}</ol>`);
  out.push(`</section>`);
  return out.join("\n");
}

/** The cautions paragraph, for a page that places it once. */
export const cautionsHtml = (): string => `<p class="po-cautions">${esc(cautions)}</p>`;

/** Body markup for one or several derivations, wrapped in `<div class="pinchoff">`; needs `htmlStyles` in the page. */
export function renderHtmlFragment(data: DerivationLike | readonly DerivationLike[], opts: HtmlOptions = {}): string {
  const list = asList(data);
  return `<div class="pinchoff">\n${list.map((d) => record(d, opts)).join("\n")}${opts.omitCautions ? "" : `\n${cautionsHtml()}`}\n</div>`;
}

/** A complete, self-contained HTML page (no network, no script). */
export function renderHtml(data: DerivationLike | readonly DerivationLike[], opts: HtmlOptions & { readonly pageTitle?: string } = {}): string {
  const list = asList(data);
  const title = opts.pageTitle ?? (list.length === 1 ? list[0]!.title : `Design record (${list.length} derivations)`);
  const design = list.length > 1 ? `<p class="po-meta">design inputs <code title="${esc(fingerprint(list))}">${esc(shortFingerprint(fingerprint(list)))}</code></p>\n` : "";
  return [
    "<!DOCTYPE html>",
    `<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">`,
    `<meta name="generator" content="pinchoff"><title>${esc(title)}</title>`,
    htmlStyles({ katex: (opts.math ?? "katex") === "katex" }),
    `<style>body{margin:2rem auto;padding:0 1rem;max-width:62rem;background:#fff}</style>`,
    `</head><body>`,
    design ? `<div class="pinchoff">${design}</div>` : "",
    renderHtmlFragment(list, opts),
    `</body></html>`,
    "",
  ].join("\n");
}
