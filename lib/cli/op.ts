/**
 * `pinchoff op`: solve a bias stage's
 * operating point from its design file, print region, nodes, currents, margins
 * and metrics as JSON; with --record also write the derivation. A design file
 * with a specification instead of components is designed first: ideal values,
 * standard values chosen as a set, the re-solve and the deviation from the
 * specification. Files are written through the one atomic writer (lib/io/atomic-write.ts) and the
 * design file is never written.
 */
import { existsSync, readFileSync, realpathSync } from "node:fs";
import { extname, resolve } from "node:path";
import { ConvergenceError, InfeasibleError, InputError, PinchoffError } from "../errors.js";
import { analyzeStage } from "../bias/analyze.js";
import { readDesignSource, type DesignFile } from "../bias/design-file.js";
import type { DissipationLimits, PartRating } from "../bias/dissipation.js";
import { synthesize, type SynthesisResult } from "../bias/synthesis.js";
import type { Stage, StageAnalysis, StageCheck, StageLimits } from "../bias/topology.js";
import { stageOrigin } from "../bias/topologies/two-transistor.js";
import type { Dimension } from "../quantity.js";
import { checkStamp, stampRecord } from "../record/stamp.js";
import { toolVersion } from "../runner/paths.js";
import { Derivation } from "../record/derivation.js";
import { partModel, recordPartInUse } from "../device/discrete-part.js";
import { defineCommand, exitStatus, usageLine, UsageError, type CommandSpec } from "./args.js";
import { checkLine, formatChecked, opText } from "./op-text.js";
import { toleranceChecks, type ToleranceChecks } from "../bias/check-yield.js";
import { mismatchReport, mismatchText } from "../bias/mismatch-file.js";
import { analyzeFrequency, type FrequencyAnalysis } from "../bias/frequency.js";
import { formatQuantity } from "../units/format.js";
import { writeFileAtomic } from "../io/atomic-write.js";
import { verificationFailure, verificationText, verifyFromCommandLine } from "./verify-text.js";

export const command = {
  name: "op",
  positionals: [{ name: "design.json" }],
  options: {
    record: { kind: "value", placeholder: "FILE", help: "also write the derivation (the reasoning, every formula with\nits numbers) as HTML (.html) or Markdown (.md); an existing\nfile is replaced only if it is a record pinchoff wrote,\nunchanged since (its stamp is checked)" },
    force: { kind: "flag", help: "replace an existing record file whatever wrote it" },
    json: { kind: "flag", help: "print JSON (the default when the output is not a terminal)" },
    text: { kind: "flag", help: "print the readable summary (the default at a terminal)" },
    verify: { kind: "value", placeholder: "PROCESS.json", help: "simulate the stage with a process description's model\nlibrary (ngspice) and compare with the hand values; fails\nwhen the drain current is off by more than the tolerance" },
    "verify-tolerance": { kind: "value", placeholder: "FRACTION", help: "allowed relative drain-current deviation (default 0.1)" },
    "verify-deck": { kind: "value", placeholder: "FILE", help: "write the verification deck (re-run: ngspice -b FILE)" },
  },
  description: `Solves the DC operating point of the bias stage in the design file. At a
terminal it prints a summary: the values with units, the operating point,
region and margins, every check with pass/FAIL and its margin. Otherwise (or
with --json) it prints JSON: region, node voltages, currents, device operating
point, small-signal parameters, metrics, checks with margins, power, and
"failedChecks". Infinite values are written as the string "Infinity".

When the design file gives a "specification" instead of "components", the
stage is designed first: the ideal values, the standard values chosen as a set
from the series, the deviation from the specification and the operating point
of the chosen stage. A "tolerance" section adds worst-case corners or a Monte
Carlo run over part tolerances and temperatures: the spread of the bias and the
yield of every check (corners must all pass). A "mismatch" section (pairs and
mirrors) adds Pelgrom's offset or current error and a Monte Carlo of device
mismatch on top of global variation: each figure's spread, the yield of every
stated limit and which device moves each figure most.`,
  notes: "Hand analysis is approximate: verify by simulation and measurement.",
} as const satisfies CommandSpec;

/**
 * The op result as a library call: the stage, its analysis and the recorded
 * derivation. Given the design file, errors (solver, refused fields) name the file.
 */
export function operatingPointOf(stage: Stage, file?: string): { analysis: StageAnalysis; derivation: Derivation } {
  const derivation = new Derivation(`Operating point: ${stage.name ?? stage.topology} (${stage.device.card.polarity})`);
  // A discrete part's model is derived from its datasheet first, each step recorded.
  for (const d of [stage.device, ...Object.values(stage.devices ?? {})])
    if (d.part) {
      partModel(d.part.part, derivation);
      recordPartInUse(derivation, d.part);
    }
  try {
    const analysis = analyzeStage(stage, derivation);
    return { analysis, derivation };
  } catch (e) {
    throw file !== undefined && e instanceof PinchoffError ? relocateStage(e, stage, file) : e;
  }
}

/** The same error with a new origin (its message without the old origin's prefix). */
function withOrigin(e: PinchoffError, origin: string): PinchoffError {
  const raw = e.origin && e.message.startsWith(`${e.origin}: `) ? e.message.slice(e.origin.length + 2) : e.message;
  if (e instanceof InputError) return new InputError(e.value, e.expected, origin, e.code);
  if (e instanceof InfeasibleError) return new InfeasibleError(raw, origin);
  if (e instanceof ConvergenceError) return new ConvergenceError(raw, origin);
  return new PinchoffError(e.code, raw, origin);
}

/** An analysis error, its origin moved from the stage ('stage "x": devices') to the file ("f.json: devices"). */
function relocateStage(e: PinchoffError, stage: Stage, file: string): PinchoffError {
  if (e.origin?.startsWith(file)) return e;
  const from = stageOrigin(stage);
  const where = e.origin === undefined || e.origin === from ? "" : e.origin.startsWith(`${from}: `) ? e.origin.slice(from.length + 2) : e.origin;
  return withOrigin(e, where ? `${file}: ${where}` : file);
}

/** The same error, its origin moved from the designer's "<topology> spec.<path>" to the file's "specification.<path>". */
function relocate(e: PinchoffError, topology: string, file: string): PinchoffError {
  const prefix = `${topology} spec`;
  const where = e.origin?.startsWith(prefix) ? `specification${e.origin.slice(prefix.length)}` : e.origin ? `specification (${e.origin})` : "specification";
  return withOrigin(e, `${file}: ${where}`);
}

/**
 * The design from a specification as a library call: synthesis (ideal values,
 * standard values chosen as a set, the re-solve, the deviation) with its
 * derivation. Errors name the file and the specification's field.
 */
export function designOf(designFile: Extract<DesignFile, { kind: "specification" }>): { design: SynthesisResult; derivation: Derivation } {
  const { spec, origin } = designFile;
  const card = "card" in spec.device ? spec.device.card : spec.device.part;
  const derivation = new Derivation(`Design from a specification: ${spec.name ?? spec.topology} (${card.polarity})`);
  try {
    // The parsed file goes to the library call as it is: the same JSON gives the same design either way.
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
    series: snap ? snap.series : (designFile.spec.specification as { series?: unknown }).series === "exact" ? "exact" : null,
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

/**
 * Write the record atomically; never over the design file, and never over an
 * existing file unless it is an intact record the tool wrote (its stamp checks
 * out, lib/record/stamp.ts) or `force` is given.
 */
export function writeRecord(path: string, text: string, protect: readonly string[] = [], force = false): void {
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
    let existing: string | undefined;
    try {
      existing = readFileSync(target, "utf8");
    } catch (e) {
      throw new PinchoffError("io", `exists and cannot be read to check what wrote it (${(e as NodeJS.ErrnoException).code ?? (e as Error).message}); it was left untouched (--force replaces it)`, path);
    }
    const own = checkStamp(existing);
    if (!own.ok) throw new InputError(path, `a new file, or an unchanged record pinchoff wrote; this file exists and ${own.reason}, so it was left untouched (choose another path, or pass --force to replace it)`, "--record", "io");
  }
  writeFileAtomic(target, text);
}

/** Named limits of a design file, as recorded inputs (they decide checks, so they belong to the inputs and their fingerprint). */
const limitInputs: Record<keyof StageLimits, [string, Dimension]> = {
  maxDevicePower: ["P transistor, max", "power"],
  maxTotalPower: ["P supply, max", "power"],
  minSaturationMargin: ["saturation margin, min", "voltage"],
  minOverdrive: ["VOV, min", "voltage"],
  minSourceHeadroom: ["source headroom, min", "voltage"],
};

/** Record what the design file states as limits and ratings (and the specification's power ratings) as inputs. */
export function recordLimits(rec: Derivation, file: DesignFile): void {
  const at = (f: string) => `${file.origin}: ${f}`;
  const limits = file.kind === "analysis" ? file.stage.limits : file.spec.limits;
  for (const [k, v] of Object.entries(limits ?? {})) {
    const [name, dim] = limitInputs[k as keyof StageLimits];
    if (typeof v === "number") rec.input(name, v, dim, at(`limits.${k}`));
  }
  const d = file.kind === "specification" ? (file.spec.specification as { dissipation?: DissipationLimits }).dissipation : undefined;
  if (!d) return;
  const rating = (who: string, r: PartRating | undefined, f: string) => {
    if (!r) return;
    rec.input(`P rating, ${who}`, r.rating, "power", at(`${f}.rating`));
    if (r.derating !== undefined) rec.input(`derating, ${who}`, r.derating, "dimensionless", at(`${f}.derating`));
  };
  rating("resistors", d.resistor, "specification.dissipation.resistor");
  for (const [n, r] of Object.entries(d.resistors ?? {})) rating(n, r, `specification.dissipation.resistors.${n}`);
  rating("transistor", d.transistor, "specification.dissipation.transistor");
}

/** The failed checks of an outcome, one line each, with enough digits to show why. */
function failedChecks(analysis: StageAnalysis, design: SynthesisResult | undefined, tolerance: ToleranceChecks | undefined, extra: readonly StageCheck[]): string[] {
  return [
    ...[...analysis.metrics.checks, ...extra].filter((c) => !c.passed).map(checkLine),
    ...(design?.dissipation?.failures ?? []).map((f) => `FAIL  ${f.name} over its allowed power: ${formatChecked(f.power, "W")} > ${formatChecked(f.allowed!, "W")}`),
    ...(tolerance?.checks ?? []).filter((c) => !c.ok).map((c) => `FAIL  over tolerances, ${c.name}: ${c.passed} of ${c.cases} cases pass (${+(c.yield * 100).toPrecision(4)} %)`),
  ];
}

/** The frequency block of the readable summary. */
export function frequencyText(fa: FrequencyAnalysis): string {
  const hz = (x: number) => (Number.isFinite(x) ? formatQuantity(x, "frequency") : "none");
  const gain = fa.drive === "current" ? `midband transimpedance ${formatQuantity(fa.midbandGain, "resistance")} (V/A, signal current into the reference node)` : `midband gain ${+fa.midbandGain.toPrecision(4)}`;
  const lines = [`Frequency response (${fa.view}, hand analysis): ${gain}`];
  if (fa.low) {
    for (const c of fa.low.capacitors) lines.push(`  ${c.role.padEnd(6)} capacitor ${formatQuantity(c.value, "capacitance")}${c.designed ? " (designed)" : ""}: sees ${formatQuantity(c.resistance, "resistance")}, pole ${hz(c.pole)}`);
    lines.push(`  low corner ${hz(fa.low.corner)} (short-circuit sum ${hz(fa.low.sctcCorner)})`);
  }
  const h = fa.high;
  lines.push(`  upper corner ${hz(h.corner)} (open-circuit estimate ${hz(h.octcCorner)}); poles ${h.complexPair ? `complex pair at ${hz(h.complexPair.naturalFrequency)}, Q = ${+h.complexPair.q.toPrecision(3)}` : `${hz(h.dominantPole ?? NaN)} and ${hz(h.nonDominantPole ?? Infinity)}`}; zero ${hz(h.zero.frequency)}${h.zero.rightHalfPlane ? " (right half plane)" : ""}`);
  if (h.miller) lines.push(`  Miller: input capacitance ${formatQuantity(h.miller.capacitance, "capacitance")}, input pole ${hz(h.miller.inputPole)}, output pole ${hz(h.miller.outputPole)}`);
  const t = fa.twoStage;
  if (t) {
    const cap = (x: number) => formatQuantity(x, "capacitance");
    lines.push(`  compensation: Cc ${cap(t.cc)}${t.ccDesigned ? " (designed for the target phase margin)" : ""} (rule of thumb 0.22·CL = ${cap(t.ccRuleOfThumb)}), Rz ${formatQuantity(t.rz, "resistance")}${t.rzDesigned ? " (designed)" : ""}`);
    lines.push(`  GBW ${hz(t.gainBandwidth)}, unity gain ${hz(t.unityGain ?? NaN)}, phase margin ${t.phaseMargin === undefined ? "none" : `${+t.phaseMargin.toPrecision(3)}°`}; second pole ${hz(t.secondPole)}, Miller zero ${hz(Math.abs(t.zero))}${t.zero > 0 ? " (right half plane)" : t.zero < 0 ? " (left half plane)" : ""}, mirror pole ${hz(t.mirrorPole)}`);
  }
  lines.push(`  one dominant pole: ${h.dominantPoleHolds ? "yes" : "no — the estimates are rough"}`);
  for (const f of fa.findings) lines.push(`  caution: ${f}`);
  return lines.join("\n");
}

export const main = defineCommand(command, async ({ values, positionals }) => {
  if (values.json && values.text) throw new UsageError("--json and --text exclude each other", usageLine(command));
  const file = positionals[0]!;
  const record = values.record;
  let format: "html" | "md" | undefined;
  if (record !== undefined) {
    const ext = extname(record).toLowerCase();
    format = ext === ".html" || ext === ".htm" ? "html" : ext === ".md" || ext === ".markdown" ? "md" : undefined;
    if (!format) throw new InputError(record, "a record file ending in .html or .md", "--record");
  }
  const { design: read, sha256: designSha256 } = readDesignSource(file);
  const result = read.kind === "analysis" ? operatingPointOf(read.stage, read.origin) : designOf(read);
  const rec = result.derivation;
  const design = "design" in result ? result.design : undefined;
  const stage = design ? (design.stage as Stage) : (read as Extract<DesignFile, { kind: "analysis" }>).stage;
  const analysis = design ? design.analysis : (result as { analysis: StageAnalysis }).analysis;
  const tolerance = read.tolerance ? toleranceChecks(stage, read.tolerance, record !== undefined ? rec : undefined) : undefined;
  const extraChecks: StageCheck[] = [];
  const verification = values.verify !== undefined ? await verifyFromCommandLine(stage, values.verify, values["verify-tolerance"], values["verify-deck"], rec) : undefined;
  // A "frequency" section: the response by hand analysis, its checks failing the op like the others.
  const frequency = read.frequency ? analyzeFrequency(stage, analysis, read.frequency, record !== undefined ? rec : undefined) : undefined;
  // A "mismatch" section: Pelgrom closed form and Monte Carlo yields; a yield below minYield fails the op.
  const mismatch = read.mismatch ? mismatchReport(stage, analysis, read.mismatch, `${read.origin}: mismatch`, record !== undefined ? rec : undefined) : undefined;
  if (record !== undefined) {
    recordLimits(rec, read);
    const written = new Date().toISOString();
    rec.describe(`From design file ${file} (SHA-256 ${designSha256}); ${toolVersion()}; written ${written.replace("T", " ").replace(/\.\d+Z$/, " UTC")}`);
    const render = await import("../record/render.js");
    const data = rec.toJSON();
    const body = format === "html" ? render.renderHtml(data) : render.renderMarkdown(data);
    const version = toolVersion().replace(/^pinchoff /, "");
    const text = stampRecord(body, format!, { version, command: "op", written, design: { path: file, sha256: designSha256 }, inputs: rec.fingerprint() });
    writeRecord(record, text, [file], values.force === true);
  }
  const failures = [...failedChecks(analysis, design, tolerance, extraChecks), ...(mismatch?.failed ?? []), ...(verification && !verification.passed ? [verificationFailure(verification)] : [])];
  // Target corners are checks of the design; the methods' own assumptions are cautions, not failures.
  for (const c of frequency?.checks ?? [])
    if (!c.passed && (c.name.startsWith("Low-frequency corner") || c.name.startsWith("Upper corner") || (frequency?.view === "two-stage" && c.name.startsWith("Phase margin")))) failures.push(`FAIL  frequency, ${c.name}: ${+c.value.toPrecision(4)} ${c.unit}`);
  const asText = values.text === true || (values.json !== true && process.stdout.isTTY === true);
  if (asText) {
    console.log(opText({ file, ...(record ? { record } : {}), stage, analysis, ...(design ? { design } : {}), ...(tolerance ? { tolerance } : {}), extraChecks, failures }) + (verification ? `\n${verificationText(verification)}` : ""));
    if (frequency) console.log(frequencyText(frequency));
    if (mismatch) console.log(mismatchText(mismatch));
  } else {
    const head = { design: file, ...(record ? { record } : {}) };
    const body = design ? designSummary(read as Extract<DesignFile, { kind: "specification" }>, design) : analysis;
    console.log(toJson({ ...head, ...body, ...(tolerance ? { tolerance } : {}), ...(frequency ? { frequency } : {}), ...(mismatch ? { mismatch } : {}), ...(extraChecks.length ? { ratings: extraChecks } : {}), ...(verification ? { verification } : {}), failedChecks: failures }));
    for (const f of failures) console.error(`check failed: ${f.replace(/^FAIL\s+/, "")}`);
  }
  return failures.length ? exitStatus.failed : exitStatus.ok;
});
