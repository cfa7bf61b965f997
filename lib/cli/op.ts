/**
 * `pinchoff op`: solve a bias stage's
 * operating point from its design file, print region, nodes, currents, margins
 * and metrics as JSON; with --record also write the derivation. A design file
 * with a specification instead of components is designed first: ideal values,
 * standard values chosen as a set, the re-solve and the deviation from the
 * specification. Files are written atomically (temp file + rename) and the
 * design file is never written.
 */
import { randomBytes } from "node:crypto";
import { existsSync, readFileSync, realpathSync, renameSync, rmSync, writeFileSync } from "node:fs";
import { basename, dirname, extname, join, resolve } from "node:path";
import { ConvergenceError, InfeasibleError, InputError, PinchoffError } from "../errors.js";
import { analyzeStage } from "../bias/analyze.js";
import { readDesignFile, type DesignFile } from "../bias/design-file.js";
import { synthesize, type SynthesisResult } from "../bias/synthesis.js";
import type { Stage, StageAnalysis } from "../bias/topology.js";
import { Derivation } from "../record/derivation.js";
import { defineCommand, exitStatus, type CommandSpec } from "./args.js";

export const command = {
  name: "op",
  positionals: [{ name: "design.json" }],
  options: {
    record: { kind: "value", placeholder: "FILE", help: "also write the derivation (the reasoning, every formula with\nits numbers) as HTML (.html) or Markdown (.md); an existing\nfile is replaced only if an earlier pinchoff op wrote it" },
    force: { kind: "flag", help: "replace an existing record file whatever wrote it" },
  },
  description: `Solves the DC operating point of the bias stage in the design file and prints
it as JSON: region, node voltages, currents, device operating point,
small-signal parameters, gain/resistance/swing metrics, checks with margins,
power per component. Infinite values are written as the string "Infinity".

When the design file gives a "specification" instead of "components", the
stage is designed first and the JSON holds the ideal values, the standard
values chosen as a set from the series, the deviation from the specification
and, under "operatingPoint", the operating point of the chosen stage.`,
  notes: "Hand analysis is approximate: verify by simulation and measurement.",
} as const satisfies CommandSpec;

/** The op result as a library call: the stage, its analysis and the recorded derivation. */
export function operatingPointOf(stage: Stage): { analysis: StageAnalysis; derivation: Derivation } {
  const derivation = new Derivation(`Operating point: ${stage.name ?? stage.topology} (${stage.device.card.polarity})`);
  const analysis = analyzeStage(stage, derivation);
  return { analysis, derivation };
}

/** The same error, its origin moved from the designer's "<topology> spec.<path>" to the file's "specification.<path>". */
function relocate(e: PinchoffError, topology: string, file: string): PinchoffError {
  const raw = e.origin && e.message.startsWith(`${e.origin}: `) ? e.message.slice(e.origin.length + 2) : e.message;
  const prefix = `${topology} spec`;
  const where = e.origin?.startsWith(prefix) ? `specification${e.origin.slice(prefix.length)}` : e.origin ? `specification (${e.origin})` : "specification";
  const origin = `${file}: ${where}`;
  if (e instanceof InputError) return new InputError(e.value, e.expected, origin, e.code);
  if (e instanceof InfeasibleError) return new InfeasibleError(raw, origin);
  if (e instanceof ConvergenceError) return new ConvergenceError(raw, origin);
  return new PinchoffError(e.code, raw, origin);
}

/**
 * The design from a specification as a library call: synthesis (ideal values,
 * standard values chosen as a set, the re-solve, the deviation) with its
 * derivation. Errors name the file and the specification's field.
 */
export function designOf(designFile: Extract<DesignFile, { kind: "specification" }>): { design: SynthesisResult; derivation: Derivation } {
  const { spec, origin } = designFile;
  const derivation = new Derivation(`Design from a specification: ${spec.name ?? spec.topology} (${spec.card.polarity})`);
  try {
    return { design: synthesize(spec, derivation), derivation };
  } catch (e) {
    throw e instanceof PinchoffError ? relocate(e, spec.topology, origin) : e;
  }
}

export const designCaution = "Hand analysis is approximate: verify the chosen design by simulation and measurement, use the parts' tolerances, and respect the device ratings.";

/** What `pinchoff op` prints for a specification: ideal and chosen values, the series, the deviation, the chosen stage's operating point. */
export function designSummary(designFile: Extract<DesignFile, { kind: "specification" }>, design: SynthesisResult) {
  const { stage, snap } = design;
  const size = (d: { w: number; l: number }) => ({ w: d.w, l: d.l });
  return {
    topology: design.topology,
    // The series the resistors were chosen from; "exact" when kept ideal; null when the stage has no resistor to choose.
    series: snap ? snap.series : designFile.spec.series === "exact" ? "exact" : null,
    ideal: design.ideal,
    chosen: {
      components: stage.components,
      device: size(stage.device),
      ...(stage.devices ? { devices: Object.fromEntries(Object.entries(stage.devices).map(([role, d]) => [role, size(d)])) } : {}),
    },
    ...(snap ? { standardValues: snap } : {}),
    deviation: design.deviation,
    ...(design.dissipation ? { dissipation: design.dissipation } : {}),
    operatingPoint: design.analysis,
    caution: designCaution,
  };
}

/** JSON with ±Infinity kept readable (JSON itself has no infinity). */
export function toJson(value: unknown): string {
  return JSON.stringify(value, (_k, v) => (typeof v === "number" && !Number.isFinite(v) ? (Number.isNaN(v) ? "NaN" : v > 0 ? "Infinity" : "-Infinity") : v), 2);
}

/** Marks a record file as written by `pinchoff op`, so a later run may replace it (and nothing else). */
export const recordMarker = "written by pinchoff op";

/** The record text with the marker: a generator meta tag in HTML, a comment at the end of Markdown. */
export function markRecord(text: string, format: "html" | "md"): string {
  return format === "html" ? text.replace(/<head>/i, `<head><meta name="generator" content="${recordMarker}">`) : `${text.trimEnd()}\n\n<!-- ${recordMarker} -->\n`;
}

/**
 * Write a file atomically next to its destination; never the protected paths,
 * and never over an existing file that an earlier `pinchoff op` did not write
 * (unless `force`).
 */
export function writeAtomic(path: string, text: string, protect: string[] = [], force = false): void {
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
  if (!force && existsSync(target)) {
    let head = "";
    try {
      head = readFileSync(target, "utf8");
    } catch {
      /* unreadable: treated as not ours */
    }
    if (!head.includes(recordMarker)) throw new InputError(path, "a new file, or a record an earlier pinchoff op wrote (this file exists and was not written by pinchoff op; choose another path, or pass --force to replace it)", "--record", "io");
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

export const main = defineCommand(command, async ({ values, positionals }) => {
  const file = positionals[0]!;
  const record = values.record;
  let format: "html" | "md" | undefined;
  if (record !== undefined) {
    const ext = extname(record).toLowerCase();
    format = ext === ".html" || ext === ".htm" ? "html" : ext === ".md" || ext === ".markdown" ? "md" : undefined;
    if (!format) throw new InputError(record, "a record file ending in .html or .md", "--record");
  }
  const read = readDesignFile(file);
  const result = read.kind === "analysis" ? operatingPointOf(read.stage) : designOf(read);
  if (record !== undefined) {
    const render = await import("../record/render.js");
    const data = result.derivation.toJSON();
    const text = markRecord(format === "html" ? render.renderHtml(data) : render.renderMarkdown(data), format!);
    writeAtomic(record, text, [file], values.force === true);
  }
  const head = { design: file, ...(record ? { record } : {}) };
  const analysis = "analysis" in result ? result.analysis : result.design.analysis;
  console.log(toJson("analysis" in result ? { ...head, ...result.analysis } : { ...head, ...designSummary(read as Extract<DesignFile, { kind: "specification" }>, result.design) }));
  const failures = [
    ...analysis.metrics.checks.filter((c) => !c.passed).map((c) => `${c.name}: ${c.value} ${c.unit} (margin ${c.margin} ${c.unit})`),
    ...("design" in result && result.design.dissipation ? result.design.dissipation.failures.map((f) => `${f.name} over its allowed power: ${f.power} W > ${f.allowed} W`) : []),
  ];
  for (const f of failures) console.error(`check failed: ${f}`);
  return failures.length ? exitStatus.failed : exitStatus.ok;
});
