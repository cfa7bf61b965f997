/**
 * Build tool: compiles every `*.catalog.ts` in this folder into a sibling
 * `*.formulas.ts` holding, per formula, a plain-number function and a record typed
 * with its TeX and metadata, and a sibling `*.texts.json` holding those texts, which
 * the record reads on first use (record.ts says why). Run `npm run gen`;
 * `npm run gen -- --check` fails when a generated file is stale (the test suite
 * runs that check).
 *
 * A catalog may also export `compositions` (`CompositionSpec`, define.ts): a model
 * quantity as a chain of its formulas. Each becomes one exported function whose body
 * is the steps' expressions inlined in order (`const <result> = <expression>;`), plain
 * numbers in and out, so the hot path is the catalog's equations with no hand-written
 * copy, no branded-type wrappers and no allocation. A step that reads a symbol no
 * input or earlier step provides, or a result defined twice, is refused.
 *
 * A composition that names `pointInputs` also becomes `<id>Block`, a block evaluator:
 * the same expressions over arrays of points, in loops over blocks of `blockSize` points
 * (a new loop at each step that calls a slow function, so independent points overlap in
 * the processor instead of one long dependent chain per point), intermediates that a later
 * loop reads in module-level scratch arrays (allocated once at load), steps and
 * subexpressions that read no per-point value hoisted before the loops, a `when` chosen
 * per point and each `returnWhen` a masked result in the final store. A call of a language
 * function with a block form (functions.ts) whose argument varies by point becomes a block call
 * between loops: the loop before computes the arguments into a scratch array, the block form
 * replaces them by the results, the step's loop reads them. The operations and their order are
 * the point function's, so the results are equal point by point.
 *
 * Functions: mathjs's sqrt exp log log1p abs max min atan, and the formula language's own
 * (`functions.ts`: wrightOmega), imported by the generated file from their one implementation.
 *
 * mathjs is used here, at build time, so the generated code needs none.
 */
import { readdirSync, readFileSync, writeFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { parse, type MathNode } from "mathjs";
import type { CompositionSpec, CompositionStep, FormulaSpec, SymbolSpec } from "./define.js";
import { dimensions, type Dimension } from "../quantity.js";
import { formulaFunctions, printFormulaFunctions, type FormulaFunction } from "./functions.js";

const here = dirname(fileURLToPath(import.meta.url));

/** Branded type name for each dimension, as exported by quantity.ts. */
const typeOfDim: Record<Dimension, string> = {
  voltage: "Volts",
  current: "Amperes",
  resistance: "Ohms",
  conductance: "Siemens",
  transconductanceParameter: "AmperesPerVoltSquared",
  inverseVoltage: "PerVolt",
  sqrtVoltage: "SqrtVolts",
  voltagePerKelvin: "VoltsPerKelvin",
  length: "Meters",
  area: "SquareMeters",
  slewRate: "VoltsPerSecond",
  voltageLength: "VoltMeters",
  electricField: "VoltsPerMeter",
  temperature: "Kelvin",
  power: "Watts",
  thermalResistance: "KelvinPerWatt",
  capacitance: "Farads",
  capacitancePerArea: "FaradsPerSquareMeter",
  mobility: "Mobility",
  time: "Seconds",
  inverseVoltageEfficiency: "SiemensPerAmpere",
  currentPerWidth: "AmperesPerMeter",
  capacitancePerWidth: "FaradsPerMeter",
  frequency: "Hertz",
  dimensionless: "Ratio",
  count: "Count",
  fraction: "Fraction",
};

const mathFunctions: Record<string, string> = { sqrt: "Math.sqrt", atan: "Math.atan", exp: "Math.exp", log: "Math.log", log1p: "Math.log1p", abs: "Math.abs", max: "Math.max", min: "Math.min" };

interface Catalog {
  file: string;
  symbols: Record<string, SymbolSpec>;
  formulas: Record<string, FormulaSpec>;
  compositions?: Record<string, CompositionSpec>;
}

export async function loadCatalogs(): Promise<Catalog[]> {
  const files = readdirSync(here).filter((f) => f.endsWith(".catalog.ts")).sort();
  const out: Catalog[] = [];
  for (const file of files) {
    const mod = (await import(pathToFileURL(join(here, file)).href)) as Omit<Catalog, "file">;
    out.push({ file, symbols: mod.symbols ?? {}, formulas: mod.formulas ?? {}, compositions: mod.compositions ?? {} });
  }
  return out;
}

/** All symbols across catalogs; the same name must mean the same thing everywhere. */
export function mergeSymbols(catalogs: Catalog[]): Record<string, SymbolSpec> {
  const all: Record<string, SymbolSpec> = {};
  for (const c of catalogs) {
    for (const [name, spec] of Object.entries(c.symbols)) {
      const prior = all[name];
      if (prior && (prior.dim !== spec.dim || prior.tex !== spec.tex))
        throw new Error(`${c.file}: symbol ${name} redefined (${prior.dim} ${prior.tex} vs ${spec.dim} ${spec.tex})`);
      all[name] = spec;
    }
  }
  return all;
}

/** One formula, one home: the same equation stated twice (in any catalog) is an error. */
export function refuseRestatements(catalogs: Catalog[]): void {
  const seen = new Map<string, string>();
  for (const c of catalogs)
    for (const [id, f] of Object.entries(c.formulas)) {
      const key = `${f.result} = ${parse(f.expr).toString({ parenthesis: "auto" })}`;
      const prior = seen.get(key);
      if (prior) throw new Error(`${c.file}: ${id} restates ${prior} (${key}); use that one and say why with the step's "because"`);
      seen.set(key, `${c.file}: ${id}`);
    }
}

const comparisons: Record<string, string> = { ">": ">", "<": "<", ">=": ">=", "<=": "<=", "==": "===", "!=": "!==" };

/**
 * How a block evaluator names things: `symbol` gives the JS for a symbol (an array element for a
 * per-point value), `hoisted` may replace a whole subexpression by a name computed before the loops.
 */
interface JsContext {
  symbol(name: string): string;
  hoisted(node: MathNode): string | undefined;
}

function toJs(node: MathNode, where: string, condition = false, ctx?: JsContext): string {
  const n = node as MathNode & Record<string, any>;
  const h = ctx?.hoisted(node);
  if (h !== undefined) return h;
  if (condition) {
    // a composition's condition: one comparison of two expressions
    const op = n.type === "OperatorNode" ? comparisons[n.op as string] : undefined;
    if (!op) throw new Error(`${where}: a condition must be one comparison (> < >= <= == !=), got ${node.toString()}`);
    return `${toJs(n.args[0], where, false, ctx)} ${op} ${toJs(n.args[1], where, false, ctx)}`;
  }
  switch (n.type) {
    case "ConstantNode":
      return String(n.value);
    case "SymbolNode":
      return n.name === "pi" ? "Math.PI" : ctx ? ctx.symbol(n.name) : n.name;
    case "ParenthesisNode":
      return `(${toJs(n.content, where, false, ctx)})`;
    case "OperatorNode": {
      const args = (n.args as MathNode[]).map((a) => toJs(a, where, false, ctx));
      if (args.length === 1 && n.op === "-") return `(-${args[0]})`;
      if (args.length === 1 && n.op === "+") return `(+${args[0]})`;
      // A square is a product: exact, and several times faster than ** on the hot path.
      if (n.op === "^" && (n.args[1] as MathNode & { value?: unknown }).type === "ConstantNode" && String((n.args[1] as any).value) === "2") return `sq(${args[0]})`;
      const op = n.op === "^" ? "**" : n.op;
      if (!["+", "-", "*", "/", "**"].includes(op)) throw new Error(`${where}: operator ${n.op} not supported`);
      return `(${args[0]} ${op} ${args[1]})`;
    }
    case "FunctionNode": {
      const name = n.fn.name as string;
      const fn = mathFunctions[name] ?? (formulaFunctions[name] ? name : undefined);
      if (!fn) throw new Error(`${where}: function ${n.fn.name} not supported`);
      // A Math function of constants (ln 2) is computed here once, not on every call.
      const args = n.args as (MathNode & { value?: unknown })[];
      if (fn.startsWith("Math.") && args.every((a) => a.type === "ConstantNode")) {
        const value = (Math as unknown as Record<string, (...x: number[]) => number>)[fn.slice(5)]!(...args.map((a) => Number(a.value)));
        if (Number.isFinite(value)) return `${value}`;
      }
      return `${fn}(${args.map((a) => toJs(a, where, false, ctx)).join(", ")})`;
    }
    default:
      throw new Error(`${where}: expression node ${n.type} not supported`);
  }
}

/** Free symbols in order of first appearance (outside the subtrees that `skip` holds, when given). */
function freeSymbols(node: MathNode, skip?: ReadonlyMap<MathNode, unknown>): string[] {
  const names: string[] = [];
  const visit = (c: MathNode, parent?: MathNode) => {
    if (skip?.has(c)) return;
    const s = c as MathNode & { name?: string };
    const isFunctionName = parent?.type === "FunctionNode" && (parent as MathNode & { fn: MathNode }).fn === c;
    // pi is the one named constant (mathjs knows it, so re-evaluation needs no input for it).
    if (c.type === "SymbolNode" && !isFunctionName && s.name !== "pi" && !names.includes(s.name!)) names.push(s.name!);
    c.forEach((child) => visit(child, c));
  };
  visit(node);
  return names;
}

/** A call, in a block evaluator, of a language function with a block form: its argument goes to `scratch` a block at a time. */
interface BlockCall {
  node: MathNode;
  name: string;
  argument: MathNode;
  block: NonNullable<FormulaFunction["block"]>;
  scratch: string;
}

/** The calls in `node` of language functions with a block form whose argument varies from point to point. */
function blockCalls(node: MathNode, where: string, isVarying: (node: MathNode) => boolean): Omit<BlockCall, "scratch">[] {
  const found: Omit<BlockCall, "scratch">[] = [];
  node.traverse((x) => {
    const name = x.type === "FunctionNode" ? (x as MathNode & { fn: { name: string } }).fn.name : undefined;
    const block = name ? formulaFunctions[name]?.block : undefined;
    if (!block || !isVarying(x)) return;
    const args = (x as MathNode & { args: MathNode[] }).args;
    if (args.length !== 1) throw new Error(`${where}: ${name} takes one argument`);
    if (block.size < blockSize) throw new Error(`${where}: ${block.name} takes at most ${block.size} values, fewer than a block of ${blockSize}`);
    if (found.some((f) => f.node.filter((y) => y === x).length)) throw new Error(`${where}: ${name} inside another block-form call (write the inner one as a step of its own)`);
    found.push({ node: x, name: name!, argument: args[0]!, block });
  });
  return found;
}

export function texOf(expr: string, symbols: Record<string, SymbolSpec>): string {
  return parse(expr).toTex({
    parenthesis: "auto",
    implicit: "hide",
    handler: printFormulaFunctions("tex", (node: MathNode) => {
      const s = node as MathNode & { name?: string };
      if (node.type === "SymbolNode" && s.name && symbols[s.name]) return `{${symbols[s.name]!.tex}}`;
      return undefined;
    }),
  } as never);
}

/** One composition as a function: every step inlined, in order (see the header). */
export function composition(c: Catalog, id: string, spec: CompositionSpec): string {
  const where = `${c.file}: composition ${id}`;
  const known = new Set<string>(spec.inputs);
  if (known.size !== spec.inputs.length) throw new Error(`${where}: an input is listed twice`);
  const unused = new Set<string>(spec.inputs);
  const read = (node: MathNode, at: string) => {
    for (const v of freeSymbols(node)) {
      if (!known.has(v)) throw new Error(`${at}: ${v} is neither an input nor the result of an earlier step`);
      unused.delete(v);
    }
  };
  const formula = (fid: string) => {
    const f = c.formulas[fid];
    if (!f) throw new Error(`${where}: step ${fid} is not a formula of ${c.file}`);
    const node = parse(f.expr);
    read(node, `${where}, step ${fid}`);
    return { f, js: toJs(node, `${where}, step ${fid}`) };
  };
  const define = (result: string, at: string) => {
    if (known.has(result)) throw new Error(`${at}: ${result} is already defined (an input or an earlier step)`);
    known.add(result);
  };
  const lines: string[] = [];
  const used: string[] = [];
  let last: string | undefined;
  for (const step of spec.steps as readonly CompositionStep[]) {
    if (typeof step === "string") {
      const { f, js } = formula(step);
      define(f.result, `${where}, step ${step}`);
      lines.push(`  const ${f.result} = ${js}; // ${step}`);
      used.push(step);
      last = f.result;
    } else if ("when" in step) {
      const cond = parse(step.when);
      read(cond, `${where}, condition ${step.when}`);
      const a = formula(step.then);
      const b = formula(step.otherwise);
      if (a.f.result !== b.f.result) throw new Error(`${where}: ${step.then} and ${step.otherwise} define different symbols (${a.f.result}, ${b.f.result})`);
      define(a.f.result, `${where}, step ${step.then}`);
      lines.push(`  const ${a.f.result} = ${toJs(cond, where, true)} ? ${a.js} : ${b.js}; // ${step.then} / ${step.otherwise}`);
      used.push(step.then, step.otherwise);
      last = a.f.result;
    } else {
      const cond = parse(step.returnWhen);
      read(cond, `${where}, condition ${step.returnWhen}`);
      if (!Number.isFinite(step.value)) throw new Error(`${where}: the early return value must be a finite number`);
      lines.push(`  if (${toJs(cond, where, true)}) return ${step.value}; // ${step.why}`);
    }
  }
  if (!last) throw new Error(`${where}: no steps`);
  if (unused.size) throw new Error(`${where}: inputs ${[...unused].join(", ")} are never read`);
  return [
    `/** ${spec.title}, composed from ${used.join(", ")} (inlined; plain numbers, no allocation). */`,
    `export function ${id}(${spec.inputs.map((v) => `${v}: number`).join(", ")}): number {`,
    ...lines,
    `  return ${last};`,
    `}`,
  ].join("\n");
}

/** Points per block of a block evaluator: its scratch arrays (one per intermediate a later loop reads) stay in the L1 cache. */
export const blockSize = 256;

/**
 * Functions whose latency dominates a step: a step calling one starts a new loop over the block, so the
 * processor overlaps that step across independent points. Measured on the EKV composition (built code, CPU
 * time a point, shared machine): 10 loops (sqrt included) 66–70 ns, 5 loops (sqrt excluded) 68–73 ns,
 * 3 loops (only at the two interpolation functions) ≈ 89 ns; one loop per step was about 10 % slower than 5 loops
 * (measured with the 1995 interpolation, ln²(1 + e^(v/2)), before the charge relation replaced it).
 */
const slowFunctions = new Set(["exp", "log", "log1p", "atan", "sqrt", ...Object.keys(formulaFunctions)]);
/** Whether `node` calls a slow function on a per-point value (a call on per-device values only is hoisted before the loops). */
const callsSlow = (node: MathNode, isVarying: (node: MathNode) => boolean) =>
  node.filter((x) => x.type === "FunctionNode" && slowFunctions.has((x as MathNode & { fn: { name: string } }).fn.name) && isVarying(x)).length > 0;

/**
 * The block evaluator of a composition with `pointInputs` (see the header): the same steps over
 * arrays of points, in loops over blocks of points. Call after `composition` (which checks the steps).
 */
export function compositionBlock(c: Catalog, id: string, spec: CompositionSpec): string {
  const where = `${c.file}: composition ${id}`;
  const points = spec.pointInputs ?? [];
  for (const v of points) if (!spec.inputs.includes(v)) throw new Error(`${where}: point input ${v} is not an input`);
  const name = `${id}Block`;
  // the generated locals are $-prefixed; out and count are its parameters
  for (const v of [...spec.inputs, ...Object.values(c.formulas).map((f) => f.result)])
    if (v === "out" || v === "count" || v.startsWith("$")) throw new Error(`${where}: symbol ${v} would clash with the block evaluator's own names`);
  const varying = new Set<string>(points);
  const isVarying = (node: MathNode) => freeSymbols(node).some((v) => varying.has(v));

  // Pass 1: each step's nodes, whether it varies from point to point, and the loop it falls in.
  interface Item { result: string; nodes: MathNode[]; when?: MathNode; label: string; loop: number; calls: BlockCall[] }
  const items: Item[] = [];
  const exits: { cond: MathNode; value: number }[] = [];
  const before: Item[] = [];
  const calls = new Map<MathNode, BlockCall>();
  let loop = 0;
  let lastResult = "";
  for (const step of spec.steps as readonly CompositionStep[]) {
    let item: Item;
    if (typeof step === "string") {
      const f = c.formulas[step]!;
      item = { result: f.result, nodes: [parse(f.expr)], label: step, loop, calls: [] };
    } else if ("when" in step) {
      const a = c.formulas[step.then]!;
      item = { result: a.result, nodes: [parse(a.expr), parse(c.formulas[step.otherwise]!.expr)], when: parse(step.when), label: `${step.then} / ${step.otherwise}`, loop, calls: [] };
    } else {
      exits.push({ cond: parse(step.returnWhen), value: step.value });
      continue;
    }
    lastResult = item.result;
    const all = item.when ? [item.when, ...item.nodes] : item.nodes;
    if (!all.some(isVarying)) {
      before.push(item);
      continue;
    }
    varying.add(item.result);
    item.calls = all.flatMap((node) => blockCalls(node, `${where}, step ${item.label}`, isVarying)).map((call, k) => ({ ...call, scratch: `$f${calls.size + k}` }));
    for (const call of item.calls) calls.set(call.node, call);
    // a step with a block call starts a new loop even as the first step: the loop before it computes the arguments
    if (item.calls.length || (items.length && all.some((node) => callsSlow(node, isVarying)))) item.loop = ++loop;
    items.push(item);
  }
  const last = lastResult;
  // Pass 2: an intermediate goes to a scratch array when a later loop (or the final store) reads it; a block
  // call's argument is read in the loop before its step's.
  const defined = new Map(items.map((it) => [it.result, it.loop]));
  const stored = new Set<string>();
  const reads = (nodes: MathNode[], at: number) => {
    for (const node of nodes) for (const v of freeSymbols(node, calls)) if (defined.has(v) && defined.get(v)! < at) stored.add(v);
  };
  for (const it of items) {
    reads(it.when ? [it.when, ...it.nodes] : it.nodes, it.loop);
    reads(it.calls.map((call) => call.argument), it.loop - 1);
  }
  reads(exits.map((e) => e.cond), loop);

  // Subexpressions that read no per-point value are computed once, before the loops (same operations, same
  // result); a block call reads its result array.
  const invariants = new Map<string, string>();
  let current = 0;
  const ctx: JsContext = {
    symbol: (v) => (points.includes(v) ? `${v}[$o + $k]!` : defined.has(v) && defined.get(v)! < current ? `$${v}[$k]!` : v),
    hoisted: (node) => {
      const call = calls.get(node);
      if (call) return `${call.scratch}[$k]!`;
      const trivial = node.type === "SymbolNode" || node.type === "ConstantNode" || node.type === "ParenthesisNode";
      if (trivial || !freeSymbols(node).length || isVarying(node)) return undefined;
      const js = node.type === "OperatorNode" && comparisons[(node as MathNode & { op: string }).op] ? toJs(node, where, true) : toJs(node, where);
      let k = invariants.get(js);
      if (!k) invariants.set(js, (k = `$c${invariants.size}`));
      return k;
    },
  };
  const loops: { body: string[]; after: string[] }[] = Array.from({ length: loop + 1 }, () => ({ body: [], after: [] }));
  for (const it of items) {
    // the arguments first, at the end of the loop before (its symbols as that loop sees them), then the calls between the loops
    current = it.loop - 1;
    for (const call of it.calls) {
      loops[current]!.body.push(`      ${call.scratch}[$k] = ${toJs(call.argument, where, false, ctx)}; // ${call.name} argument of ${it.label}`);
      loops[current]!.after.push(`    ${call.block.name}(${call.scratch}, ${call.scratch}, $m);`);
    }
    current = it.loop;
    const [a, b] = it.nodes;
    const js = it.when ? `${toJs(it.when, where, true, ctx)} ? ${toJs(a!, where, false, ctx)} : ${toJs(b!, where, false, ctx)}` : toJs(a!, where, false, ctx);
    loops[it.loop]!.body.push(`      const ${it.result} = ${js}; // ${it.label}`, ...(stored.has(it.result) ? [`      $${it.result}[$k] = ${it.result};`] : []));
  }
  current = loop;
  const store = exits.reduceRight((rest, e) => `${isVarying(e.cond) ? toJs(e.cond, where, true, ctx) : toJs(e.cond, where, true)} ? ${e.value} : ${rest}`, last);
  loops[loop]!.body.push(`      out[$o + $k] = ${store};`);
  const scratch = [...stored];
  const callScratch = [...calls.values()].map((call) => call.scratch);
  return [
    ...scratch.map((v) => `const ${id}$${v} = new Float64Array(${blockSize});`),
    ...callScratch.map((v) => `const ${id}${v} = new Float64Array(${blockSize});`),
    "",
    `/**`,
    ` * ${spec.title}, at \`count\` points: ${points.join(", ")} per point from arrays, the result into out[0..count).`,
    ` * The steps of ${id} in ${loops.length} loops over blocks of ${blockSize} points (a new loop at each step that calls`,
    ` * sqrt, exp, log or one of the language's own functions, so the processor overlaps independent points; those with a block`,
    ` * form take a block of arguments between loops), intermediates that cross loops in module scratch arrays (no allocation),`,
    ` * per-device subexpressions hoisted; equal to ${id} at every point, a masked result where it returns early.`,
    ` */`,
    `export function ${name}(${spec.inputs.map((v) => `${v}: ${points.includes(v) ? "Float64Array" : "number"}`).join(", ")}, out: Float64Array, count: number): void {`,
    `  if (!(Number.isInteger(count) && count >= 0 && count <= out.length${points.map((v) => ` && count <= ${v}.length`).join("")}))`,
    `    throw new InputError(count, "a point count no larger than the input and output arrays", ${JSON.stringify(name)});`,
    ...scratch.map((v) => `  const $${v} = ${id}$${v};`),
    ...callScratch.map((v) => `  const ${v} = ${id}${v};`),
    ...before.map((it) => {
      const [a, b] = it.nodes;
      return `  const ${it.result} = ${it.when ? `${toJs(it.when, where, true)} ? ${toJs(a!, where)} : ${toJs(b!, where)}` : toJs(a!, where)}; // ${it.label}`;
    }),
    ...[...invariants].map(([js, k]) => `  const ${k} = ${js};`),
    `  for (let $o = 0; $o < count; $o += ${blockSize}) {`,
    `    const $m = Math.min(${blockSize}, count - $o);`,
    ...loops.flatMap(({ body, after }) => (body.length ? [`    for (let $k = 0; $k < $m; $k++) {`, ...body, `    }`] : []).concat(after)),
    `  }`,
    `}`,
  ].join("\n");
}

/** A catalog's texts file, beside its generated module (record.ts reads it). */
export const textsFileOf = (c: Catalog): string => c.file.replace(/\.catalog\.ts$/, ".texts.json");

/**
 * A catalog's generated module and its texts file. Each formula becomes a record typed with
 * every text as a literal type (the declarations say exactly what the texts are) and built by
 * `formulaRecord` with its id and function; the texts go to the JSON file, read on first use.
 */
export function generate(c: Catalog, symbols: Record<string, SymbolSpec>): { module: string; texts: string } {
  const used = new Set<string>();
  const texts: string[] = [];
  /** The formula language's own functions the catalog calls (compositions only chain its formulas). */
  const own = new Set<string>();
  const blocks: string[] = [];
  for (const [id, f] of Object.entries(c.formulas)) {
    const where = `${c.file}: ${id}`;
    const node = parse(f.expr);
    node.traverse((x) => {
      const name = x.type === "FunctionNode" ? ((x as MathNode & { fn: { name: string } }).fn.name) : undefined;
      if (name && formulaFunctions[name]) own.add(name);
    });
    const vars = freeSymbols(node);
    const result = symbols[f.result];
    if (!result) throw new Error(`${where}: result symbol ${f.result} is not defined`);
    for (const v of vars) if (!symbols[v]) throw new Error(`${where}: symbol ${v} is not defined`);
    const dims = vars.map((v) => symbols[v]!.dim);
    const params = vars.map((v, i) => `${v}: ${typeOfDim[dims[i]!]}`).join(", ");
    [...dims, result.dim].forEach((d) => used.add(typeOfDim[d]));
    const tex = `${result.tex} = ${texOf(f.expr, symbols)}`;
    const text = { title: f.title, expr: f.expr, tex, result: f.result, resultDim: result.dim, vars, dims, ...(f.source ? { source: f.source } : {}) };
    texts.push(`${JSON.stringify(id)}: ${JSON.stringify(text)}`);
    const list = (xs: readonly string[]) => `readonly [${xs.map((x) => JSON.stringify(x)).join(", ")}]`;
    blocks.push(
      [
        `/** ${f.title}: ${f.result} = ${f.expr} */`,
        `export const ${id}: {`,
        `  readonly id: ${JSON.stringify(id)};`,
        ...Object.entries(text).map(([k, v]) => `  readonly ${k}: ${Array.isArray(v) ? list(v) : JSON.stringify(v)};`),
        `  readonly fn: (${params}) => ${typeOfDim[result.dim]};`,
        `} = formulaRecord($texts, ${JSON.stringify(id)}, ${f.source ? "true" : "false"}, (${params}): ${typeOfDim[result.dim]} => ${toJs(node, where)} as ${typeOfDim[result.dim]});`,
      ].join("\n"),
    );
  }
  for (const [id, spec] of Object.entries(c.compositions ?? {})) {
    blocks.push(composition(c, id, spec));
    if (spec.pointInputs) blocks.push(compositionBlock(c, id, spec));
  }
  const names = [...used].sort();
  const module = [
    `// Generated by lib/formulas/generate.ts from ${c.file}. Do not edit; run \`npm run gen\`.`,
    ...(texts.length ? [`import { CatalogTexts, formulaRecord } from "./record.js";`] : []),
    ...(blocks.some((b) => b.includes("sq(")) ? [`import { sq } from "./define.js";`] : []),
    ...(Object.values(c.compositions ?? {}).some((x) => x.pointInputs) ? [`import { InputError } from "../errors.js";`] : []),
    ...[...own].sort().map((name) => {
      const f = formulaFunctions[name]!;
      const block = f.block && blocks.some((b) => b.includes(`${f.block!.name}(`)) ? [f.block.name] : [];
      return `import { ${[name, ...block].join(", ")} } from ${JSON.stringify(f.module)};`;
    }),
    names.length ? `import type { ${names.join(", ")} } from "../quantity.js";` : "",
    "",
    // the texts of this catalog's records (title, expression, TeX, symbols, source): record.ts
    ...(texts.length ? [`const $texts = new CatalogTexts(${JSON.stringify(textsFileOf(c))});`, ""] : []),
    blocks.join("\n\n"),
    "",
  ].join("\n");
  return { module, texts: `{\n${texts.join(",\n")}\n}\n` };
}

async function main(): Promise<void> {
  const check = process.argv.includes("--check");
  const catalogs = await loadCatalogs();
  const symbols = mergeSymbols(catalogs);
  for (const d of Object.values(symbols)) if (!(d.dim in dimensions)) throw new Error(`unknown dimension ${d.dim}`);
  refuseRestatements(catalogs);
  let stale = 0;
  for (const c of catalogs) {
    const out = generate(c, symbols);
    for (const [file, text] of [[c.file.replace(/\.catalog\.ts$/, ".formulas.ts"), out.module], [textsFileOf(c), out.texts]] as const) {
      const target = join(here, file);
      let prior = "";
      try {
        prior = readFileSync(target, "utf8");
      } catch {
        /* first generation */
      }
      if (prior === text) continue;
      if (check) {
        console.error(`stale: ${target} (run npm run gen)`);
        stale++;
      } else {
        writeFileSync(target, text);
        console.log(`wrote ${target}`);
      }
    }
  }
  if (stale) process.exit(1);
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? "").href) {
  main().catch((e) => {
    console.error(e instanceof Error ? e.message : e);
    process.exit(1);
  });
}
