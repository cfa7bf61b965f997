/**
 * Build tool: compiles every `*.catalog.ts` in this folder into a sibling
 * `*.formulas.ts` holding, per formula, a plain-number function, its TeX and
 * its metadata. Run `npm run gen`; `npm run gen -- --check` fails when a
 * generated file is stale (the test suite runs that check).
 *
 * A catalog may also export `compositions` (`CompositionSpec`, define.ts): a model
 * quantity as a chain of its formulas. Each becomes one exported function whose body
 * is the steps' expressions inlined in order (`const <result> = <expression>;`), plain
 * numbers in and out, so the hot path is the catalog's equations with no hand-written
 * copy, no branded-type wrappers and no allocation. A step that reads a symbol no
 * input or earlier step provides, or a result defined twice, is refused.
 *
 * mathjs is used here, at build time, so the generated code needs none.
 */
import { readdirSync, readFileSync, writeFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { parse, type MathNode } from "mathjs";
import { texOfFunction, type CompositionSpec, type CompositionStep, type FormulaSpec, type SymbolSpec } from "./define.js";
import { dimensions, type Dimension } from "../quantity.js";

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

const mathFunctions: Record<string, string> = { sqrt: "Math.sqrt", atan: "Math.atan", exp: "Math.exp", log: "Math.log", log1p: "Math.log1p", abs: "Math.abs", max: "Math.max", min: "Math.min", wrightOmega: "wrightOmega" };

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

function toJs(node: MathNode, where: string, condition = false): string {
  const n = node as MathNode & Record<string, any>;
  if (condition) {
    // a composition's condition: one comparison of two expressions
    const op = n.type === "OperatorNode" ? comparisons[n.op as string] : undefined;
    if (!op) throw new Error(`${where}: a condition must be one comparison (> < >= <= == !=), got ${node.toString()}`);
    return `${toJs(n.args[0], where)} ${op} ${toJs(n.args[1], where)}`;
  }
  switch (n.type) {
    case "ConstantNode":
      return String(n.value);
    case "SymbolNode":
      return n.name === "pi" ? "Math.PI" : n.name;
    case "ParenthesisNode":
      return `(${toJs(n.content, where)})`;
    case "OperatorNode": {
      const args = (n.args as MathNode[]).map((a) => toJs(a, where));
      if (args.length === 1 && n.op === "-") return `(-${args[0]})`;
      if (args.length === 1 && n.op === "+") return `(+${args[0]})`;
      // A square is a product: exact, and several times faster than ** on the hot path.
      if (n.op === "^" && (n.args[1] as MathNode & { value?: unknown }).type === "ConstantNode" && String((n.args[1] as any).value) === "2") return `sq(${args[0]})`;
      const op = n.op === "^" ? "**" : n.op;
      if (!["+", "-", "*", "/", "**"].includes(op)) throw new Error(`${where}: operator ${n.op} not supported`);
      return `(${args[0]} ${op} ${args[1]})`;
    }
    case "FunctionNode": {
      const fn = mathFunctions[n.fn.name as string];
      if (!fn) throw new Error(`${where}: function ${n.fn.name} not supported`);
      // A Math function of constants (ln 2) is computed here once, not on every call.
      const args = n.args as (MathNode & { value?: unknown })[];
      if (fn.startsWith("Math.") && args.every((a) => a.type === "ConstantNode")) {
        const value = (Math as unknown as Record<string, (...x: number[]) => number>)[fn.slice(5)]!(...args.map((a) => Number(a.value)));
        if (Number.isFinite(value)) return `${value}`;
      }
      return `${fn}(${args.map((a) => toJs(a, where)).join(", ")})`;
    }
    default:
      throw new Error(`${where}: expression node ${n.type} not supported`);
  }
}

/** Free symbols in order of first appearance. */
function freeSymbols(node: MathNode): string[] {
  const names: string[] = [];
  node.traverse((c, _path, parent) => {
    const s = c as MathNode & { name?: string };
    const isFunctionName = parent && parent.type === "FunctionNode" && (parent as any).fn === c;
    // pi is the one named constant (mathjs knows it, so re-evaluation needs no input for it).
    if (c.type === "SymbolNode" && !isFunctionName && s.name !== "pi" && !names.includes(s.name!)) names.push(s.name!);
  });
  return names;
}

export function texOf(expr: string, symbols: Record<string, SymbolSpec>): string {
  return parse(expr).toTex({
    parenthesis: "auto",
    implicit: "hide",
    handler: (node: MathNode, options: object) => {
      const s = node as MathNode & { name?: string };
      if (node.type === "SymbolNode" && s.name && symbols[s.name]) return `{${symbols[s.name]!.tex}}`;
      return texOfFunction(node, options);
    },
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

export function generate(c: Catalog, symbols: Record<string, SymbolSpec>): string {
  const used = new Set<string>();
  const blocks: string[] = [];
  for (const [id, f] of Object.entries(c.formulas)) {
    const where = `${c.file}: ${id}`;
    const node = parse(f.expr);
    const vars = freeSymbols(node);
    const result = symbols[f.result];
    if (!result) throw new Error(`${where}: result symbol ${f.result} is not defined`);
    for (const v of vars) if (!symbols[v]) throw new Error(`${where}: symbol ${v} is not defined`);
    const dims = vars.map((v) => symbols[v]!.dim);
    const params = vars.map((v, i) => `${v}: ${typeOfDim[dims[i]!]}`).join(", ");
    [...dims, result.dim].forEach((d) => used.add(typeOfDim[d]));
    const tex = `${result.tex} = ${texOf(f.expr, symbols)}`;
    blocks.push(
      [
        `/** ${f.title}: ${f.result} = ${f.expr} */`,
        `export const ${id} = {`,
        `  id: ${JSON.stringify(id)},`,
        `  title: ${JSON.stringify(f.title)},`,
        `  expr: ${JSON.stringify(f.expr)},`,
        `  tex: ${JSON.stringify(tex)},`,
        `  result: ${JSON.stringify(f.result)},`,
        `  resultDim: ${JSON.stringify(result.dim)},`,
        `  vars: ${JSON.stringify(vars)},`,
        `  dims: ${JSON.stringify(dims)},`,
        ...(f.source ? [`  source: ${JSON.stringify(f.source)},`] : []),
        `  fn: (${params}): ${typeOfDim[result.dim]} => ${toJs(node, where)} as ${typeOfDim[result.dim]},`,
        `} as const satisfies Formula;`,
      ].join("\n"),
    );
  }
  for (const [id, spec] of Object.entries(c.compositions ?? {})) blocks.push(composition(c, id, spec));
  const names = [...used].sort();
  return [
    `// Generated by lib/formulas/generate.ts from ${c.file}. Do not edit; run \`npm run gen\`.`,
    `import type { Formula } from "./define.js";`,
    ...(blocks.some((b) => b.includes("sq(")) ? [`import { sq } from "./define.js";`] : []),
    ...(blocks.some((b) => b.includes("wrightOmega(")) ? [`import { wrightOmega } from "./wright-omega.js";`] : []),
    names.length ? `import type { ${names.join(", ")} } from "../quantity.js";` : "",
    "",
    blocks.join("\n\n"),
    "",
  ].join("\n");
}

async function main(): Promise<void> {
  const check = process.argv.includes("--check");
  const catalogs = await loadCatalogs();
  const symbols = mergeSymbols(catalogs);
  for (const d of Object.values(symbols)) if (!(d.dim in dimensions)) throw new Error(`unknown dimension ${d.dim}`);
  refuseRestatements(catalogs);
  let stale = 0;
  for (const c of catalogs) {
    const target = join(here, c.file.replace(/\.catalog\.ts$/, ".formulas.ts"));
    const text = generate(c, symbols);
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
  if (stale) process.exit(1);
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? "").href) {
  main().catch((e) => {
    console.error(e instanceof Error ? e.message : e);
    process.exit(1);
  });
}
