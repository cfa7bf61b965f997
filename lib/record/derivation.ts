/**
 * The derivation: the reviewer's view of a calculation. Numeric code passes an
 * optional `Derivation` down; when it is present, every formula evaluated
 * records itself with the very arguments and result the code used, so the
 * record cannot drift from the numbers. Rendering lives in ./render-*.ts.
 */
import type { Formula } from "../formulas/define.js";
import { dimensions, type Dimension } from "../quantity.js";
import { fingerprint } from "./fingerprint.js";

/** Version of the JSON form (`toJSON()`); raised when a field changes meaning or is removed. */
export const derivationSchemaVersion = 1;

export interface RecordedValue {
  readonly name: string;
  readonly value: number;
  readonly dim: Dimension;
}

export interface FormulaStep {
  readonly kind: "formula";
  readonly title: string;
  readonly formula: string;
  readonly expr: string;
  readonly tex: string;
  readonly inputs: readonly RecordedValue[];
  readonly result: RecordedValue;
  readonly source?: string;
  /** Why this step is taken, e.g. "assume saturation". */
  readonly because?: string;
}

export interface NoteStep {
  readonly kind: "note";
  readonly title: string;
  readonly text: string;
}

export type Step = FormulaStep | NoteStep;

export interface CheckEntry {
  readonly title: string;
  readonly passed: boolean;
  readonly value: number;
  readonly dim: Dimension;
  /** Bound that was required, e.g. { min: 0.2 }. */
  readonly min?: number;
  readonly max?: number;
  /** Distance to the nearest bound, positive when passed, in the value's unit. */
  readonly margin: number;
  readonly detail?: string;
}

export interface InputEntry extends RecordedValue {
  /** Where the value came from: a parameter, a file field, a device card. */
  readonly origin?: string;
  /** The text the engineer typed, when parsed from text. */
  readonly text?: string;
}

export type Severity = "note" | "caution" | "warning";

export interface Finding {
  readonly severity: Severity;
  readonly text: string;
}

export interface DerivationData {
  /** `derivationSchemaVersion` of the writer; absent in hand-made data. */
  readonly schemaVersion?: number;
  /** SHA-256 of the canonical inputs (see ./fingerprint.ts); absent in hand-made data. */
  readonly fingerprint?: string;
  readonly title: string;
  /** One line under the title: the stage, the device, the scenario. */
  readonly subtitle?: string;
  readonly inputs: readonly InputEntry[];
  readonly steps: readonly Step[];
  readonly checks: readonly CheckEntry[];
  readonly assumptions: readonly string[];
  readonly sources: readonly string[];
  readonly findings: readonly Finding[];
}

/**
 * Title prefix of a check on the solver's own result (a KCL residual), not on
 * the design: renderers list these under a solver heading of their own.
 */
export const solverCheckPrefix = "Solver: ";

/** A list of checks split into the design's and the solver's own (the prefix dropped there), each in its order. */
export function splitSolverChecks<T extends { readonly title: string }>(checks: readonly T[]): { design: T[]; solver: T[] } {
  const design: T[] = [];
  const solver: T[] = [];
  for (const c of checks) {
    if (c.title.startsWith(solverCheckPrefix)) solver.push({ ...c, title: c.title.slice(solverCheckPrefix.length) });
    else design.push(c);
  }
  return { design, solver };
}

export class Derivation {
  readonly inputs: InputEntry[] = [];
  readonly steps: Step[] = [];
  readonly checks: CheckEntry[] = [];
  readonly assumptions: string[] = [];
  readonly sources: string[] = [];
  readonly findings: Finding[] = [];

  /** One line under the title; set it directly or with `describe`. */
  subtitle?: string;

  constructor(readonly title: string) {}

  describe(subtitle: string): this {
    this.subtitle = subtitle;
    return this;
  }

  /** SHA-256 (hex) of the canonical inputs: which inputs produced this record. */
  fingerprint(): string {
    return fingerprint(this);
  }

  /** Record a given value (a specification, a component, a card parameter). */
  input(name: string, value: number, dim: Dimension, origin?: string, text?: string): this {
    const entry: InputEntry = { name, value, dim, ...(origin ? { origin } : {}), ...(text ? { text } : {}) };
    // Entries for this quantity: the name itself, or the name qualified "(2)", "(3)"… for further sources.
    const same = (i: InputEntry) => i.name === name || (i.name.startsWith(`${name} (`) && /^ \(\d+\)$/.test(i.name.slice(name.length)));
    const bySource = this.inputs.findIndex((i) => same(i) && i.origin === entry.origin);
    if (bySource >= 0) this.inputs[bySource] = { ...entry, name: this.inputs[bySource]!.name };
    else if (!this.inputs.some(same)) this.inputs.push(entry);
    else if (!this.inputs.some((i) => same(i) && i.value === value)) {
      // The same quantity from another source with another value (two cards' TOX in one stage): keep both,
      // so the table and the fingerprint show every value the steps used.
      let k = 2;
      while (this.inputs.some((i) => i.name === `${name} (${k})`)) k++;
      this.inputs.push({ ...entry, name: `${name} (${k})` });
    }
    return this;
  }

  /** Record a formula evaluation: `args` in the order of `formula.vars`, `result` as returned by `formula.fn`. */
  step(formula: Formula, args: readonly number[], result: number, because?: string): this {
    const inputs = formula.vars.map((name, i) => ({ name, value: args[i]!, dim: formula.dims[i]! }));
    this.steps.push({
      kind: "formula",
      title: formula.title,
      formula: formula.id,
      expr: formula.expr,
      tex: formula.tex,
      inputs,
      result: { name: formula.result, value: result, dim: formula.resultDim },
      ...(formula.source ? { source: formula.source } : {}),
      ...(because ? { because } : {}),
    });
    if (formula.source) this.cite(formula.source);
    return this;
  }

  /** Evaluate a formula and record it; for code off the hot path. */
  calc<A extends readonly number[], R extends number>(formula: Formula<A, R>, args: A, because?: string): R {
    const r = formula.fn(...args);
    this.step(formula, args, r, because);
    return r;
  }

  /** A reasoning step in words: an assumption made, a root rejected, a region re-tried. */
  note(title: string, text: string): this {
    this.steps.push({ kind: "note", title, text });
    return this;
  }

  /** A pass/fail check against bounds; margin is the distance to the nearest bound. */
  check(title: string, value: number, dim: Dimension, bounds: { min?: number; max?: number }, detail?: string): CheckEntry {
    const { passed, margin } = checkMargin(value, bounds);
    const entry: CheckEntry = {
      title,
      passed,
      value,
      dim,
      ...(bounds.min !== undefined ? { min: bounds.min } : {}),
      ...(bounds.max !== undefined ? { max: bounds.max } : {}),
      margin,
      ...(detail ? { detail } : {}),
    };
    this.checks.push(entry);
    return entry;
  }

  assume(text: string): this {
    if (!this.assumptions.includes(text)) this.assumptions.push(text);
    return this;
  }

  cite(text: string): this {
    if (!this.sources.includes(text)) this.sources.push(text);
    return this;
  }

  find(severity: Severity, text: string): this {
    if (!this.findings.some((f) => f.text === text)) this.findings.push({ severity, text });
    return this;
  }

  get passed(): boolean {
    return this.checks.every((c) => c.passed);
  }

  toJSON(): DerivationData {
    return {
      schemaVersion: derivationSchemaVersion,
      fingerprint: fingerprint(this),
      title: this.title,
      ...(this.subtitle ? { subtitle: this.subtitle } : {}),
      inputs: this.inputs,
      steps: this.steps,
      checks: this.checks,
      assumptions: this.assumptions,
      sources: this.sources,
      findings: this.findings,
    };
  }
}

/**
 * The rule every check follows: the margin is the distance to the nearest bound
 * (positive inside), and an infinite value passes only where it has no bound on that side.
 */
export function checkMargin(value: number, bounds: { min?: number; max?: number }): { passed: boolean; margin: number } {
  const margins: number[] = [];
  if (bounds.min !== undefined) margins.push(value - bounds.min);
  if (bounds.max !== undefined) margins.push(bounds.max - value);
  const margin = margins.length ? Math.min(...margins) : 0;
  const passed = Number.isFinite(value) ? margin >= 0 : value === Infinity ? bounds.max === undefined : bounds.min === undefined;
  return { passed, margin };
}

/** SI unit string for a dimension (for renderers and the unit parser). */
export const unitOf = (dim: Dimension): string => dimensions[dim].unit;
