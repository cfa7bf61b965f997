/**
 * Assets a report embeds so it opens offline: the Plotly bundle and the KaTeX
 * stylesheet with its fonts inlined as data: URLs. Both come from installed npm
 * packages; nothing is ever fetched from a network.
 */
import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import { dirname, join } from "node:path";
import { PinchoffError } from "../errors.js";

const requireHere = createRequire(import.meta.url);

function packageDir(name: string): string {
  try {
    return dirname(requireHere.resolve(`${name}/package.json`));
  } catch {
    throw new PinchoffError("io", `the npm package ${name} is not installed (npm install)`, name);
  }
}

/** Text safe inside an HTML <script> element. */
export const scriptSafe = (js: string): string => js.replace(/<\/script/gi, "<\\/script").replace(/<!--/g, "<\\!--");

let plotly: string | undefined;
export function plotlyScript(): string {
  plotly ??= scriptSafe(readFileSync(join(packageDir("plotly.js-dist-min"), "plotly.min.js"), "utf8"));
  return plotly;
}

let katex: string | undefined;
/** katex.min.css with each @font-face reduced to its woff2 file, inlined. */
export function katexCss(): string {
  if (katex === undefined) {
    const dist = join(packageDir("katex"), "dist");
    const css = readFileSync(join(dist, "katex.min.css"), "utf8");
    katex = css.replace(/src:([^;}]*)/g, (all, src: string) => {
      const m = /url\((fonts\/[^)]+\.woff2)\)/.exec(src);
      if (!m) return all;
      const font = readFileSync(join(dist, m[1]!)).toString("base64");
      return `src:url(data:font/woff2;base64,${font}) format("woff2")`;
    });
  }
  return katex;
}
