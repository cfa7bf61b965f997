/**
 * Writing run results without ever leaving a half-written file or replacing
 * a file the user made: every file is written under a temporary name in its
 * final folder, then renamed into place; a target that exists and was not
 * written by pinchoff stops the run before anything is executed.
 */
import { closeSync, existsSync, fsyncSync, mkdirSync, openSync, readFileSync, readdirSync, renameSync, rmdirSync, statSync, unlinkSync, writeSync } from "node:fs";
import { basename, dirname, join, resolve, sep } from "node:path";
import { randomBytes } from "node:crypto";
import { PinchoffError } from "../errors.js";

export interface OutputFile {
  readonly path: string;
  readonly content: string;
}

const errno = (e: unknown) => (e as NodeJS.ErrnoException).code ?? (e as Error).message;

/**
 * Make sure `dir` exists and accepts new files, by creating and removing a
 * probe file (write permission bits alone say nothing when running as root).
 * Returns the top-most folder this call created, so a failed run can remove it.
 */
export function prepareOutputDir(dir: string): string | undefined {
  let created: string | undefined;
  try {
    if (existsSync(dir) && !statSync(dir).isDirectory()) throw new PinchoffError("io", "the output path exists and is not a folder", dir);
    created = mkdirSync(dir, { recursive: true });
    const probe = join(dir, `.pinchoff-probe-${process.pid}-${randomBytes(4).toString("hex")}`);
    closeSync(openSync(probe, "wx"));
    unlinkSync(probe);
    return created;
  } catch (e) {
    if (created) removeIfEmpty(dir, created);
    if (e instanceof PinchoffError) throw e;
    throw new PinchoffError("io", `the output folder cannot be written (${errno(e)}); choose another with --out`, dir);
  }
}

/** Remove `dir` and its parents up to `created` (the top-most folder a run made), each only while empty. */
export function removeIfEmpty(dir: string, created: string = dir): void {
  let d = resolve(dir);
  const top = resolve(created);
  if (d !== top && !d.startsWith(top + sep)) return;
  for (;;) {
    try {
      if (readdirSync(d).length !== 0) return;
      rmdirSync(d);
    } catch {
      return;
    }
    if (d === top) return;
    d = dirname(d);
  }
}

/** Refuse to replace a file unless `ours` recognises it as an earlier run's output. */
export function checkReplaceable(paths: readonly string[], ours: (path: string, head: string) => boolean): void {
  for (const p of paths) {
    if (!existsSync(p)) continue;
    let head = "";
    try {
      if (!statSync(p).isFile()) throw new PinchoffError("io", "exists and is not a file; choose another --out", p);
      head = readFileSync(p, "utf8").slice(0, 4096);
    } catch (e) {
      if (e instanceof PinchoffError) throw e;
      throw new PinchoffError("io", `cannot read the existing file (${errno(e)})`, p);
    }
    if (!ours(p, head)) throw new PinchoffError("io", "exists and was not written by pinchoff run; it is left untouched: move it or choose another --out", p);
  }
}

/** Write all files to temporary names, then rename each into place; on failure remove the temporaries. */
export function writeAtomically(files: readonly OutputFile[]): void {
  const temps: string[] = [];
  try {
    for (const f of files) {
      const dir = dirname(f.path);
      const tmp = join(dir, `.${basename(f.path)}.${process.pid}.${randomBytes(4).toString("hex")}.tmp`);
      temps.push(tmp);
      const fd = openSync(tmp, "wx");
      try {
        writeSync(fd, f.content);
        fsyncSync(fd);
      } finally {
        closeSync(fd);
      }
    }
  } catch (e) {
    for (const t of temps) rmQuiet(t);
    throw new PinchoffError("io", `cannot write the results (${errno(e)}); nothing was replaced`, files[temps.length - 1]?.path ?? "output");
  }
  files.forEach((f, i) => {
    try {
      renameSync(temps[i]!, f.path);
    } catch (e) {
      for (const t of temps.slice(i)) rmQuiet(t);
      throw new PinchoffError("io", `cannot move the result into place (${errno(e)})`, f.path);
    }
  });
}

function rmQuiet(p: string): void {
  try {
    unlinkSync(p);
  } catch {
    /* already gone */
  }
}
