/**
 * `pinchoff run` as a function: check the notebook and the overrides, lock the
 * design-run folder, stage a copy where "pinchoff" resolves, execute it
 * headless, collect the derivations, and write the design-run folder (report,
 * notebook as run, run record) through the atomic writer. The source notebook
 * is only ever read. An interruption (the `signal`) stops the driver and the
 * kernel at once, removes the staging folder, releases the lock and removes an
 * output folder the run created and left empty; nothing is written.
 */
import { createHash } from "node:crypto";
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { basename, dirname, extname, join, resolve } from "node:path";
import { PinchoffError } from "../errors.js";
import { fingerprint } from "../record/fingerprint.js";
import { buildReport, reportMarker, type ReportModel } from "../report/html.js";
import { isFrequencyRecord } from "../bias/frequency.js";
import { checkReplaceable, prepareOutputDir, removeIfEmpty, writeAtomically, type FileSystemSeam } from "../io/atomic-write.js";
import { lockFolder, type FolderLock } from "../io/folder-lock.js";
import { buildRunRecord, isRunRecord, runFolderFiles } from "./run-record.js";
import { allChecks, collect, type CellFailure, type CheckLine, type Collected } from "./collect.js";
import { findJupyter, requireKernel, startKernelSession, type KernelSession } from "./execute.js";
import { applyOverrides, findInputsCell, resolveInputs, type Override, type ParsedInput } from "./inputs-cell.js";
import { cellSource, ensureCellIds, parseNotebook, readNotebook, type Notebook } from "./notebook-file.js";
import { kernelName, stagingRoot, toolVersion } from "./paths.js";

export interface RunOptions {
  readonly notebook: string;
  readonly overrides?: readonly Override[];
  /** Output folder; default: `<name>-run/` beside the notebook. */
  readonly outDir?: string;
  /** Per-cell time limit in seconds. */
  readonly timeout?: number;
  readonly env?: NodeJS.ProcessEnv;
  readonly now?: Date;
  /** Aborting it interrupts the run (the command line wires SIGINT and SIGTERM to it). */
  readonly signal?: AbortSignal;
  /** Said on the terminal, e.g. when a stale lock is taken over. */
  readonly note?: (text: string) => void;
  /** File system seam of the atomic writer (tests simulate a full disk with it). */
  readonly fs?: FileSystemSeam;
}

export interface RunResult {
  readonly outDir: string;
  /** The notebook with its outputs, as run. */
  readonly notebookPath: string;
  readonly reportPath: string;
  readonly recordPath: string;
  readonly reportBytes: number;
  readonly inputs: readonly ParsedInput[];
  readonly checks: readonly CheckLine[];
  readonly failures: readonly CellFailure[];
  readonly skipped: readonly number[];
  readonly collected: Collected;
  /** 0 when every cell ran and every check passed. */
  readonly exitCode: number;
  readonly seconds: { readonly total: number; readonly kernel: number };
}

export const defaultTimeout = 120;

/** The default design-run folder of a notebook: `<name>-design-run/` beside it. */
export const defaultRunFolder = (notebook: string): string => join(dirname(resolve(notebook)), `${stemOf(notebook)}-design-run`);

/** Raised when the run was interrupted; `signal` names what stopped it. */
export class RunInterrupted extends PinchoffError {
  override readonly name = "RunInterrupted";
  constructor(readonly signal: string, folder: string) {
    super("io", `interrupted (${signal}): the kernel was stopped and nothing was written`, folder);
  }
}

const stemOf = (path: string) => basename(path, extname(path));

/** Is this existing file the output of an earlier run (so it may be replaced)? */
function ours(path: string, head: string): boolean {
  if (path.endsWith(".html")) return head.includes(reportMarker);
  if (path.endsWith(".json")) return isRunRecord(readFileSync(path, "utf8"));
  try {
    const nb = JSON.parse(readFileSync(path, "utf8")) as Notebook;
    return !!(nb.metadata?.pinchoff as { run?: unknown } | undefined)?.run;
  } catch {
    return false;
  }
}

function titleOf(nb: Notebook, fallback: string): string {
  for (const c of nb.cells) {
    if (c.cell_type !== "markdown") continue;
    const h = /^\s*#{1,3}\s+(.+)$/m.exec(cellSource(c));
    if (h) return h[1]!.trim();
  }
  return fallback;
}

export async function runNotebook(opts: RunOptions): Promise<RunResult> {
  const t0 = performance.now();
  const source = resolve(opts.notebook);
  const timeout = opts.timeout ?? defaultTimeout;
  if (!Number.isFinite(timeout) || timeout <= 0) throw new PinchoffError("invalid-value", `got ${timeout}, expected a time limit in seconds > 0`, "--timeout");
  if (!existsSync(source)) throw new PinchoffError("io", "no such notebook", opts.notebook);
  const { notebook, text } = readNotebook(source);
  const cell = findInputsCell(notebook, opts.notebook);

  // Everything that can be checked before starting a kernel is checked now.
  findJupyter(opts.env, false);
  requireKernel();
  const stem = stemOf(source);
  const outDir = resolve(opts.outDir ?? defaultRunFolder(source));
  const notebookPath = join(outDir, runFolderFiles.notebook);
  const reportPath = join(outDir, runFolderFiles.report);
  const recordPath = join(outDir, runFolderFiles.record);
  if ([notebookPath, reportPath, recordPath].includes(source)) throw new PinchoffError("io", "a result would replace the source notebook; choose another --out", source);
  const signal = opts.signal;
  const interrupted = () => new RunInterrupted(String(signal?.reason ?? "interrupted"), outDir);
  if (signal?.aborted) throw interrupted();
  const created = prepareOutputDir(outDir);
  let written = false;
  let lock: FolderLock | undefined;
  let stage: string | undefined;
  let session: KernelSession | undefined;
  let live: KernelSession | undefined;
  const onAbort = () => void live?.stop();
  signal?.addEventListener("abort", onAbort);
  try {
    lock = lockFolder(outDir, `pinchoff run ${source}`);
    if (lock.tookOver) opts.note?.(`took over a stale lock on ${outDir} (${lock.tookOver}, no longer running)`);
    checkReplaceable([notebookPath, reportPath, recordPath], ours);
    mkdirSync(stagingRoot, { recursive: true });
    stage = mkdtempSync(join(stagingRoot, `${stem.replace(/[^\w.-]/g, "_").slice(0, 40)}-`));
    // The kernel starts now; parsing the inputs (mathjs) and loading the renderer (KaTeX) overlap its start-up.
    session = startKernelSession(stage, { timeout, ...(opts.env ? { env: opts.env } : {}) });
    live = session;
    if (signal?.aborted) throw interrupted();
    const rendering = import("../report/derivation-html.js");
    rendering.catch(() => undefined); // awaited below; a failed check before then must not leave it unobserved
    const inputs = resolveInputs(cell, opts.overrides ?? [], opts.notebook);

    const copy = applyOverrides(notebook, cell, inputs);
    ensureCellIds(copy);
    copy.metadata.kernelspec = { name: kernelName, display_name: "TypeScript", language: "typescript" };
    const stagedIn = join(stage, "notebook.ipynb");
    const stagedOut = join(stage, "as-run.ipynb");
    writeFileSync(stagedIn, JSON.stringify(copy, null, 1));
    const codeCells = copy.cells.flatMap((c, i) => (c.cell_type === "code" ? [i] : []));
    if (signal?.aborted) throw interrupted();

    const running = session;
    session = undefined;
    let exec;
    try {
      exec = await running.run(stagedIn, stagedOut, { timeout, codeCells, ...(opts.env ? { env: opts.env } : {}) });
    } catch (e) {
      if (signal?.aborted) throw interrupted();
      throw e;
    }
    if (signal?.aborted) throw interrupted();
    if (!existsSync(stagedOut)) throw new PinchoffError("io", `the Jupyter run wrote no notebook${exec.fatal ? ` (${exec.fatal.message})` : ""}`, "jupyter");
    const executed = parseNotebook(readFileSync(stagedOut, "utf8"), "executed notebook");
    const collected = collect(executed, exec.status);
    const checks = allChecks(collected);
    const date = opts.now ?? new Date();

    const inputEntries = inputs.map((i) => ({ name: i.name, value: i.value, dim: i.dim }));
    const inputsFingerprint = fingerprint({ title: "design inputs", inputs: inputEntries });
    const sourceFingerprint = createHash("sha256").update(text, "utf8").digest("hex");
    executed.metadata.pinchoff = {
      run: {
        tool: toolVersion(),
        date: date.toISOString(),
        source: source,
        sourceFingerprint,
        inputsFingerprint,
        overrides: inputs.filter((i) => i.overridden).map((i) => ({ name: i.name, value: i.text, notebookValue: i.original })),
        cells: Object.fromEntries([...exec.status].map(([i, s]) => [String(i + 1), s])),
      },
    };

    const { formulaStyles, renderDerivationHtml } = await rendering;
    const model: ReportModel = {
      title: titleOf(notebook, stem),
      notebookPath: source,
      toolVersion: toolVersion(),
      date,
      sourceFingerprint,
      inputsFingerprint,
      inputs: inputs.map((i) => ({ name: i.name, text: i.text, dim: i.dim, value: i.value, overridden: i.overridden, ...(i.original !== undefined ? { original: i.original } : {}) })),
      derivations: collected.derivations.map((d) => ({
        title: d.data.title,
        cell: d.cell,
        ...(d.fingerprint ? { fingerprint: d.fingerprint } : {}),
        ...(Array.isArray(d.data.steps) && isFrequencyRecord(d.data) ? { section: "frequency" as const } : {}),
        html: renderDerivationHtml(d.data),
      })),
      checks,
      plots: collected.plots,
      parts: collected.parts,
      failures: collected.failures,
      skipped: collected.skipped,
      ...(collected.derivations.length ? { formulaStyles: formulaStyles() } : {}),
    };
    const html = buildReport(model);
    const notebookText = JSON.stringify(executed, null, 1) + "\n";
    const record = buildRunRecord({
      tool: toolVersion(),
      date,
      sourcePath: source,
      sourceSha256: sourceFingerprint,
      inputsFingerprint,
      derivations: collected.derivations.map((d) => ({ title: d.data.title, cell: d.cell, ...(d.fingerprint ? { fingerprint: d.fingerprint } : {}) })),
      inputs,
      checks,
      failures: collected.failures,
      skipped: collected.skipped,
      outputs: [
        { file: runFolderFiles.report, content: html },
        { file: runFolderFiles.notebook, content: notebookText },
      ],
    });
    if (signal?.aborted) throw interrupted();
    // The record goes last: it lists the other files with their digests, so a folder it describes is complete.
    writeAtomically(
      [
        { path: notebookPath, content: notebookText },
        { path: reportPath, content: html },
        { path: recordPath, content: JSON.stringify(record, null, 1) + "\n" },
      ],
      opts.fs ? { fs: opts.fs } : {},
    );
    written = true;
    return {
      outDir,
      notebookPath,
      reportPath,
      recordPath,
      reportBytes: Buffer.byteLength(html, "utf8"),
      inputs,
      checks,
      failures: collected.failures,
      skipped: collected.skipped,
      collected,
      exitCode: record.exitCode,
      seconds: { total: (performance.now() - t0) / 1000, kernel: exec.seconds },
    };
  } finally {
    signal?.removeEventListener("abort", onAbort);
    if (signal?.aborted) await live?.stop();
    else session?.cancel();
    if (stage) rmSync(stage, { recursive: true, force: true });
    lock?.release();
    if (!written && created) removeIfEmpty(outDir, created);
  }
}
