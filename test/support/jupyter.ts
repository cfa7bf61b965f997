/**
 * Runs notebooks through the real tslab kernel under Jupyter (Debian's
 * /usr/bin/jupyter nbconvert), for tests. The kernel is the project-local one
 * in .kernel/ and notebooks import the built library by package name, both set
 * up by `node lib/setup/prepare.mjs build kernel`. Notebooks are written inside
 * the checkout (under out/, git-ignored) so "pinchoff" resolves through
 * node_modules/pinchoff.
 */
import { execFileSync, spawnSync } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";

export const repoRoot = resolve(dirname(fileURLToPath(import.meta.url)), "../..");
export const jupyterPath = join(repoRoot, ".kernel/share/jupyter");
const jupyter = "/usr/bin/jupyter";

export interface Output {
  readonly output_type: "stream" | "display_data" | "execute_result" | "error";
  readonly name?: "stdout" | "stderr";
  readonly text?: string | string[];
  readonly data?: Record<string, unknown>;
  readonly ename?: string;
  readonly evalue?: string;
}

export interface ExecutedCell {
  readonly source: string;
  readonly outputs: readonly Output[];
}

/** Text of a stream output or of a text/* MIME entry (nbformat stores either a string or a list of lines). */
export const joined = (t: unknown): string => (Array.isArray(t) ? t.join("") : typeof t === "string" ? t : "");

/**
 * Build dist/ and register the kernel if needed; throws with the reason when it cannot
 * (Jupyter missing, build failing), so a smoke test fails with a clear message.
 */
export function prepareKernel(): void {
  // PINCHOFF_PREBUILT=1: the caller built dist/ and registered the kernel (e.g. CI after its build step).
  if (process.env.PINCHOFF_PREBUILT === "1") {
    for (const f of ["dist/index.js", "dist/notebook/index.js", ".kernel/share/jupyter/kernels/tslab/kernel.json", "node_modules/pinchoff/package.json"])
      if (!existsSync(join(repoRoot, f))) throw new Error(`PINCHOFF_PREBUILT=1 but ${f} is missing: run node lib/setup/prepare.mjs build kernel`);
    return;
  }
  if (!existsSync(jupyter)) throw new Error(`${jupyter} is missing: install the Debian packages jupyter-nbconvert python3-nbclient python3-ipykernel (node lib/setup/prepare.mjs jupyter)`);
  const r = spawnSync(process.execPath, [join(repoRoot, "lib/setup/prepare.mjs"), "build", "kernel"], { cwd: repoRoot, encoding: "utf8" });
  if (r.status !== 0) throw new Error(`node lib/setup/prepare.mjs build kernel failed (exit ${r.status}):\n${r.stdout}\n${r.stderr}`);
  if (!existsSync(join(jupyterPath, "kernels/tslab/kernel.json"))) throw new Error(`no tslab kernel in ${jupyterPath} after prepare.mjs kernel`);
}

/** nbformat 4.5 notebook JSON with one code cell per source, using the tslab kernel. */
export function notebookOf(sources: readonly string[]): object {
  return {
    cells: sources.map((source, i) => ({ cell_type: "code", id: `cell-${i + 1}`, metadata: {}, execution_count: null, outputs: [], source })),
    metadata: { kernelspec: { name: "tslab", display_name: "TypeScript", language: "typescript" }, language_info: { name: "typescript" } },
    nbformat: 4,
    nbformat_minor: 5,
  };
}

/**
 * Execute code cells in a fresh kernel and return each cell's outputs. Errors in a
 * cell are kept as outputs (`--allow-errors`) so a test can assert on them.
 */
export function executeCells(sources: readonly string[], timeoutSeconds = 120): ExecutedCell[] {
  mkdirSync(join(repoRoot, "out"), { recursive: true });
  const dir = mkdtempSync(join(repoRoot, "out", "nb-"));
  try {
    const input = join(dir, "smoke.ipynb");
    writeFileSync(input, JSON.stringify(notebookOf(sources), null, 1));
    const env = { ...process.env, JUPYTER_PATH: jupyterPath, JUPYTER_RUNTIME_DIR: join(dir, "runtime"), JUPYTER_PLATFORM_DIRS: "1" };
    try {
      execFileSync(
        jupyter,
        ["nbconvert", "--to", "notebook", "--execute", "--allow-errors", "--ExecutePreprocessor.kernel_name=tslab", `--ExecutePreprocessor.timeout=${timeoutSeconds}`, input, "--output", "executed.ipynb"],
        { cwd: dir, env, encoding: "utf8", stdio: ["ignore", "pipe", "pipe"], timeout: (timeoutSeconds + 60) * 1000 },
      );
    } catch (e) {
      const err = e as { stderr?: string; message: string };
      throw new Error(`jupyter nbconvert failed: ${err.message}\n${err.stderr ?? ""}`);
    }
    const nb = JSON.parse(readFileSync(join(dir, "executed.ipynb"), "utf8")) as { cells: Array<{ source: string | string[]; outputs?: Output[] }> };
    return nb.cells.map((c) => ({ source: joined(c.source), outputs: c.outputs ?? [] }));
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
