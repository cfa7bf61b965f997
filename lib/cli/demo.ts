#!/usr/bin/env node
/**
 * npm run demo: run the demo template (the NMOS common-source stage with a
 * four-resistor bias) through `pinchoff run`, then print where the report is
 * and the check summary. The demo values are the template's own, invented.
 */
import { realpathSync } from "node:fs";
import { join, relative } from "node:path";
import { fileURLToPath } from "node:url";
import { PinchoffError } from "../errors.js";
import { defineCommand, type CommandSpec } from "./args.js";
import { packageRoot } from "../io/package-root.js";
import { interruptOnSignals } from "../runner/interrupt.js";
import { RunInterrupted, runNotebook } from "../runner/run.js";
import { summarize } from "../runner/summary.js";
import { listTemplates, type Template } from "../templates.js";

/** The template flagged `metadata.pinchoff.demo` (exactly one). */
export function demoTemplate(all: readonly Template[] = listTemplates()): Template {
  const flagged = all.filter((x) => x.demo);
  if (flagged.length !== 1)
    throw new PinchoffError("io", `expected exactly one template with metadata.pinchoff.demo = true in notebooks-templates/, found ${flagged.length}${flagged.length ? ` (${flagged.map((t) => t.name).join(", ")})` : ""}`, "demo");
  return flagged[0]!;
}

export const command = {
  name: "demo",
  positionals: [],
  options: {},
  description: `Runs the demo template (invented values) through pinchoff run into out/demo/
in the package folder, prints the check summary and the report's path.`,
} as const satisfies CommandSpec;

export const main = defineCommand(command, async () => {
  const t = demoTemplate();
  const outDir = join(packageRoot(), "out", "demo");
  console.log(`demo: running template ${t.name} (${t.description})`);
  const stop = interruptOnSignals((x) => console.error(`demo: ${x}`));
  try {
    const r = await runNotebook({ notebook: t.path, outDir, signal: stop.signal, note: (x) => console.error(`demo: ${x}`) });
    console.log(summarize(r, (p) => relative(process.cwd(), p) || p));
    console.log(`\nreport: ${r.reportPath}\nopen it in a browser; it works offline. The run record (JSON) is ${r.recordPath}.`);
    return r.exitCode;
  } catch (e) {
    if (e instanceof RunInterrupted) {
      console.error(`demo: ${e.message}`);
      return stop.exitCode() ?? 130;
    }
    throw e;
  } finally {
    stop.dispose();
  }
});

// `npm run demo` runs this file directly: the same error handling and exit statuses as `pinchoff demo`.
if (process.argv[1] && fileURLToPath(import.meta.url) === realpathSync(process.argv[1])) {
  const { runCommand } = await import("./main.js");
  process.exit(await runCommand("demo", main, process.argv.slice(2)));
}
