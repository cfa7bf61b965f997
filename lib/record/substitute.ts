/**
 * The middle line of a hand calculation: the formula with every symbol replaced
 * by its value and unit, `I_D = ½·(2.00 mA/V²)·(0.300 V)² = 90.0 µA`. Built from
 * the step's own mathjs expression, so the substituted line has the same shape
 * as the typeset formula. mathjs is loaded here, at the rendering edge only.
 */
import { parse, type MathNode } from "mathjs";
import { PinchoffError } from "../errors.js";
import { texOfFunction } from "../formulas/define.js";
import { formatQuantity, texQuantity, type FormatOptions } from "../units/format.js";
import type { FormulaStep, RecordedValue } from "./derivation.js";

/** Left side of the recorded TeX (`I_{D}` of `I_{D} = …`), as the generator writes it. */
export function resultTex(step: Pick<FormulaStep, "tex">): string {
  const at = step.tex.indexOf(" = ");
  return at > 0 ? step.tex.slice(0, at) : step.tex;
}

/** Right side of the formula with values and units in place of the symbols. */
function parsed(step: FormulaStep): MathNode {
  try {
    return parse(step.expr);
  } catch (e) {
    throw new PinchoffError("invalid-value", `expression ${JSON.stringify(step.expr)} does not parse: ${(e as Error).message}`, `step "${step.title}"`);
  }
}

/**
 * A mathjs print handler that puts each input's formatted value in place of its
 * symbol. Values with a unit, or negative, go in parentheses so powers and
 * products read unambiguously; function names (sqrt) and constants pass through.
 */
function substituting(step: FormulaStep, show: (v: RecordedValue, origin: string) => string, bare: (text: string) => string, paren: (text: string) => string) {
  const values = new Map(step.inputs.map((i) => [i.name, i]));
  return (n: MathNode): string | undefined => {
    const s = n as MathNode & { name?: string };
    if (n.type !== "SymbolNode" || !s.name) return undefined;
    const v = values.get(s.name);
    if (!v) return undefined;
    const text = show(v, `step "${step.title}" input ${v.name}`);
    return (v.dim === "dimensionless" || v.dim === "count") && v.value >= 0 ? bare(text) : paren(text);
  };
}

export function substitutedTex(step: FormulaStep, opts: FormatOptions = {}): string {
  const values = substituting(step, (v, origin) => texQuantity(v.value, v.dim, { ...opts, origin }), (t) => `{${t}}`, (t) => `\\left(${t}\\right)`);
  const handler = (n: MathNode, options: object) => values(n) ?? texOfFunction(n, options);
  return parsed(step).toTex({ parenthesis: "auto", implicit: "hide", handler } as never);
}

/** The three parts of a typeset step: formula, substituted formula, result. */
export function stepTex(step: FormulaStep, opts: FormatOptions = {}): { formula: string; substituted: string; result: string } {
  const lhs = resultTex(step);
  return {
    formula: step.tex,
    substituted: `${lhs} = ${substitutedTex(step, opts)}`,
    result: `${lhs} = ${texQuantity(step.result.value, step.result.dim, { ...opts, origin: `step "${step.title}" result` })}`,
  };
}

/** Plain-text form of the substituted right side, for terminals: `(2.00 mA/V²) / 2 * (300 mV) ^ 2`. */
export function substitutedText(step: FormulaStep, opts: FormatOptions = {}): string {
  const handler = substituting(step, (v, origin) => formatQuantity(v.value, v.dim, { ...opts, origin }), (t) => t, (t) => `(${t})`);
  return parsed(step).toString({ parenthesis: "auto", implicit: "hide", handler } as never);
}
