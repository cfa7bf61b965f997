#!/usr/bin/env node
/**
 * `npm run build`: the one build step. Two stages:
 *
 * 1. TypeScript (`tsc -p tsconfig.json`) type-checks `lib/` and writes the
 *    declarations into `dist/` (the `.d.ts` layout the package's "types" and
 *    tslab's TypeScript 5.0 read, unchanged) and one `.js` per module into
 *    a scratch folder `.build/<pid>/modules/` (gitignored).
 * 2. esbuild links those modules into `dist/`: one file per entry point at the
 *    path the package names (package.json "exports" and "bin", plus the few
 *    files run by path, `entryExtras` below), with the code two or more entry
 *    points share in `dist/chunks/`. npm packages stay external (loaded from
 *    node_modules as before, lazily where the source says so).
 *
 * Why: Node 20's ES module loader costs half a millisecond to a millisecond per
 * module file (resolve, stat, read, link), so the numeric core's ~100 modules made
 * `import "pinchoff"` cost more than its code; linked, the core is four files
 * (see the "Performance" table in README.md and the `core.import` bench case).
 * Pass 1 links the core; pass 2 the other entry points, which reach core modules
 * through the core's internal entries (`coreParts`), never through a copy.
 * Nothing is minified: stack traces keep the source's names and layout. Characters
 * outside ASCII are written as escapes (esbuild's default), so V8 holds each
 * file as one-byte text: the core's import took about 15 % less CPU than with
 * the characters kept (measured, Node 20.20.2, interleaved runs).
 *
 * 3. Constants restored: when it links, esbuild writes every top-level `const`
 *    and `let` as `var` (a choice made for another engine's TDZ checks). V8 folds
 *    a module-level `const` into the code that reads it but must load a `var` on
 *    every use, which cost the EKV block evaluator 15–20 % (the Wright ω zone
 *    constants, the table exp's constants; measured against the sources).
 *    `restoreConstants` parses each linked file (TypeScript's parser) and writes
 *    `const` back for every top-level `var` whose declarators all have an
 *    initialiser and whose names are assigned nowhere in the file (an assignment
 *    anywhere to the same name, in any scope, keeps it `var`): the constness the
 *    source had, so the evaluation order and its temporal dead zone are the
 *    source's.
 *
 * Files located from a module (`import.meta.url`) go through
 * `lib/io/package-root.ts`, which finds the package folder from wherever the
 * code was linked to. Failure: tsc's type errors or esbuild's errors, printed,
 * exit status 1, and the previous `dist/` left as it was: the new one is built
 * beside it and moved into place when complete (so a build started by a test
 * while another test reads `dist/` swaps the folder instead of emptying it).
 */
import { spawnSync } from "node:child_process";
import { existsSync, readdirSync, readFileSync, renameSync, rmSync, writeFileSync } from "node:fs";
import { createRequire } from "node:module";
import { dirname, join, relative, resolve, sep } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";

const root = resolve(dirname(fileURLToPath(import.meta.url)), "../..");
const dist = join(root, "dist");
/** This build's scratch folder: tsc's modules and the new dist/, moved into place when complete. */
const scratch = join(root, ".build", String(process.pid));
const modules = join(scratch, "modules");
const staged = join(scratch, "dist");
/**
 * The core's internal entry points, which the other entry points load by the private specifiers
 * of package.json "imports": the parts of the core that `graphOf` reaches, then the rest. A module
 * belongs to the first part that reaches it. "pinchoff/units" (an import-time target of its own)
 * and "pinchoff/fit" need a small share of the core, so they load it without the rest.
 */
const coreParts = [
  { specifier: "#core-base", file: "chunks/core-base.js", graphOf: "units/index.js" },
  { specifier: "#core-fit", file: "chunks/core-fit.js", graphOf: "fit/index.js" },
  { specifier: "#core", file: "chunks/core.js" },
];

/** Built files run or imported by path rather than through the package's exports. */
const entryExtras = [
  "cli/demo.js", // `npm run demo`
  "runner/run.js", // the notebook-run bench case times the runner itself
];

/** The entry points: every `dist/…js` file package.json "exports" or "bin" names, plus `entryExtras`. */
export function entryPoints(pkg) {
  const files = new Set(entryExtras);
  const add = (target) => {
    if (typeof target === "string") {
      if (target.startsWith("./dist/") && target.endsWith(".js")) files.add(target.slice("./dist/".length));
    } else if (target && typeof target === "object") for (const v of Object.values(target)) add(v);
  };
  add(pkg.exports);
  add(pkg.bin);
  return [...files].sort();
}

function run(cmd, args) {
  const r = spawnSync(cmd, args, { cwd: root, stdio: "inherit" });
  if (r.error) throw r.error;
  if (r.status !== 0) throw new Error(`${relative(root, args[0] ?? cmd)} exited with status ${r.status}`);
}

/** The modules an entry point's import graph holds (within the scratch modules folder), as esbuild sees it. */
async function graphOf(esbuild, entry) {
  const r = await esbuild.build({ absWorkingDir: modules, entryPoints: [join(modules, entry)], bundle: true, write: false, metafile: true, format: "esm", platform: "node", packages: "external", logLevel: "silent" });
  return Object.keys(r.metafile.inputs).map((p) => resolve(modules, p)).filter((p) => p.startsWith(modules + sep)).sort();
}

/** The run-time export names of each core module (importing the modules tsc just wrote). */
async function exportNames(files) {
  const names = new Map();
  for (const f of files) names.set(f, Object.keys(await import(pathToFileURL(f).href)).sort());
  return names;
}

/** One core module's exports under names unique across the core: module number, `$`, name. */
const linkName = (i, name) => `m${i}$${name}`;

// Working folder: the modules, so the paths in the output's comments (`// device/card.js`) and the chunk hashes are the same in every build.
const common = { absWorkingDir: modules, bundle: true, format: "esm", platform: "node", target: "node20", packages: "external", logLevel: "warning" };

export async function build() {
  const pkg = JSON.parse(readFileSync(join(root, "package.json"), "utf8"));
  const entries = entryPoints(pkg);
  for (const part of coreParts)
    if (pkg.imports?.[part.specifier] !== `./dist/${part.file}`) throw new Error(`package.json "imports" must map "${part.specifier}" to "./dist/${part.file}"`);
  rmSync(scratch, { recursive: true, force: true });
  try {
    await link(entries);
    for (const f of linkedFiles(staged)) restoreConstants(f);
    replaceDist();
  } finally {
    rmSync(scratch, { recursive: true, force: true });
  }
}

/** Move the staged dist/ into place; the old one goes to the scratch folder (removed after). */
function replaceDist() {
  for (let attempt = 1; ; attempt++) {
    try {
      if (existsSync(dist)) renameSync(dist, join(scratch, `old-dist-${attempt}`));
      renameSync(staged, dist);
      return;
    } catch (e) {
      // Another build swapped its dist/ in between: try again (the newest complete build wins).
      if (attempt >= 5 || (e.code !== "ENOTEMPTY" && e.code !== "EEXIST" && e.code !== "ENOENT")) throw e;
    }
  }
}

async function link(entries) {
  run(process.execPath, [join(root, "node_modules/typescript/bin/tsc"), "-p", "tsconfig.json", "--outDir", modules, "--declarationDir", staged]);
  for (const e of entries) if (!existsSync(join(modules, e))) throw new Error(`entry point dist/${e} has no module lib/${e.replace(/\.js$/, ".ts")}`);
  const esbuild = await import("esbuild");

  // The core's modules, numbered, each with its part and its run-time export names.
  const core = await graphOf(esbuild, "index.js");
  const number = new Map(core.map((f, i) => [f, i]));
  const partOf = new Map();
  for (const part of coreParts) {
    const reach = part.graphOf ? new Set(await graphOf(esbuild, part.graphOf)) : undefined;
    for (const f of core) if (!partOf.has(f) && (!reach || reach.has(f))) partOf.set(f, part);
  }
  const names = await exportNames(core);
  const reexports = (f) => (names.get(f).length ? `export { ${names.get(f).map((n) => `${n} as ${linkName(number.get(f), n)}`).join(", ")} } from ${JSON.stringify(f)};` : `import ${JSON.stringify(f)};`);
  // Each part's entry re-exports its modules; each also imports the earlier parts' modules, so every
  // module of a part is reached by the same entries and esbuild puts each part in one chunk.
  const partSource = (part) => core.map((f) => (partOf.get(f) === part ? reexports(f) : coreParts.indexOf(partOf.get(f)) < coreParts.indexOf(part) ? `import ${JSON.stringify(f)};` : "")).filter(Boolean).join("\n");

  // Pass 1: the core, its public entry beside the internal ones.
  await esbuild.build({
    ...common,
    entryPoints: [{ in: join(modules, "index.js"), out: "index" }, ...coreParts.map((p) => ({ in: `core-part:${p.specifier}`, out: p.file.replace(/\.js$/, "") }))],
    outdir: staged,
    splitting: true,
    chunkNames: "chunks/core-[hash]",
    plugins: [{ name: "core-parts", setup(b) {
      b.onResolve({ filter: /^core-part:/ }, (a) => ({ path: a.path.slice("core-part:".length), namespace: "pinchoff-core-part" }));
      b.onLoad({ filter: /.*/, namespace: "pinchoff-core-part" }, (a) => ({ contents: partSource(coreParts.find((p) => p.specifier === a.path)), resolveDir: modules, loader: "js" }));
    } }],
  });

  // Pass 2: the other entry points. An import of a core module becomes an import of its exports
  // from the core part's internal entry, so the whole package runs one instance of every core
  // module (one Derivation class, one InputError, one registry of validated devices).
  await esbuild.build({
    ...common,
    entryPoints: entries.filter((e) => e !== "index.js").map((e) => ({ in: join(modules, e), out: e.replace(/\.js$/, "") })),
    outdir: staged,
    splitting: true,
    chunkNames: "chunks/[name]-[hash]",
    external: coreParts.map((p) => p.specifier),
    plugins: [{ name: "core-link", setup(b) {
      b.onResolve({ filter: /^\.\.?\// }, (a) => {
        const f = resolve(a.resolveDir, a.path);
        return number.has(f) ? { path: relative(modules, f), namespace: "pinchoff-core" } : undefined;
      });
      b.onLoad({ filter: /.*/, namespace: "pinchoff-core" }, (a) => {
        const f = join(modules, a.path);
        return { contents: `export { ${names.get(f).map((n) => `${linkName(number.get(f), n)} as ${n}`).join(", ")} } from "${partOf.get(f).specifier}";`, loader: "js", resolveDir: modules };
      });
    } }],
  });
}

/** Every `.js` file under a folder. */
function linkedFiles(dir) {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? linkedFiles(join(dir, e.name)) : e.name.endsWith(".js") ? [join(dir, e.name)] : []));
}

/** Stage 3 (see the header): top-level `var` back to `const` where the file never assigns the name. */
export function restoreConstants(file) {
  const ts = createRequire(import.meta.url)(join(root, "node_modules/typescript"));
  const text = readFileSync(file, "utf8");
  const sf = ts.createSourceFile(file, text, ts.ScriptTarget.Latest, true, ts.ScriptKind.JS);
  const assigned = new Set();
  // every identifier in an assignment target (destructuring included) counts as assigned; a property or
  // element access assigns the object's member, not the name
  const targets = (t) => {
    if (ts.isIdentifier(t)) assigned.add(t.text);
    else if (ts.isPropertyAccessExpression(t) || ts.isElementAccessExpression(t)) return;
    else ts.forEachChild(t, function all(n) {
      if (ts.isIdentifier(n)) assigned.add(n.text);
      ts.forEachChild(n, all);
    });
  };
  const visit = (n) => {
    if (ts.isBinaryExpression(n) && n.operatorToken.kind >= ts.SyntaxKind.FirstAssignment && n.operatorToken.kind <= ts.SyntaxKind.LastAssignment) targets(n.left);
    else if ((ts.isPrefixUnaryExpression(n) || ts.isPostfixUnaryExpression(n)) && (n.operator === ts.SyntaxKind.PlusPlusToken || n.operator === ts.SyntaxKind.MinusMinusToken)) targets(n.operand);
    else if ((ts.isForInStatement(n) || ts.isForOfStatement(n)) && !ts.isVariableDeclarationList(n.initializer)) targets(n.initializer);
    ts.forEachChild(n, visit);
  };
  visit(sf);
  const starts = [];
  for (const st of sf.statements) {
    if (!ts.isVariableStatement(st)) continue;
    const list = st.declarationList;
    if (list.flags & (ts.NodeFlags.Let | ts.NodeFlags.Const)) continue;
    if (list.declarations.every((d) => d.initializer && ts.isIdentifier(d.name) && !assigned.has(d.name.text))) starts.push(list.getStart(sf));
  }
  if (!starts.length) return 0;
  let out = text;
  for (const at of starts.reverse()) {
    if (out.slice(at, at + 4) !== "var ") throw new Error(`${relative(root, file)}: expected "var " at offset ${at}`);
    out = out.slice(0, at) + "const " + out.slice(at + 4);
  }
  writeFileSync(file, out);
  return starts.length;
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  build().catch((e) => {
    console.error(`[pinchoff build] ${e.message}`);
    process.exit(1);
  });
}
