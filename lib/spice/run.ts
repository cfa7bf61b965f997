/**
 * ngspice as an engine: find it, run a deck in batch in a private temporary
 * folder, read its raw files and log, and turn its failures into typed errors.
 *
 * Method: one child process per deck (`ngspice -b deck.cir`), at most one per core
 * at a time for the asynchronous form (further calls queue), its working folder a
 * fresh `mkdtemp` folder removed afterwards whatever happens; outputs are raw files
 * the deck's control block `write`s there (parsed at full double precision by
 * `raw.ts`). The shared-library route was not taken: a batch run costs about 10 ms of
 * process start beside the ~0.3 s a foundry library takes to load in either route,
 * and a crash in the simulator cannot take the caller down.
 * Threads: the run folder holds a `.spiceinit` with `set num_threads=1`. ngspice 39
 * as Debian builds it evaluates BSIM4 with OpenMP and starts 2 threads per process
 * whatever OMP_NUM_THREADS says; for circuits of a few transistors the second
 * thread only waits at barriers (measured: a 11 390-point characterisation deck
 * took 0.34 s CPU with 2 threads, 0.16 s with one, same wall time), and on a loaded
 * machine those waits spin for seconds. Parallelism comes from running one
 * process per core instead (`characterize.ts`).
 * Time limit: each run is killed (SIGKILL, whole process group for the async form)
 * when it exceeds `timeoutMs` (default 60 s) and a `SimulatorError` says so.
 * Failure modes: no ngspice (`PINCHOFF_NGSPICE` or PATH) → SimulatorError "not found";
 * a missing library file, section or device → SimulatorError naming it, from the log;
 * no convergence → ConvergenceError with the log excerpt.
 */
import { nodeChildProcess, nodeFs, nodeOs } from "../io/lazy-builtins.js";
import { delimiter, isAbsolute, join } from "node:path";
import { ConvergenceError, PinchoffError } from "../errors.js";
import { parseRaw, type RawPlot } from "./raw.js";

const { accessSync, constants, mkdtempSync, readFileSync, rmSync, writeFileSync } = nodeFs;

/** A simulator failure: the log excerpt is kept so a reviewer can see what ngspice said. */
export class SimulatorError extends PinchoffError {
  override readonly name = "SimulatorError";
  constructor(
    message: string,
    readonly log: string,
    origin?: string,
  ) {
    super("io", message, origin);
  }
}

let found: string | undefined;

/** The ngspice executable: `PINCHOFF_NGSPICE` if set, else `ngspice` on PATH. */
export function findNgspice(env: NodeJS.ProcessEnv = process.env): string {
  const given = env.PINCHOFF_NGSPICE;
  if (given) {
    try {
      accessSync(given, constants.X_OK);
      return given;
    } catch {
      throw new SimulatorError(`ngspice not found at ${JSON.stringify(given)} (an executable file was expected)`, "", "PINCHOFF_NGSPICE");
    }
  }
  if (found && env === process.env) return found;
  for (const dir of (env.PATH ?? "").split(delimiter)) {
    if (!dir || !isAbsolute(dir)) continue;
    const p = join(dir, "ngspice");
    try {
      accessSync(p, constants.X_OK);
      if (env === process.env) found = p;
      return p;
    } catch {
      /* next */
    }
  }
  throw new SimulatorError("ngspice not found on PATH; install it (Debian: apt-get install ngspice) or set PINCHOFF_NGSPICE to its path", "", "PATH");
}

export interface SimulatorRun {
  /** The whole deck text (from `deckText`). */
  readonly deck: string;
  /** Raw files the deck writes into its working folder, by plain file name (`op.raw`). */
  readonly outputs?: readonly string[];
  /** Kill the run after this long; default 60 000 ms. */
  readonly timeoutMs?: number;
  /** Where the deck came from, for messages. */
  readonly origin?: string;
}

export interface SimulatorResult {
  /** ngspice's standard output and error, as printed. */
  readonly log: string;
  /** Plots of each requested raw file. */
  readonly raw: Readonly<Record<string, readonly RawPlot[]>>;
  readonly seconds: number;
}

const outputName = /^[A-Za-z0-9_-]{1,64}\.raw$/;

function prepare(run: SimulatorRun): { dir: string; deck: string } {
  for (const o of run.outputs ?? []) if (!outputName.test(o)) throw new PinchoffError("io", `output name ${JSON.stringify(o)} is not a plain *.raw file name`, run.origin);
  const dir = mkdtempSync(join(nodeOs().tmpdir(), "pinchoff-spice-"));
  const deck = join(dir, "deck.cir");
  writeFileSync(deck, run.deck);
  writeFileSync(join(dir, ".spiceinit"), "* pinchoff: one thread per ngspice process (see lib/spice/run.ts)\nset num_threads=1\n");
  return { dir, deck };
}

function finish(run: SimulatorRun, dir: string, log: string, status: number | null, timedOut: boolean, t0: number): SimulatorResult {
  const origin = run.origin ?? "ngspice";
  if (timedOut) throw new SimulatorError(`ngspice did not finish within ${(run.timeoutMs ?? 60000) / 1000} s and was stopped`, excerpt(log), origin);
  diagnose(log, origin);
  if (status !== 0) throw new SimulatorError(`ngspice exited with status ${status}: ${excerpt(log, 8)}`, excerpt(log), origin);
  const raw: Record<string, RawPlot[]> = {};
  for (const o of run.outputs ?? []) {
    let buf: Buffer;
    try {
      buf = readFileSync(join(dir, o));
    } catch {
      throw new SimulatorError(`ngspice wrote no ${o}: ${excerpt(log, 8)}`, excerpt(log), origin);
    }
    raw[o] = parseRaw(buf, `${origin} ${o}`);
  }
  return { log, raw, seconds: (performance.now() - t0) / 1000 };
}

/** Run a deck and wait (blocks the thread; for tests and one-off checks). */
export function runDeckSync(run: SimulatorRun): SimulatorResult {
  const exe = findNgspice();
  const t0 = performance.now();
  const { dir, deck } = prepare(run);
  try {
    const r = nodeChildProcess().spawnSync(exe, ["-b", deck], { cwd: dir, encoding: "utf8", timeout: run.timeoutMs ?? 60000, killSignal: "SIGKILL", maxBuffer: 256 << 20, stdio: ["ignore", "pipe", "pipe"] });
    if (r.error && (r.error as NodeJS.ErrnoException).code !== "ETIMEDOUT") throw new SimulatorError(`ngspice could not be started: ${r.error.message}`, "", exe);
    const timedOut = (r.error as NodeJS.ErrnoException | undefined)?.code === "ETIMEDOUT" || r.signal === "SIGKILL";
    return finish(run, dir, `${r.stdout ?? ""}${r.stderr ?? ""}`, r.status, timedOut, t0);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Asynchronous runs in flight, and those waiting for a core. */
let running = 0;
const waiting: Array<() => void> = [];
/** Runs at once: one per core, counted on the first run (node:os loads then, not on import). */
let slots: number | undefined;

async function acquire(): Promise<void> {
  if (running < (slots ??= Math.max(1, nodeOs().availableParallelism()))) {
    running++;
    return;
  }
  await new Promise<void>((go) => waiting.push(go));
}

function release(): void {
  const next = waiting.shift();
  if (next) next();
  else running--;
}

/** Run a deck in a child process; several may be called at once, at most one process per core runs (the rest queue). */
export async function runDeck(run: SimulatorRun): Promise<SimulatorResult> {
  const exe = findNgspice();
  await acquire();
  try {
    return await runNow(exe, run);
  } finally {
    release();
  }
}

async function runNow(exe: string, run: SimulatorRun): Promise<SimulatorResult> {
  const t0 = performance.now();
  const { dir, deck } = prepare(run);
  try {
    const { log, status, timedOut } = await new Promise<{ log: string; status: number | null; timedOut: boolean }>((resolve, reject) => {
      let timedOut = false;
      const chunks: Buffer[] = [];
      const child = nodeChildProcess().spawn(exe, ["-b", deck], { cwd: dir, detached: true, stdio: ["ignore", "pipe", "pipe"] });
      child.stdout.on("data", (c: Buffer) => chunks.push(c));
      child.stderr.on("data", (c: Buffer) => chunks.push(c));
      child.on("error", (err) => {
        clearTimeout(timer);
        reject(new SimulatorError(`ngspice could not be started: ${err.message}`, "", exe));
      });
      child.on("close", (code) => {
        clearTimeout(timer);
        resolve({ log: Buffer.concat(chunks).toString("utf8"), status: code, timedOut });
      });
      const timer = setTimeout(() => {
        timedOut = true;
        try {
          process.kill(-child.pid!, "SIGKILL");
        } catch {
          child.kill("SIGKILL");
        }
      }, run.timeoutMs ?? 60000);
    });
    return finish(run, dir, log, status, timedOut, t0);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Lines of the log that say something (warnings about unset binning parameters dropped), at most `n`. */
export function excerpt(log: string, n = 30): string {
  const lines = log.split("\n").filter((l) => l.trim() && !/^\s*warning: .*(?:not set|param|nbins|binning)/i.test(l) && !/^Note: No compatibility mode/i.test(l));
  return lines.slice(-n).join("\n");
}

/** Typed errors from what ngspice printed: missing library file, section or device; no convergence. */
export function diagnose(log: string, origin: string): void {
  let m = /library file (.+?), section definition (\S+) not found/i.exec(log);
  if (m) throw new SimulatorError(`the library ${m[1]} has no section ${JSON.stringify(m[2])}`, excerpt(log), origin);
  m = /Could not find library file (\S+)/i.exec(log) ?? /library file (\S+) not found/i.exec(log);
  if (m) throw new SimulatorError(`library file not found: ${m[1]}`, excerpt(log), origin);
  m = /Could not find include file (.+)$/im.exec(log) ?? /(?:can't|cannot|could not) (?:find|open) (?:include )?file:?\s*(.+)$/im.exec(log);
  if (m) throw new SimulatorError(`include file not found: ${m[1]!.trim()}`, excerpt(log), origin);
  m = /Error on line \d+ or its substitute:\s*\n\s*(\S+)[^\n]*\n\s*could not find a valid modelname/i.exec(log);
  if (m) {
    const line = /Error on line \d+ or its substitute:\s*\n\s*([^\n]+)/i.exec(log)![1]!.trim();
    throw new SimulatorError(`no device model for ${m[1]}: "${line}" (the device name is not in the library section, or its W/L fall outside every bin)`, excerpt(log), origin);
  }
  if (/unable to find definition of model|could not find a valid modelname/i.test(log)) throw new SimulatorError("a device model is not defined in the library", excerpt(log), origin);
  if (/no convergence|timestep too small|singular matrix|iteration limit reached/i.test(log) && /aborted|failed/i.test(log) && !/op finished successfully/i.test(log))
    throw new ConvergenceError(`ngspice found no solution:\n${excerpt(log, 12)}`, origin);
}

/** Values printed as `name = value` lines (from `print` in a control block), in order; names lower case. */
export function printedValues(log: string): Array<[string, number]> {
  const rows: Array<[string, number]> = [];
  for (const line of log.split("\n")) {
    const m = /^\s*([^\s=]+)\s*=\s*([-+0-9.eE]+)\s*$/.exec(line);
    if (m) rows.push([m[1]!.toLowerCase(), Number(m[2])]);
  }
  return rows;
}
