/**
 * pinchoff run of the demo template, from start to written report, against
 * the same number of trivial code cells through the bare kernel (nbconvert
 * with the tslab kernel), side by side. Targets: ≤ 2× the bare kernel, and a
 * report of at most 6 MB. Each repeat starts a kernel, so repeats are few.
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { defineCases } from "../case.js";

const root = resolve(dirname(fileURLToPath(import.meta.url)), "../../..");
type RunModule = typeof import("../../../lib/runner/run.js");
type DemoModule = typeof import("../../../lib/cli/demo.js");
let work = "";
let template = "";
let trivial = "";
let run: RunModule["runNotebook"] | undefined;

export const cases = defineCases([
  {
    id: "notebook.run",
    title: "pinchoff run of the demo template vs the same number of trivial cells through the bare kernel",
    repeats: 3,
    async setup() {
      run = ((await import(pathToFileURL(join(root, "dist/runner/run.js")).href)) as RunModule).runNotebook;
      const demo = (await import(pathToFileURL(join(root, "dist/cli/demo.js")).href)) as DemoModule;
      template = demo.demoTemplate().path;
      work = mkdtempSync(join(root, ".pinchoff-run", "bench-"));
      const nb = JSON.parse(readFileSync(template, "utf8")) as { cells: { cell_type: string }[]; metadata: unknown };
      const n = nb.cells.filter((c) => c.cell_type === "code").length;
      const cells = Array.from({ length: n }, (_, i) => ({ cell_type: "code", id: `t${i}`, metadata: {}, outputs: [], execution_count: null, source: [`const x${i} = ${i};`] }));
      trivial = join(work, "trivial.ipynb");
      writeFileSync(trivial, JSON.stringify({ nbformat: 4, nbformat_minor: 5, metadata: { kernelspec: { name: "tslab", display_name: "TypeScript", language: "typescript" } }, cells }));
    },
    async measure() {
      const t0 = performance.now();
      const r = await run!({ notebook: template, outDir: join(work, "out") });
      const runMs = performance.now() - t0;
      const t1 = performance.now();
      const bare = spawnSync("jupyter", ["nbconvert", "--to", "notebook", "--execute", "--ExecutePreprocessor.kernel_name=tslab", trivial, "--output", "trivial.out.ipynb"], {
        cwd: work,
        env: { ...process.env, JUPYTER_PATH: join(root, ".kernel/share/jupyter") },
        stdio: "ignore",
      });
      const bareMs = performance.now() - t1;
      if (bare.status !== 0) throw new Error(`bench: bare nbconvert run failed (exit ${bare.status})`);
      return { run: runMs, bare: bareMs, report: statSync(r.reportPath).size / 1e6 };
    },
    figures: {
      run: { unit: "ms", better: "lower", note: "pinchoff run of the demo template: checks, staging, kernel, collection, report, atomic write" },
      bare: { unit: "ms", better: "lower", note: "the same number of trivial cells through jupyter nbconvert with the tslab kernel" },
      report: { unit: "MB", better: "lower", target: 6, note: "size of the standalone report (Plotly embedded once)" },
    },
    ratios: [{ name: "run / bare kernel", of: "run", over: "bare", better: "lower", target: 2 }],
    teardown() {
      if (work) rmSync(work, { recursive: true, force: true });
    },
  },
]);
