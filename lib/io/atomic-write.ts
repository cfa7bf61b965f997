/**
 * The one way pinchoff writes a file (run outputs, `op --record`, `new`, and
 * every later writer). Method: each file is written under a temporary name in
 * its final folder; every write is checked for its byte count and repeated
 * until the whole content is on disk (a short write is continued, a write that
 * makes no progress fails as ENOSPC); the file is fsync'd and closed (a failed
 * close is an error too); the folder is fsync'd; only then does a rename put
 * each file in place, and the folder is fsync'd again.
 * Failure mode: any error removes the temporaries and throws a PinchoffError
 * ("io") naming the file; nothing is replaced. A rename replaces the directory
 * entry itself, so a symbolic link at the destination is replaced, never
 * written through. With `exclusive`, an existing entry (file, link, anything)
 * is never replaced: the file is put in place with link(2), which fails if the
 * name exists.
 * The file system calls go through a small seam (`FileSystemSeam`) so tests can
 * simulate a full disk, short writes and failed syncs deterministically.
 */
import type { Stats } from "node:fs";
import { basename, dirname, join, resolve, sep } from "node:path";
import { nodeCrypto, nodeFs } from "./lazy-builtins.js";
import { PinchoffError } from "../errors.js";

/** The file system calls the writer uses; node:fs by default. */
export interface FileSystemSeam {
  openSync(path: string, flags: string | number, mode?: number): number;
  writeSync(fd: number, buffer: Uint8Array, offset: number, length: number): number;
  fsyncSync(fd: number): void;
  closeSync(fd: number): void;
  renameSync(from: string, to: string): void;
  linkSync(existing: string, name: string): void;
  unlinkSync(path: string): void;
}

export const nodeFileSystem: FileSystemSeam = {
  openSync: (p, f, m) => nodeFs.openSync(p, f, m),
  writeSync: (fd, b, o, l) => nodeFs.writeSync(fd, b, o, l),
  fsyncSync: (fd) => nodeFs.fsyncSync(fd),
  closeSync: (fd) => nodeFs.closeSync(fd),
  renameSync: (a, b) => nodeFs.renameSync(a, b),
  linkSync: (a, b) => nodeFs.linkSync(a, b),
  unlinkSync: (p) => nodeFs.unlinkSync(p),
};

export interface OutputFile {
  readonly path: string;
  readonly content: string | Uint8Array;
}

export interface WriteOptions {
  /** Never replace an existing entry at a destination (fail with "exists" instead). */
  readonly exclusive?: boolean;
  /** File mode of new files (default 0o644, less the umask). */
  readonly mode?: number;
  readonly fs?: FileSystemSeam;
}

export const errnoOf = (e: unknown): string => (e as NodeJS.ErrnoException)?.code ?? (e as Error)?.message ?? String(e);

/** Write all of `data` to `fd`, continuing after short writes; a write that makes no progress is a full disk. */
function writeAll(fs: FileSystemSeam, fd: number, data: Uint8Array): void {
  let done = 0;
  while (done < data.length) {
    const n = fs.writeSync(fd, data, done, data.length - done);
    if (!Number.isInteger(n) || n <= 0) throw Object.assign(new Error(`no bytes written at ${done} of ${data.length}`), { code: "ENOSPC" });
    done += n;
  }
}

/** fsync a folder so the names it holds survive a crash; file systems that cannot do this say EINVAL, which is accepted. */
function syncDir(fs: FileSystemSeam, dir: string): void {
  let fd: number;
  try {
    fd = fs.openSync(dir, "r");
  } catch (e) {
    if (errnoOf(e) === "EISDIR" || errnoOf(e) === "EACCES") return; // platforms where a folder cannot be opened for syncing
    throw e;
  }
  try {
    fs.fsyncSync(fd);
  } catch (e) {
    if (errnoOf(e) !== "EINVAL" && errnoOf(e) !== "ENOTSUP") throw e;
  } finally {
    fs.closeSync(fd);
  }
}

function rmQuiet(fs: FileSystemSeam, p: string): void {
  try {
    fs.unlinkSync(p);
  } catch {
    /* already gone */
  }
}

const tempName = (path: string) => join(dirname(path), `.${basename(path)}.${process.pid}.${nodeCrypto().randomBytes(4).toString("hex")}.tmp`);

/**
 * Write every file completely and durably under a temporary name, then put
 * each in place. Throws PinchoffError("io") and replaces nothing when any
 * write, sync or close fails.
 */
export function writeAtomically(files: readonly OutputFile[], opts: WriteOptions = {}): void {
  const fs = opts.fs ?? nodeFileSystem;
  const temps: string[] = [];
  const dirs = new Set<string>();
  let current = files[0]?.path ?? "output";
  try {
    for (const f of files) {
      current = f.path;
      const tmp = tempName(resolve(f.path));
      const fd = fs.openSync(tmp, "wx", opts.mode ?? 0o644);
      temps.push(tmp);
      let closed = false;
      try {
        writeAll(fs, fd, typeof f.content === "string" ? Buffer.from(f.content, "utf8") : f.content);
        fs.fsyncSync(fd);
        closed = true;
        fs.closeSync(fd);
      } finally {
        if (!closed) {
          try {
            fs.closeSync(fd);
          } catch {
            /* the first error is the one to report */
          }
        }
      }
      dirs.add(dirname(tmp));
    }
    for (const d of dirs) syncDir(fs, d);
  } catch (e) {
    for (const t of temps) rmQuiet(fs, t);
    throw new PinchoffError("io", `cannot write (${errnoOf(e)}); ${files.length > 1 ? "no file was replaced" : "nothing was replaced"}`, current);
  }
  const placed: string[] = [];
  files.forEach((f, i) => {
    const tmp = temps[i]!;
    try {
      if (opts.exclusive) {
        fs.linkSync(tmp, f.path);
        fs.unlinkSync(tmp);
      } else fs.renameSync(tmp, f.path);
      placed.push(f.path);
    } catch (e) {
      for (const t of temps.slice(i)) rmQuiet(fs, t);
      const code = errnoOf(e);
      const what = code === "EEXIST" ? "already exists; it was left untouched" : `cannot move the result into place (${code})`;
      throw new PinchoffError("io", placed.length ? `${what}; already replaced: ${placed.join(", ")}` : what, f.path);
    }
  });
  try {
    for (const d of dirs) syncDir(fs, d);
  } catch (e) {
    throw new PinchoffError("io", `the files were written but their folder could not be synced (${errnoOf(e)})`, [...dirs].join(", "));
  }
}

/** One file, atomically: see writeAtomically. */
export function writeFileAtomic(path: string, content: string | Uint8Array, opts: WriteOptions = {}): void {
  writeAtomically([{ path, content }], opts);
}

/**
 * Make sure `dir` exists and accepts new files, by creating and removing a
 * probe file (write permission bits alone say nothing when running as root).
 * Returns the top-most folder this call created, so a failed run can remove it.
 */
export function prepareOutputDir(dir: string, hint = "choose another with --out"): string | undefined {
  let created: string | undefined;
  try {
    if (nodeFs.existsSync(dir) && !nodeFs.statSync(dir).isDirectory()) throw new PinchoffError("io", "the output path exists and is not a folder", dir);
    created = nodeFs.mkdirSync(dir, { recursive: true });
    const probe = join(dir, `.pinchoff-probe-${process.pid}-${nodeCrypto().randomBytes(4).toString("hex")}`);
    nodeFs.closeSync(nodeFs.openSync(probe, "wx"));
    nodeFs.unlinkSync(probe);
    return created;
  } catch (e) {
    if (created) removeIfEmpty(dir, created);
    if (e instanceof PinchoffError) throw e;
    throw new PinchoffError("io", `the output folder cannot be written (${errnoOf(e)}); ${hint}`, dir);
  }
}

/** Remove `dir` and its parents up to `created` (the top-most folder a run made), each only while empty. */
export function removeIfEmpty(dir: string, created: string = dir): void {
  let d = resolve(dir);
  const top = resolve(created);
  if (d !== top && !d.startsWith(top + sep)) return;
  for (;;) {
    try {
      if (nodeFs.readdirSync(d).length !== 0) return;
      nodeFs.rmdirSync(d);
    } catch {
      return;
    }
    if (d === top) return;
    d = dirname(d);
  }
}

/** Refuse to replace a file unless `ours` recognises it as an earlier output of ours (`what` names the writer). */
export function checkReplaceable(paths: readonly string[], ours: (path: string, head: string) => boolean, what = "pinchoff run", hint = "move it or choose another --out"): void {
  for (const p of paths) {
    let st: Stats;
    try {
      st = nodeFs.lstatSync(p);
    } catch {
      continue; // nothing there
    }
    let head = "";
    try {
      if (!st.isFile()) throw new PinchoffError("io", `exists and is not a plain file; it is left untouched: ${hint}`, p);
      head = nodeFs.readFileSync(p, "utf8").slice(0, 4096);
    } catch (e) {
      if (e instanceof PinchoffError) throw e;
      throw new PinchoffError("io", `cannot read the existing file (${errnoOf(e)})`, p);
    }
    if (!ours(p, head)) throw new PinchoffError("io", `exists and was not written by ${what}; it is left untouched: ${hint}`, p);
  }
}
