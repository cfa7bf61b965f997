/**
 * The built package (lib/setup/build.mjs links tsc's modules into a few files):
 * every entry point exports what its source exports, the entry points share one
 * instance of each core module, the numeric core loads as a handful of files,
 * and files located from a module (processes, data) are found from where the
 * code was linked to. Needs the built library: the test builds it when stale.
 */
import { execFileSync, spawnSync } from "node:child_process";
import { existsSync, readdirSync, readFileSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { beforeAll, describe, expect, it } from "vitest";

const root = resolve(dirname(fileURLToPath(import.meta.url)), "..");
const pkg = JSON.parse(readFileSync(join(root, "package.json"), "utf8")) as { exports: Record<string, string | { default?: string }> };
/** Package subpath → built file, from package.json "exports". */
const entries = Object.entries(pkg.exports)
  .map(([sub, t]) => [sub, typeof t === "string" ? t : t.default] as const)
  .filter((e): e is readonly [string, string] => typeof e[1] === "string" && e[1].endsWith(".js"));

type Namespace = Record<string, unknown>;
const built = new Map<string, Namespace>();

/** Export names with a shallow look inside namespace objects (`export * as …`). */
const shape = (m: Namespace) =>
  Object.keys(m)
    .sort()
    .map((k) => {
      const v = m[k];
      return v !== null && typeof v === "object" && !Array.isArray(v) ? `${k}{${Object.keys(v).sort().join(",")}}` : `${k}:${typeof v}`;
    });

beforeAll(async () => {
  if (!process.env.PINCHOFF_PREBUILT) execFileSync(process.execPath, [join(root, "lib/setup/prepare.mjs"), "build"], { stdio: "pipe" });
  for (const [sub, file] of entries) built.set(sub, (await import(pathToFileURL(join(root, file)).href)) as Namespace);
}, 300_000);

describe("built entry points", () => {
  it("export the same names as their sources", async () => {
    expect(entries.length).toBeGreaterThanOrEqual(5);
    for (const [sub, file] of entries) {
      const source = join(root, file.replace(/^\.\/dist\//, "lib/").replace(/\.js$/, ".ts"));
      expect(existsSync(source), source).toBe(true);
      const fromSource = (await import(pathToFileURL(source).href)) as Namespace;
      expect(shape(built.get(sub)!), sub).toEqual(shape(fromSource));
    }
  });

  it("share one instance of every function two entry points take from the same source module", async () => {
    // Two exports of one name may be different functions by design; the sources (loaded here
    // through one module graph) say which are the same, and the built files must agree.
    const sources = new Map<string, Namespace>();
    for (const [sub, file] of entries) sources.set(sub, (await import(pathToFileURL(join(root, file.replace(/^\.\/dist\//, "lib/").replace(/\.js$/, ".ts"))).href)) as Namespace);
    const first = new Map<string, string>();
    let shared = 0;
    for (const [sub, m] of built)
      for (const [name, value] of Object.entries(m)) {
        if (typeof value !== "function") continue;
        const other = first.get(name);
        if (other === undefined) first.set(name, sub);
        else if (sources.get(sub)![name] === sources.get(other)![name]) {
          shared++;
          expect(value, `${name} from "${sub}" and "${other}"`).toBe(built.get(other)![name]);
        }
      }
    expect(shared).toBeGreaterThan(0);
  });

  it("throw the core's error classes from the other entry points", () => {
    const core = built.get(".")! as { InputError: new (...a: never[]) => Error };
    const units = built.get("./units")! as { parseQuantity: (text: string, dim: string) => unknown };
    let caught: unknown;
    try {
      units.parseQuantity("3 kg", "voltage");
    } catch (e) {
      caught = e;
    }
    expect(caught).toBeInstanceOf(core.InputError);
  });

  it("find the shipped process descriptions and measurements from the linked code", () => {
    const core = built.get(".")! as { builtinProcessFile: () => string; readProcess: (f: string) => { devices: object } };
    const fit = built.get("./fit")! as { builtinMeasurementFile: (p: "nmos" | "pmos") => string };
    expect(core.builtinProcessFile()).toBe(join(root, "processes", "gf180-3v3.json"));
    expect(Object.keys(core.readProcess(core.builtinProcessFile()).devices).sort()).toEqual(["nmos", "pmos"]);
    expect(existsSync(fit.builtinMeasurementFile("pmos"))).toBe(true);
  });

  it("load the numeric core as a few files, without node:crypto or node:child_process", () => {
    // A resolve hook in a child process names every module the import loads.
    const hook = `export async function resolve(s, c, next) { const r = await next(s, c); process.stderr.write("LOADED " + r.url + "\\n"); return r; }`;
    const register = `import { register } from "node:module"; register(${JSON.stringify(`data:text/javascript,${encodeURIComponent(hook)}`)});`;
    const r = spawnSync(process.execPath, ["--import", `data:text/javascript,${encodeURIComponent(register)}`, "--input-type=module", "-e", `await import(${JSON.stringify(pathToFileURL(join(root, "dist/index.js")).href)});`], { cwd: root, encoding: "utf8" });
    expect(r.status, r.stderr).toBe(0);
    const loaded = r.stderr.split("\n").filter((l) => l.startsWith("LOADED ")).map((l) => l.slice("LOADED ".length));
    const files = [...new Set(loaded.filter((u) => u.startsWith("file:")))]; // a file imported twice resolves twice
    expect(files[0]).toBe(pathToFileURL(join(root, "dist/index.js")).href);
    expect(files.length).toBeLessThanOrEqual(4);
    expect(loaded).not.toContain("node:crypto");
    expect(loaded).not.toContain("node:child_process");
  });

  it("keep the formula records' texts out of the linked code (they are read from lib/formulas/*.texts.json on first use)", () => {
    // the mirror ratio's TeX and title, as the generator writes them into its texts file
    const texts = JSON.parse(readFileSync(join(root, "lib/formulas/mirror.texts.json"), "utf8")) as Record<string, { tex: string; title: string }>;
    const { tex, title } = texts.mirrorRatio!;
    expect(tex).toBe("N = \\frac{{k_{2}}}{{k_{1}}}");
    const chunks = join(root, "dist/chunks");
    const linked = [join(root, "dist/index.js"), ...readdirSync(chunks).filter((f) => f.endsWith(".js")).map((f) => join(chunks, f))];
    expect(linked.length).toBeGreaterThan(3);
    for (const f of linked) {
      const code = readFileSync(f, "utf8");
      expect(code.includes(JSON.stringify(tex).slice(1, -1)), f).toBe(false);
      expect(code.includes(`title: ${JSON.stringify(title)}`), f).toBe(false);
    }
  });

  it("load none of Node's built-ins the core needs only at its edges (streams, os, crypto, child processes)", () => {
    // Node's own list of the built-ins loaded so far, before and after the import.
    const script = `const before = new Set(process.moduleLoadList); await import(${JSON.stringify(pathToFileURL(join(root, "dist/index.js")).href)}); console.log(JSON.stringify(process.moduleLoadList.filter((m) => !before.has(m))));`;
    const r = spawnSync(process.execPath, ["--input-type=module", "-e", script], { cwd: root, encoding: "utf8" });
    expect(r.status, r.stderr).toBe(0);
    const added = JSON.parse(r.stdout) as string[];
    expect(added.length).toBeGreaterThan(0); // the list is Node's, and the import does load some
    for (const m of ["NativeModule stream", "NativeModule internal/fs/streams", "NativeModule os", "NativeModule crypto", "NativeModule child_process"]) expect(added, m).not.toContain(m);
  });
});
