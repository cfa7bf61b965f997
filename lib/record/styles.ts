/**
 * pinchoff's own look for rendered derivations: a calm worksheet, each step a
 * numbered block with the formula, the substituted formula and the result; a
 * check table whose verdict reads from the symbol as well as the colour. All
 * rules are scoped under `.pinchoff` so the sheet can sit in a notebook or in
 * a report next to other content.
 */
export const pinchoffCss = `
.pinchoff{--po-ink:#1f2630;--po-muted:#5b6573;--po-rule:#d5dae1;--po-band:#f4f6f8;--po-accent:#2b6a8f;--po-ok:#1d7a46;--po-bad:#b3261e;--po-warn:#9a6200;
  color:var(--po-ink);font:15px/1.5 system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;max-width:60rem}
.pinchoff .po-record{border-top:3px solid var(--po-accent);padding:.6rem 0 1rem;margin:0 0 1.5rem}
.pinchoff h2.po-title{font-size:1.25rem;margin:.2rem 0}
.pinchoff .po-subtitle{color:var(--po-muted);margin:0 0 .3rem}
.pinchoff .po-meta{display:flex;flex-wrap:wrap;gap:.4rem 1rem;align-items:center;font-size:.85rem;color:var(--po-muted);margin:.2rem 0 .8rem}
.pinchoff .po-meta code{font:12px/1.4 ui-monospace,SFMono-Regular,Menlo,Consolas,monospace;background:var(--po-band);padding:.05rem .35rem;border-radius:3px;color:var(--po-ink)}
.pinchoff .po-verdict{font-weight:600;padding:.05rem .5rem;border-radius:999px;border:1px solid currentColor}
.pinchoff .po-verdict.po-ok{color:var(--po-ok)}.pinchoff .po-verdict.po-bad{color:var(--po-bad)}
.pinchoff h3.po-part{font-size:.8rem;letter-spacing:.08em;text-transform:uppercase;color:var(--po-muted);margin:1rem 0 .4rem;font-weight:600}
.pinchoff table{border-collapse:collapse;font-size:.9rem;margin:.2rem 0}
/* table-qualified selectors outrank notebook front ends' own table rules */
.pinchoff table th,.pinchoff table td{text-align:left;padding:.25rem .8rem .25rem 0;border-bottom:1px solid var(--po-rule);vertical-align:top}
.pinchoff table th{font-weight:600;color:var(--po-muted);font-size:.8rem}
.pinchoff td.po-num{font-variant-numeric:tabular-nums;white-space:nowrap}
.pinchoff ol.po-steps{list-style:none;counter-reset:po-step;padding:0;margin:0}
.pinchoff ol.po-steps>li{counter-increment:po-step;position:relative;padding:.35rem 0 .5rem 2.4rem;border-left:2px solid var(--po-rule);margin-left:.8rem}
.pinchoff ol.po-steps>li::before{content:counter(po-step);position:absolute;left:-.8rem;top:.35rem;width:1.5rem;height:1.5rem;border-radius:50%;background:#fff;border:2px solid var(--po-accent);color:var(--po-accent);font-size:.75rem;font-weight:700;text-align:center;line-height:1.35rem}
.pinchoff ol.po-steps>li.po-note::before{border-color:var(--po-rule);color:var(--po-muted)}
.pinchoff li.po-note>p{white-space:pre-line}
.pinchoff .po-step-title{font-weight:600}
.pinchoff .po-because{color:var(--po-muted);font-style:italic;margin-left:.4rem;font-weight:400}
.pinchoff .po-eq{margin:.15rem 0;overflow-x:auto;overflow-y:hidden}
.pinchoff .po-eq .katex-display{margin:.25em 0;text-align:left}.pinchoff .po-eq .katex-display>.katex{text-align:left}
.pinchoff .po-eq math[display="block"]{margin:.25em 0;text-align:left;math-style:normal}
.pinchoff .po-eq.po-result{font-weight:600}
.pinchoff .po-eq.po-result .katex,.pinchoff .po-eq.po-result math{color:var(--po-accent)}
.pinchoff .po-source{font-size:.78rem;color:var(--po-muted)}
.pinchoff td.po-pass{color:var(--po-ok);font-weight:600;white-space:nowrap}
.pinchoff td.po-fail{color:var(--po-bad);font-weight:700;white-space:nowrap}
.pinchoff tr.po-failed td{background:#fdf1f0}
.pinchoff ul.po-findings{list-style:none;padding:0}
.pinchoff ul.po-findings li{padding:.25rem .6rem;margin:.25rem 0;border-left:4px solid var(--po-rule);background:var(--po-band)}
.pinchoff ul.po-findings li.po-caution{border-color:var(--po-warn)}
.pinchoff ul.po-findings li.po-warning{border-color:var(--po-bad)}
.pinchoff .po-severity{font-weight:700;text-transform:uppercase;font-size:.75rem;letter-spacing:.05em;margin-right:.4rem}
.pinchoff ol.po-sources{font-size:.85rem;color:var(--po-muted)}
.pinchoff .po-cautions{font-size:.82rem;color:var(--po-muted);border-top:1px solid var(--po-rule);padding-top:.5rem;margin-top:1rem}
@media print{.pinchoff .po-record{break-inside:avoid-page}.pinchoff tr.po-failed td{background:none}}
`;
