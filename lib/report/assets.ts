/**
 * The Plotly bundle a report embeds once so its plots draw offline, read from
 * the installed npm package; nothing is ever fetched from a network.
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
