/**
 * `pinchoff op <design.json> [--record out.html|out.md]`: solve a bias stage's
 * operating point from its design file, print region, nodes, currents, margins
 * and metrics as JSON; with --record also write the derivation. Files are
 * written atomically (temp file + rename) and the design file is never written.
 */
import { randomBytes } from "node:crypto";
import { realpathSync, renameSync, rmSync, writeFileSync } from "node:fs";
import { basename, dirname, extname, join, resolve } from "node:path";
import { parseArgs } from "node:util";
import { InputError, PinchoffError } from "../errors.js";
import { analyzeStage } from "../bias/analyze.js";
import { readDesign } from "../bias/design-file.js";
import type { Stage, StageAnalysis } from "../bias/topology.js";
import { Derivation } from "../record/derivation.js";

const help = `usage: pinchoff op <design.json> [--record out.html|out.md]

Solves the DC operating point of the bias stage in the design file and prints
it as JSON: region, node voltages, currents, device operating point,
small-signal parameters, gain/resistance/swing metrics, checks with margins,
power per component. Infinite values are written as the string "Infinity".

  --record FILE   also write the derivation (the reasoning, every formula with
                  its numbers) as HTML (.html) or Markdown (.md)
  -h, --help      this text

Hand analysis is approximate: verify by simulation and measurement.`;

/** The op result as a library call: the stage, its analysis and the recorded derivation. */
export function operatingPointOf(stage: Stage): { analysis: StageAnalysis; derivation: Derivation } {
  const derivation = new Derivation(`Operating point: ${stage.name ?? stage.topology} (${stage.device.card.polarity})`);
  const analysis = analyzeStage(stage, derivation);
  return { analysis, derivation };
}

/** JSON with ±Infinity kept readable (JSON itself has no infinity). */
export function toJson(value: unknown): string {
  return JSON.stringify(value, (_k, v) => (typeof v === "number" && !Number.isFinite(v) ? (Number.isNaN(v) ? "NaN" : v > 0 ? "Infinity" : "-Infinity") : v), 2);
}

/** Write a file atomically next to its destination; never the protected path. */
export function writeAtomic(path: string, text: string, protect: string[] = []): void {
  const target = resolve(path);
  for (const p of protect) {
    let same = resolve(p) === target;
    try {
      same ||= realpathSync(p) === realpathSync(target);
    } catch {
      /* target does not exist yet */
    }
    if (same) throw new InputError(path, "an output path other than the design file", "--record", "io");
  }
  const tmp = join(dirname(target), `.${basename(target)}.${randomBytes(6).toString("hex")}.tmp`);
  try {
    writeFileSync(tmp, text, { flag: "wx" });
    renameSync(tmp, target);
  } catch (e) {
    rmSync(tmp, { force: true });
    if (e instanceof PinchoffError) throw e;
    throw new PinchoffError("io", `cannot write (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`, path);
  }
}

export async function main(argv: string[]): Promise<number> {
  let parsed;
  try {
    parsed = parseArgs({ args: argv, allowPositionals: true, options: { record: { type: "string" }, help: { type: "boolean", short: "h" } } });
  } catch (e) {
    console.error(`pinchoff op: ${(e as Error).message}\n\n${help}`);
    return 2;
  }
  const { values, positionals } = parsed;
  if (values.help) {
    console.log(help);
    return 0;
  }
  if (positionals.length !== 1) {
    console.error(`pinchoff op: expected one design file, got ${positionals.length}\n\n${help}`);
    return 2;
  }
  const file = positionals[0]!;
  const record = values.record;
  let format: "html" | "md" | undefined;
  if (record !== undefined) {
    const ext = extname(record).toLowerCase();
    format = ext === ".html" || ext === ".htm" ? "html" : ext === ".md" || ext === ".markdown" ? "md" : undefined;
    if (!format) throw new InputError(record, "a record file ending in .html or .md", "--record");
  }
  const stage = readDesign(file);
  const { analysis, derivation } = operatingPointOf(stage);
  if (record !== undefined) {
    const render = await import("../record/render.js");
    const data = derivation.toJSON();
    const text = format === "html" ? render.renderHtml(data) : render.renderMarkdown(data);
    writeAtomic(record, text, [file]);
  }
  console.log(toJson({ design: file, ...(record ? { record } : {}), ...analysis }));
  const failed = analysis.metrics.checks.filter((c) => !c.passed);
  if (failed.length) console.error(`pinchoff op: ${failed.length} check(s) failed: ${failed.map((c) => c.name).join("; ")}`);
  return 0;
}
