/**
 * Headless execution of a staged notebook through Jupyter (nbclient) with the
 * tslab kernel. Finds Jupyter on PATH and the Python it runs on, says exactly
 * what to install when either is missing, and reports each cell's status.
 */
import { spawn, spawnSync } from "node:child_process";
import { accessSync, constants as fsc, existsSync, readFileSync } from "node:fs";
import { createRequire } from "node:module";
import { delimiter, isAbsolute, join } from "node:path";
import { PinchoffError } from "../errors.js";
import { driverSource } from "./driver.js";
import { kernelDataDir, kernelName, stagingRoot } from "./paths.js";

export const installHint =
  "install Jupyter from Debian: apt-get install jupyter-client jupyter-nbconvert python3-nbclient python3-ipykernel, then register the kernel: node lib/setup/prepare.mjs kernel (or pinchoff kernel)";

function onPath(cmd: string, path = process.env.PATH ?? ""): string | undefined {
  for (const dir of path.split(delimiter)) {
    if (!dir) continue;
    const p = join(dir, cmd);
    try {
      accessSync(p, fsc.X_OK);
      return p;
    } catch {
      /* not here */
    }
  }
  return undefined;
}

export interface JupyterSetup {
  readonly jupyter: string;
  readonly python: string;
}

/**
 * Jupyter on PATH and the interpreter named in its #! line, with nbclient
 * importable (`probe`; a kernel session skips the probe because its driver
 * reports a missing package itself, and the probe costs a Python start).
 */
export function findJupyter(env: NodeJS.ProcessEnv = process.env, probe = true): JupyterSetup {
  const jupyter = onPath("jupyter", env.PATH);
  if (!jupyter) throw new PinchoffError("io", `Jupyter was not found on PATH; ${installHint}`, "jupyter");
  const firstLine = readFileSync(jupyter, "utf8").slice(0, 300).split("\n")[0] ?? "";
  const m = /^#!\s*(\S+)(?:\s+(\S+))?/.exec(firstLine);
  let python = m ? (/\/env$/.test(m[1]!) && m[2] ? onPath(m[2], env.PATH) : m[1]) : undefined;
  if (!python || !isAbsolute(python) || !existsSync(python)) python = onPath("python3", env.PATH);
  if (!python) throw new PinchoffError("io", `no Python interpreter found for ${jupyter}; ${installHint}`, "jupyter");
  if (probe && spawnSync(python, ["-c", "import nbclient, nbformat, ipykernel"], { env, encoding: "utf8" }).status !== 0) throw new PinchoffError("io", `${python} (the Python that runs ${jupyter}) cannot import nbclient, nbformat and ipykernel; ${installHint}`, "jupyter");
  return { jupyter, python };
}

/** Environment for Jupyter with the project-local kernel spec visible. */
export function jupyterEnv(env: NodeJS.ProcessEnv = process.env): NodeJS.ProcessEnv {
  const paths = [kernelDataDir, ...(env.JUPYTER_PATH ? env.JUPYTER_PATH.split(delimiter) : [])];
  return { ...env, JUPYTER_PATH: paths.join(delimiter) };
}

/** The kernel spec is registered and notebook cells staged under the package can import "pinchoff". */
export function requireKernel(): void {
  const spec = join(kernelDataDir, "kernels", kernelName, "kernel.json");
  if (!existsSync(spec)) throw new PinchoffError("io", `the tslab kernel is not registered in ${kernelDataDir}; run pinchoff kernel (or node lib/setup/prepare.mjs kernel)`, "kernel");
  let binary: unknown;
  try {
    binary = (JSON.parse(readFileSync(spec, "utf8")) as { argv?: unknown[] }).argv?.[0];
  } catch {
    /* reported below */
  }
  if (typeof binary !== "string" || !existsSync(binary))
    throw new PinchoffError("io", `the kernel spec ${spec} names a tslab that does not exist (${String(binary)}; was the checkout moved?); run pinchoff kernel (or node lib/setup/prepare.mjs kernel)`, "kernel");
  try {
    // Resolution as tslab does it: node_modules folders from the staging area upward.
    createRequire(join(stagingRoot, "notebook.js")).resolve("pinchoff/package.json");
  } catch {
    throw new PinchoffError("io", `notebook cells could not import "pinchoff" (no node_modules/pinchoff above ${stagingRoot}; npm install removes the checkout's self link); run pinchoff kernel (or node lib/setup/prepare.mjs kernel)`, "kernel");
  }
}

export type CellStatus = "ok" | "error" | "abort" | "timeout" | "not run";

export interface ExecutionResult {
  /** Status per cell index (code cells only). */
  readonly status: ReadonlyMap<number, CellStatus>;
  /** Whole-run problem that is not a cell's fault (timeout also names the cell). */
  readonly fatal?: { kind: string; message: string };
  readonly seconds: number;
}

export interface ExecuteOptions {
  /** Per-cell time limit in seconds. */
  readonly timeout: number;
  readonly codeCells: readonly number[];
  readonly env?: NodeJS.ProcessEnv;
}

/**
 * A kernel started ahead of the notebook it will run: the Python driver starts
 * tslab at once and waits for `run`, so the start-up overlaps whatever the
 * caller still has to check and stage. `cancel` stops it without running.
 */
export interface KernelSession {
  run(input: string, output: string, opts: ExecuteOptions): Promise<ExecutionResult>;
  cancel(): void;
  /**
   * Stop at once: SIGKILL to the driver's process group and the kernel's (its
   * own session); resolves when the driver has exited. Used on an interruption.
   */
  stop(): Promise<void>;
}

/** Start the kernel in `cwd` (the staging folder, which must exist). */
export function startKernelSession(cwd: string, opts: { readonly timeout: number; readonly env?: NodeJS.ProcessEnv }): KernelSession {
  const setup = findJupyter(opts.env, false);
  requireKernel();
  const args = { cwd, kernel: kernelName, timeout: opts.timeout, startup: 60 };
  const t0 = performance.now();
  const child = spawn(setup.python, ["-c", driverSource, JSON.stringify(args)], { cwd, env: jupyterEnv(opts.env), detached: true, stdio: ["pipe", "pipe", "pipe"] });
  let out = "";
  let err = "";
  let kernelPid: number | undefined;
  let announced: () => void = () => undefined;
  const kernelKnown = new Promise<void>((r) => (announced = r));
  child.stdout!.on("data", (d: Buffer) => {
    out += d.toString();
    if (kernelPid === undefined) {
      const m = /^\{"kernel_pid": (\d+)\}$/m.exec(out);
      if (m) {
        kernelPid = Number(m[1]);
        announced();
      }
    }
  });
  child.stderr!.on("data", (d: Buffer) => (err += d.toString()));
  child.stdin!.on("error", () => {
    /* the driver stopped before reading; its stdout says why */
  });
  const killGroup = (pid: number | undefined) => {
    if (!pid) return;
    try {
      process.kill(-pid, "SIGKILL");
    } catch {
      try {
        process.kill(pid, "SIGKILL");
      } catch {
        /* already gone */
      }
    }
  };
  const kill = () => {
    killGroup(kernelPid);
    killGroup(child.pid);
  };
  let exited = false;
  const done = new Promise<{ code: number | null; stdout: string; stderr: string }>((resolve, reject) => {
    child.on("error", (e) => reject(new PinchoffError("io", `cannot start ${setup.python} (${e.message}); ${installHint}`, "jupyter")));
    child.on("close", (c) => {
      exited = true;
      resolve({ code: c, stdout: out, stderr: err });
    });
  });
  done.catch(() => undefined); // observed in run(); a cancelled session may never be awaited
  return {
    cancel() {
      child.stdin!.end("\n");
      setTimeout(kill, 5000).unref();
    },
    async stop() {
      // A kernel being launched has no pid yet: give the driver a moment to name it, so it is not orphaned.
      if (kernelPid === undefined && !exited) await Promise.race([kernelKnown, done.then(() => undefined, () => undefined), new Promise((r) => setTimeout(r, 10_000).unref())]);
      kill();
      await done.then(() => undefined, () => undefined);
      killGroup(kernelPid); // in case it was named while the driver died
    },
    async run(input, output, runOpts) {
      child.stdin!.end(JSON.stringify({ input, output }) + "\n");
      // The whole run may take a per-cell limit per cell plus kernel start-up; past that, stop it.
      const guard = setTimeout(kill, (runOpts.timeout * Math.max(1, runOpts.codeCells.length) + 90) * 1000);
      try {
        return interpret(await done, (performance.now() - t0) / 1000, runOpts);
      } finally {
        clearTimeout(guard);
      }
    },
  };
}

/** Execute `input` into `output` with `cwd` as the kernel's working directory. */
export async function executeNotebook(input: string, output: string, cwd: string, opts: ExecuteOptions): Promise<ExecutionResult> {
  return startKernelSession(cwd, opts).run(input, output, opts);
}

function interpret({ code, stdout, stderr }: { code: number | null; stdout: string; stderr: string }, seconds: number, opts: ExecuteOptions): ExecutionResult {
  const line = stdout.trim().split("\n").pop() ?? "";
  let parsed: { cells?: Record<string, { status?: string }>; fatal?: string; message?: string };
  try {
    parsed = JSON.parse(line);
  } catch {
    const tail = stderr.trim().split("\n").slice(-6).join("\n");
    throw new PinchoffError("io", `the Jupyter run stopped (exit ${code ?? "killed"}) without a result${tail ? `:\n${tail}` : ""}`, "jupyter");
  }
  if (parsed.fatal === "missing-python-package") throw new PinchoffError("io", `${parsed.message}; ${installHint}`, "jupyter");
  if (parsed.fatal === "no-kernel") throw new PinchoffError("io", `${parsed.message}; run pinchoff kernel (or node lib/setup/prepare.mjs kernel)`, "kernel");
  const status = new Map<number, CellStatus>();
  let stopped = false;
  for (const i of opts.codeCells) {
    const s = parsed.cells?.[String(i)]?.status;
    if (stopped) status.set(i, "not run");
    else if (s === "ok" || s === "error" || s === "abort") status.set(i, s);
    else if (parsed.fatal === "timeout") {
      status.set(i, "timeout");
      stopped = true;
    } else status.set(i, "not run");
  }
  const fatal = parsed.fatal ? { kind: parsed.fatal, message: parsed.message ?? parsed.fatal } : undefined;
  if (fatal && fatal.kind !== "timeout" && fatal.kind !== "dead-kernel") throw new PinchoffError("io", `the Jupyter run failed: ${fatal.message}`, "jupyter");
  return { status, seconds, ...(fatal ? { fatal } : {}) };
}
