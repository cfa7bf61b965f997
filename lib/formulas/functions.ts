/**
 * The formula language's own functions, beyond those mathjs knows: for each, the
 * implementation that the generated code imports and that the tests' unit-carrying
 * re-evaluation calls (one implementation, so the number and its proof agree), the
 * module the generated code imports it from, and how it is typeset and printed as the
 * trade writes it (a mathjs print handler, used by the generator's TeX and by the
 * substituted lines of lib/record/substitute.ts).
 */
import type { MathNode } from "mathjs";
import { omegaBlockSize, wrightOmega } from "../numeric/wright-omega.js";

export interface FormulaFunction {
  /** The plain-number implementation (one argument). */
  readonly impl: (x: number) => number;
  /** Module the generated `*.formulas.ts` imports it from (relative to lib/formulas/). */
  readonly module: string;
  readonly tex: (arg: string) => string;
  readonly text: (arg: string) => string;
  /**
   * The form block evaluators call (lib/formulas/generate.ts), `name(x, y, count)`: f(x[k]) into y[k] for
   * k < count, y may be x, equal to `impl` value by value; `name` is its export from `module`, `size` the most
   * values one call takes (test/wright-omega.test.ts holds the block form equal to the scalar one).
   */
  readonly block?: { readonly name: string; readonly size: number };
}

export const formulaFunctions: Readonly<Record<string, FormulaFunction>> = {
  /** ω(y), ω + ln ω = y (the principal Lambert W of eʸ): the EKV charge–voltage relation 2q + ln q = v solved as q = ω(v + ln 2)/2. */
  wrightOmega: {
    impl: wrightOmega,
    module: "../numeric/wright-omega.js",
    tex: (a) => `\\omega\\left(${a}\\right)`,
    text: (a) => `wrightOmega(${a})`,
    block: { name: "wrightOmegaBlock", size: omegaBlockSize },
  },
};

type Handler = (node: MathNode, options: object) => string | undefined;

/** A mathjs print handler (toTex when `mode` is "tex", toString otherwise) that prints these functions, tried after `inner`. */
export function printFormulaFunctions(mode: "tex" | "text", inner?: Handler): Handler {
  return (node, options) => {
    const own = inner?.(node, options);
    if (own !== undefined) return own;
    const n = node as MathNode & { fn?: { name?: string }; args?: MathNode[] };
    const f = n.type === "FunctionNode" && n.fn?.name ? formulaFunctions[n.fn.name] : undefined;
    if (!f || n.args?.length !== 1) return undefined;
    const arg = n.args[0]!;
    return mode === "tex" ? f.tex(arg.toTex(options)) : f.text(arg.toString(options));
  };
}
