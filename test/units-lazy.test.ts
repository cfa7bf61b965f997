/**
 * mathjs costs most of a second and over 100 MB to load, so the numeric core
 * must never import it, and "pinchoff/units" only when a text with a unit is
 * parsed. These tests read the module graph from the sources (so they fail as
 * soon as someone adds such an import) and watch a real process load it.
 */
import { describe, expect, it } from "vitest";
import { execFileSync } from "node:child_process";
import { existsSync, readFileSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import ts from "typescript";

const root = resolve(dirname(fileURLToPath(import.meta.url)), "..");
const heavy = ["mathjs", "katex", "plotly.js-basic-dist-min", "tslab"];

interface Graph {
  /** Every lib file reached through imports that run at load time. */
  readonly files: Set<string>;
  /** Package → the file that imports it at load time. */
  readonly eager: Map<string, string>;
  /** Package → the file that loads it on demand (import() or a require call). */
  readonly lazy: Map<string, string>;
}

const packageOf = (spec: string) => (spec.startsWith("@") ? spec.split("/").slice(0, 2).join("/") : spec.split("/")[0]!);

/** Follow load-time imports from `entry`; type-only imports are erased by tsc and not followed. */
function moduleGraph(entry: string): Graph {
  const g: Graph = { files: new Set(), eager: new Map(), lazy: new Map() };
  const visit = (file: string) => {
    if (g.files.has(file)) return;
    g.files.add(file);
    const src = ts.createSourceFile(file, readFileSync(file, "utf8"), ts.ScriptTarget.ES2022, true);
    const follow = (spec: string, lazy: boolean) => {
      if (spec.startsWith(".")) {
        const target = resolve(dirname(file), spec.replace(/\.js$/, ".ts"));
        if (!existsSync(target)) throw new Error(`${file}: import "${spec}" resolves to no source file`);
        if (!lazy) visit(target);
      } else if (!spec.startsWith("node:")) (lazy ? g.lazy : g.eager).set(packageOf(spec), file);
    };
    for (const st of src.statements) {
      if (ts.isImportDeclaration(st) && ts.isStringLiteral(st.moduleSpecifier) && !st.importClause?.isTypeOnly) follow(st.moduleSpecifier.text, false);
      if (ts.isExportDeclaration(st) && st.moduleSpecifier && ts.isStringLiteral(st.moduleSpecifier) && !st.isTypeOnly) follow(st.moduleSpecifier.text, false);
    }
    const calls = (n: ts.Node): void => {
      if (ts.isCallExpression(n) && n.arguments.length >= 1 && ts.isStringLiteral(n.arguments[0]!)) {
        const callee = n.expression;
        const isLoad = callee.kind === ts.SyntaxKind.ImportKeyword || (ts.isIdentifier(callee) && callee.text === "require") || (ts.isCallExpression(callee) && ts.isIdentifier(callee.expression) && callee.expression.text === "createRequire");
        if (isLoad) follow((n.arguments[0] as ts.StringLiteral).text, true);
      }
      n.forEachChild(calls);
    };
    src.forEachChild(calls);
  };
  visit(join(root, entry));
  return g;
}

describe("module graph (read from the sources)", () => {
  it("the reader sees a static mathjs import where there is one (the formula generator)", () => {
    expect(moduleGraph("lib/formulas/generate.ts").eager.has("mathjs")).toBe(true);
  });

  it("the reader sees the lazy mathjs load in the unit parser", () => {
    expect(moduleGraph("lib/units/parse.ts").lazy.get("mathjs")).toBe(join(root, "lib/units/parse.ts"));
  });

  it("the numeric core (lib/index.ts) imports no parser, typesetter or plotting library at load time", () => {
    const g = moduleGraph("lib/index.ts");
    const found = heavy.filter((p) => g.eager.has(p)).map((p) => `${p} (imported by ${g.eager.get(p)!.slice(root.length + 1)})`);
    expect(found).toEqual([]);
    expect(g.files.has(join(root, "lib/units/parse.ts"))).toBe(false);
  });

  it('"pinchoff/units" (lib/units/index.ts) loads mathjs only on demand', () => {
    const g = moduleGraph("lib/units/index.ts");
    expect(g.eager.has("mathjs")).toBe(false);
    expect(g.lazy.has("mathjs")).toBe(true);
  });
});

describe("a real process", () => {
  it("loads mathjs at the first text with a unit, not at import and not for SPICE numbers or codes", () => {
    const script = `
      import { createRequire } from "node:module";
      const cache = createRequire(${JSON.stringify(join(root, "package.json"))}).cache;
      const mathjsLoaded = () => Object.keys(cache).some((k) => k.includes("/node_modules/mathjs/"));
      const u = await import(${JSON.stringify(join(root, "lib/units/index.ts"))});
      const seen = { atImport: mathjsLoaded(), flagAtImport: u.unitEngineLoaded() };
      u.parseQuantity("4.7k", "resistance"); u.parseQuantity("4k7", "resistance"); u.parseQuantity("0.5", "dimensionless");
      seen.afterNumbers = mathjsLoaded();
      seen.value = u.parseQuantity("4.7 kΩ", "resistance");
      seen.afterUnit = mathjsLoaded();
      seen.flagAfterUnit = u.unitEngineLoaded();
      console.log(JSON.stringify(seen));`;
    const out = execFileSync(process.execPath, ["--import", "tsx", "--input-type=module", "-e", script], { cwd: root, encoding: "utf8" });
    expect(JSON.parse(out.trim().split("\n").at(-1)!)).toEqual({ atImport: false, flagAtImport: false, afterNumbers: false, value: 4700, afterUnit: true, flagAfterUnit: true });
  });
});
