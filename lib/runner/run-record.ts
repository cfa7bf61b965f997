/**
 * The run record: the machine-readable account of one design run, written as
 * `run-record.json` in the design-run folder beside the report. It holds the
 * inputs as run (overrides marked, with the notebook's own text), the
 * fingerprints, every check with value, limits, margin and verdict, the cell
 * outcome, the tool version, the date, the source notebook and the list of
 * output files with their sizes and SHA-256 digests. Infinite values are
 * written as the strings "Infinity"/"-Infinity" (JSON has none).
 */
import { createHash } from "node:crypto";
import { dimensions, type Dimension } from "../quantity.js";
import type { CellFailure, CheckLine } from "./collect.js";

/** The layout of a design-run folder: fixed names, so tools and people find things without a listing. */
export const runFolderFiles = {
  report: "report.html",
  notebook: "notebook-as-run.ipynb",
  record: "run-record.json",
} as const;

export const runRecordKind = "pinchoff design run";
export const runRecordSchema = 1;

/** The SI unit of a dimension; an unknown one (a hand-edited notebook) is named as given. */
const siUnit = (dim: Dimension): string => (dimensions as Record<string, { unit: string } | undefined>)[dim]?.unit ?? String(dim);

type Num = number | "Infinity" | "-Infinity" | null;
const num = (v: number | null | undefined): Num => (typeof v !== "number" || Number.isNaN(v) ? null : v === Infinity ? "Infinity" : v === -Infinity ? "-Infinity" : v);

export interface RunRecordInput {
  readonly name: string;
  readonly text: string;
  readonly value: Num;
  readonly unit: string;
  readonly dimension: Dimension;
  readonly overridden: boolean;
  /** The notebook's own text, when the run replaced it. */
  readonly notebookText?: string;
}

export interface RunRecordCheck {
  readonly title: string;
  readonly passed: boolean;
  readonly value: Num;
  readonly min: Num;
  readonly max: Num;
  readonly margin: Num;
  readonly unit: string;
  readonly derivation: string;
  readonly cell: number;
}

export interface RunRecordOutput {
  readonly file: string;
  readonly bytes: number;
  readonly sha256: string;
}

export interface RunRecord {
  readonly kind: typeof runRecordKind;
  readonly schema: typeof runRecordSchema;
  readonly tool: string;
  readonly date: string;
  readonly source: { readonly path: string; readonly sha256: string };
  readonly fingerprints: { readonly inputs: string; readonly derivations: readonly { readonly title: string; readonly cell: number; readonly fingerprint: string }[] };
  readonly inputs: readonly RunRecordInput[];
  readonly checks: readonly RunRecordCheck[];
  readonly cells: { readonly failed: readonly { readonly cell: number; readonly status: string; readonly message: string }[]; readonly notRun: readonly number[] };
  readonly verdict: "pass" | "fail" | "incomplete";
  readonly exitCode: number;
  readonly outputs: readonly RunRecordOutput[];
}

export const digest = (content: string | Uint8Array): RunRecordOutput["sha256"] => createHash("sha256").update(content).digest("hex");

export interface RunRecordParts {
  readonly tool: string;
  readonly date: Date;
  readonly sourcePath: string;
  readonly sourceSha256: string;
  readonly inputsFingerprint: string;
  readonly derivations: readonly { readonly title: string; readonly cell: number; readonly fingerprint?: string }[];
  readonly inputs: readonly { readonly name: string; readonly text: string; readonly value: number; readonly dim: Dimension; readonly overridden: boolean; readonly original?: string }[];
  readonly checks: readonly CheckLine[];
  readonly failures: readonly CellFailure[];
  readonly skipped: readonly number[];
  /** The other files of the folder, already rendered. */
  readonly outputs: readonly { readonly file: string; readonly content: string }[];
}

/** Cells are numbered from 1 here, as the report and the terminal number them. */
export function buildRunRecord(p: RunRecordParts): RunRecord {
  const failed = p.checks.some((c) => !c.passed);
  const verdict = p.failures.length ? "incomplete" : failed ? "fail" : "pass";
  return {
    kind: runRecordKind,
    schema: runRecordSchema,
    tool: p.tool,
    date: p.date.toISOString(),
    source: { path: p.sourcePath, sha256: p.sourceSha256 },
    fingerprints: { inputs: p.inputsFingerprint, derivations: p.derivations.flatMap((d) => (d.fingerprint ? [{ title: d.title, cell: d.cell + 1, fingerprint: d.fingerprint }] : [])) },
    inputs: p.inputs.map((i) => ({ name: i.name, text: i.text, value: num(i.value), unit: siUnit(i.dim), dimension: i.dim, overridden: i.overridden, ...(i.overridden && i.original !== undefined ? { notebookText: i.original } : {}) })),
    checks: p.checks.map((c) => ({ title: c.title, passed: !!c.passed, value: num(c.value), min: num(c.min), max: num(c.max), margin: num(c.margin), unit: siUnit(c.dim), derivation: c.derivation, cell: c.cell + 1 })),
    cells: { failed: p.failures.map((f) => ({ cell: f.cell + 1, status: f.status, message: f.lines[0] ?? "" })), notRun: p.skipped.map((i) => i + 1) },
    verdict,
    exitCode: verdict === "pass" ? 0 : 1,
    outputs: p.outputs.map((o) => ({ file: o.file, bytes: Buffer.byteLength(o.content, "utf8"), sha256: digest(o.content) })),
  };
}

/** Is this text a run record (so a later run may replace it)? */
export function isRunRecord(text: string): boolean {
  try {
    return (JSON.parse(text) as { kind?: unknown }).kind === runRecordKind;
  } catch {
    return false;
  }
}
