/**
 * The shapes of symbols and formulas. A catalog module (`*.catalog.ts`) states
 * each formula once, as a mathjs expression over named symbols; the generator
 * (`generate.ts`) compiles every catalog into a plain-number function and a
 * typeset form (`*.formulas.ts`), so the number, the recorded step and the
 * typeset equation all come from that one expression.
 */
import type { Dimension } from "../quantity.js";

export interface SymbolSpec {
  /** TeX for the symbol, e.g. `V_{GS}`. */
  readonly tex: string;
  readonly dim: Dimension;
  /** What the symbol means, in the trade's words. */
  readonly meaning: string;
}

export interface FormulaSpec {
  readonly title: string;
  /** Symbol that the formula defines. */
  readonly result: string;
  /** mathjs expression over symbol names; evaluated with units in the tests. */
  readonly expr: string;
  /** Where the formula comes from (a paper, a textbook, a standard, or "common practice"). */
  readonly source?: string;
}

/** A compiled formula: generated from a catalog entry, never written by hand. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any
export interface Formula<Args extends readonly number[] = any[], R extends number = number> {
  readonly id: string;
  readonly title: string;
  readonly expr: string;
  /** TeX of the whole equation, `result = rhs`. */
  readonly tex: string;
  readonly result: string;
  readonly resultDim: Dimension;
  readonly vars: readonly string[];
  readonly dims: readonly Dimension[];
  readonly source?: string;
  readonly fn: (...args: Args) => R;
}

/**
 * One step of a composition: a formula id of the same catalog; or a choice between two formulas
 * with the same result by a condition (a mathjs comparison over symbols known at that point);
 * or an early return of a constant when a condition holds.
 */
export type CompositionStep =
  | string
  | { readonly when: string; readonly then: string; readonly otherwise: string }
  | { readonly returnWhen: string; readonly value: number; readonly why: string };

/**
 * A model quantity computed by chaining the catalog's formulas in order: the generator inlines
 * every step's expression into one plain-number function over `inputs` (in that order), with
 * no branded types and no per-call objects, for the hot path. Each step's result is a symbol
 * the later steps read; the function returns the last step's result.
 */
export interface CompositionSpec {
  readonly title: string;
  /** The function's parameters, symbol names, in order. */
  readonly inputs: readonly string[];
  readonly steps: readonly CompositionStep[];
}

/** Identity helpers that keep literal types for the generator and the checker. */
export const defineSymbols = <const S extends Record<string, SymbolSpec>>(s: S) => s;
export const defineFormulas = <const F extends Record<string, FormulaSpec>>(f: F) => f;
export const defineCompositions = <const C extends Record<string, CompositionSpec>>(c: C) => c;

/**
 * TeX of a catalog function mathjs does not know (it would print \\mathrm{wrightOmega}), for the typeset formula
 * and its substituted line alike; undefined for any other node. `options` are the print options, handler included.
 */
export function texOfFunction(node: { type: string }, options: object): string | undefined {
  const f = node as { type: string; fn?: { name?: string }; args?: { toTex(o: object): string }[] };
  if (f.type !== "FunctionNode" || f.fn?.name !== "wrightOmega") return undefined;
  return `\\omega\\left(${f.args!.map((a) => a.toTex(options)).join(",")}\\right)`;
}

/** x², used by generated code for `^2`. */
export const sq = (x: number): number => x * x;
