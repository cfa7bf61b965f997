/**
 * The re-evaluation proof: every formula step of a derivation is evaluated
 * again, independently of the generated plain-number code, by mathjs with each
 * input as a mathjs Unit in its SI unit (from lib/quantity.ts). The result must
 * have the dimension the step claims and, converted to that unit, equal the
 * recorded result to a relative 1e-9. A record whose numbers drifted from its
 * formulas, or a formula that is dimensionally wrong, fails here.
 *
 * Other tests call `expectReevaluates(rec)` on any derivation they produce.
 * The formula language's own functions (lib/formulas/functions.ts, e.g. wrightOmega) are
 * taught to mathjs with the same implementation the generated code calls; their
 * argument must be dimensionless.
 */
import { all, create, type Unit } from "mathjs";
import { formulaFunctions } from "../../lib/formulas/functions.js";
import { dimensions, type Dimension } from "../../lib/quantity.js";
import type { Derivation, DerivationData, FormulaStep } from "../../lib/record/derivation.js";

const math = create(all!);
math.import(
  Object.fromEntries(
    Object.entries(formulaFunctions).map(([name, f]) => [
      name,
      (x: unknown) => {
        if (typeof x === "number") return f.impl(x);
        if (math.isUnit(x) && (x as Unit).dimensions.every((p: number) => p === 0)) return f.impl((x as Unit).toNumber(""));
        throw new TypeError(`${name} needs a dimensionless argument, got ${String(x)}`);
      },
    ]),
  ),
);

/** The unit string mathjs parses for a dimension: lib/quantity.ts's, with `1/V` written `V^-1`. */
export function mathjsUnitOf(dim: Dimension): string {
  const u = dimensions[dim].unit;
  const inverse = /^1\/([A-Za-z]+)$/.exec(u);
  return inverse ? `${inverse[1]}^-1` : u;
}

/** A plain SI number as a mathjs quantity (a bare number when the dimension has no unit: ratios, counts). */
export function asUnit(value: number, dim: Dimension): Unit | number {
  return dimensions[dim].unit === "" ? value : math.unit(value, mathjsUnitOf(dim));
}

export interface Reevaluation {
  /** The result mathjs computed, in the step's result unit; NaN when it could not. */
  readonly value: number;
  /** Why the step does not re-evaluate, or undefined when it does. */
  readonly problem?: string;
}

/**
 * The Wright ω function (ω + ln ω = y) for the catalog's `wrightOmega`, which mathjs lacks: by bisection on
 * u = ln ω (u + eᵘ = y rises with u), independent of lib/numeric/wright-omega.ts; 0 where eʸ underflows.
 */
export function wrightOmegaByBisection(y: number): number {
  if (Math.exp(y) === 0) return 0;
  let lo = Math.min(y, 0) - 1;
  let hi = Math.max(y, 1) + 1;
  for (let k = 0; k < 200; k++) {
    const m = (lo + hi) / 2;
    if (m + Math.exp(m) < y) lo = m;
    else hi = m;
  }
  return Math.exp((lo + hi) / 2);
}

const agree = (a: number, b: number, rel: number) => a === b || Math.abs(a - b) <= rel * Math.max(Math.abs(a), Math.abs(b));

/** Evaluate `expr` with unit-carrying inputs and express it in the unit of `resultDim`. */
export function evaluateWithUnits(expr: string, inputs: ReadonlyArray<{ name: string; value: number; dim: Dimension }>, resultDim: Dimension): Reevaluation {
  const scope: Record<string, unknown> = { wrightOmega: wrightOmegaByBisection };
  for (const i of inputs) scope[i.name] = asUnit(i.value, i.dim);
  let out: unknown;
  try {
    out = math.evaluate(expr, scope);
  } catch (e) {
    return { value: NaN, problem: `mathjs could not evaluate ${JSON.stringify(expr)} with units: ${(e as Error).message}` };
  }
  if (typeof out === "number") {
    if (resultDim !== "dimensionless") return { value: NaN, problem: `result is dimensionless but the step claims ${resultDim} (${dimensions[resultDim].unit})` };
    return { value: out };
  }
  if (math.isUnit(out)) {
    const u = out as Unit;
    if (resultDim === "dimensionless") {
      const base = u.dimensions.every((p: number) => p === 0);
      return base ? { value: u.toNumber("") } : { value: NaN, problem: `result has unit ${u.formatUnits()} but the step claims a dimensionless ratio` };
    }
    const target = mathjsUnitOf(resultDim);
    if (!u.equalBase(math.unit(1, target))) return { value: NaN, problem: `result has unit ${u.formatUnits()}, not ${target} (${resultDim})` };
    return { value: u.toNumber(target) };
  }
  if (math.isComplex(out)) return { value: NaN, problem: `result is complex (${String(out)}): a square root of a negative quantity` };
  return { value: NaN, problem: `result is ${typeof out}, not a quantity` };
}

/** Re-evaluate one recorded formula step. */
export function reevaluateStep(step: FormulaStep, rel = 1e-9): Reevaluation {
  const r = evaluateWithUnits(step.expr, step.inputs, step.result.dim);
  if (r.problem) return r;
  if (!agree(r.value, step.result.value, rel)) return { value: r.value, problem: `recorded ${step.result.value} but the formula gives ${r.value} ${mathjsUnitOf(step.result.dim)}` };
  return r;
}

export interface StepMismatch {
  /** 1-based position among all steps, as renderings number them. */
  readonly step: number;
  readonly title: string;
  readonly formula: string;
  readonly problem: string;
}

/** Every formula step that does not re-evaluate; empty when the record is sound. */
export function reevaluate(d: Derivation | DerivationData, rel = 1e-9): StepMismatch[] {
  const data = "toJSON" in d && typeof d.toJSON === "function" ? d.toJSON() : (d as DerivationData);
  const out: StepMismatch[] = [];
  data.steps.forEach((s, i) => {
    if (s.kind !== "formula") return;
    const r = reevaluateStep(s, rel);
    if (r.problem) out.push({ step: i + 1, title: s.title, formula: s.formula, problem: r.problem });
  });
  return out;
}

/** Throws, listing each bad step, unless every formula step re-evaluates; returns the number of steps checked. */
export function expectReevaluates(d: Derivation | DerivationData, rel = 1e-9): number {
  const data = "toJSON" in d && typeof d.toJSON === "function" ? d.toJSON() : (d as DerivationData);
  const bad = reevaluate(data, rel);
  if (bad.length) throw new Error(`derivation "${data.title}": ${bad.length} step(s) do not re-evaluate with units:\n${bad.map((b) => `  step ${b.step} ${b.title} [${b.formula}]: ${b.problem}`).join("\n")}`);
  return data.steps.filter((s) => s.kind === "formula").length;
}
