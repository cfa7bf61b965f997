/**
 * "pinchoff/render": import time of dist/record/render.js (loads KaTeX and
 * mathjs), the first rendering of a derivation (reads KaTeX's fonts), and later
 * renderings per derivation in each format. Fresh child process per repeat.
 */
import { existsSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { defineCases } from "../case.js";
import { esmScript, timeNode } from "../spawn.js";

const root = resolve(dirname(fileURLToPath(import.meta.url)), "../../..");
const url = (f: string) => JSON.stringify(pathToFileURL(join(root, f)).href);

// Runs in the child. The device card and bias are invented for the benchmark.
const child = `
const core = await import(${url("dist/index.js")});
const t0 = performance.now();
const r = await import(${url("dist/record/render.js")});
const t1 = performance.now();
const m = core.device({ name: "bench-n", polarity: "nmos", kp: 120e-6, vt0: 0.45, lambda: 0.04, gamma: 0.4, phi: 0.7 }, 20e-6, 1e-6);
const make = (i) => {
  const rec = new core.Derivation("bench " + i);
  const op = core.operatingPoint(m, { vgs: 0.7 + i * 1e-3, vds: 0.9, vsb: 0.2 }, {}, rec);
  rec.check("saturation margin", op.saturationMargin, "voltage", { min: 0.1 });
  return rec.toJSON();
};
const first = make(0);
const t2 = performance.now();
const page = r.renderHtml(first);
const t3 = performance.now();
const n = 30;
const recs = Array.from({ length: n }, (_, i) => make(i + 1));
const time = (f) => { const a = performance.now(); let len = 0; for (const d of recs) len += f(d).length; if (!len) throw new Error("empty"); return (performance.now() - a) / n; };
const katexMs = time((d) => r.renderHtmlFragment(d));
const mathmlMs = time((d) => r.renderHtmlFragment(d, { math: "mathml" }));
const markdownMs = time((d) => r.renderMarkdown(d));
const textMs = time((d) => r.renderText(d));
console.log(JSON.stringify({ importMs: t1 - t0, firstPageMs: t3 - t2, pageKB: Buffer.byteLength(page) / 1024, katexMs, mathmlMs, markdownMs, textMs }));
`;

export const cases = defineCases([
  {
    id: "render.derivation",
    title: "pinchoff/render: import, first page, per-derivation rendering (dist/record/render.js, fresh child per repeat)",
    repeats: 5,
    setup() {
      if (!existsSync(join(root, "dist/record/render.js"))) throw new Error("bench: dist/record/render.js is missing: run `npm run bench` (it builds first)");
      timeNode(esmScript(child), root);
    },
    measure() {
      const rep = timeNode(esmScript(child), root).report;
      if (!rep) throw new Error("bench: the render child printed no report");
      return rep;
    },
    figures: {
      importMs: { unit: "ms", better: "lower", note: "import of dist/record/render.js after the core (KaTeX + mathjs)" },
      firstPageMs: { unit: "ms", better: "lower", note: "first self-contained page: inlines KaTeX's CSS and WOFF2 fonts" },
      pageKB: { unit: "KB", better: "lower", note: "size of that page (one derivation, KaTeX stylesheet and fonts embedded)" },
      katexMs: { unit: "ms", better: "lower", note: "HTML fragment per derivation, KaTeX HTML+MathML" },
      mathmlMs: { unit: "ms", better: "lower", note: "HTML fragment per derivation, MathML only (notebook outputs)" },
      markdownMs: { unit: "ms", better: "lower", note: "Markdown per derivation" },
      textMs: { unit: "ms", better: "lower", note: "plain text per derivation" },
    },
  },
]);
