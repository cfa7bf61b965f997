/**
 * An exclusive lock on an output folder, so two runs never write into the same
 * folder at once. Method: a lock file created with O_CREAT|O_EXCL (atomic on
 * local file systems) holding the owner's pid, host and process start time
 * (from /proc on Linux, so a recycled pid is not mistaken for the owner).
 * A lock whose owner is gone (same host, pid dead or started at another time)
 * is stale and taken over, with a note; a live owner's lock is refused with a
 * message naming the folder and the pid. Take-over is made safe against two
 * runs taking over at once by moving the stale file aside and checking that
 * what was moved is still the stale lock.
 */
import { closeSync, linkSync, openSync, readFileSync, renameSync, unlinkSync, writeSync } from "node:fs";
import { hostname } from "node:os";
import { join } from "node:path";
import { randomBytes } from "node:crypto";
import { PinchoffError } from "../errors.js";

export const lockFileName = ".pinchoff-lock";

export interface LockOwner {
  readonly pid: number;
  readonly host: string;
  /** Process start time in clock ticks since boot (Linux), or null where unknown. */
  readonly started: number | null;
  readonly since: string;
  readonly what: string;
}

export interface FolderLock {
  readonly path: string;
  /** Set when a stale lock was taken over: says whose. */
  readonly tookOver?: string;
  release(): void;
}

/** Start time of a process in clock ticks since boot (field 22 of /proc/<pid>/stat), or null. */
export function processStartTicks(pid: number): number | null {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, "utf8");
    // The command name (field 2) is in parentheses and may hold spaces; count from the last ")".
    const rest = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
    const v = Number(rest[19]);
    return Number.isFinite(v) ? v : null;
  } catch {
    return null;
  }
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === "EPERM"; // exists, owned by someone else
  }
}

function readOwner(path: string): { text: string; owner?: LockOwner } | undefined {
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch {
    return undefined;
  }
  try {
    const o = JSON.parse(text) as LockOwner;
    if (Number.isInteger(o.pid) && o.pid > 0 && typeof o.host === "string") return { text, owner: o };
  } catch {
    /* unreadable: treated below */
  }
  return { text };
}

/** Is this owner gone? Only decidable on the same host; an unreadable lock is left alone. */
function stale(o: LockOwner | undefined): boolean {
  if (!o || o.host !== hostname()) return false;
  if (!alive(o.pid)) return true;
  if (o.started === null) return false;
  const now = processStartTicks(o.pid);
  return now !== null && now !== o.started;
}

const describeOwner = (o: LockOwner) => `pid ${o.pid} on ${o.host}, since ${o.since}${o.what ? `, ${o.what}` : ""}`;

/**
 * Take the lock on `dir` (which must exist). `what` describes this run for
 * the message another run would see. Throws PinchoffError("io") when another
 * live run holds it.
 */
export function lockFolder(dir: string, what: string): FolderLock {
  const path = join(dir, lockFileName);
  const me: LockOwner = { pid: process.pid, host: hostname(), started: processStartTicks(process.pid), since: new Date().toISOString(), what };
  const text = JSON.stringify(me) + "\n";
  let tookOver: string | undefined;
  for (let attempt = 0; attempt < 3; attempt++) {
    try {
      const fd = openSync(path, "wx", 0o644);
      try {
        writeSync(fd, text);
      } finally {
        closeSync(fd);
      }
      let released = false;
      return {
        path,
        ...(tookOver ? { tookOver } : {}),
        release() {
          if (released) return;
          released = true;
          // Remove it only while it is still ours.
          if (readOwner(path)?.text === text) {
            try {
              unlinkSync(path);
            } catch {
              /* already gone */
            }
          }
        },
      };
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== "EEXIST") throw new PinchoffError("io", `cannot create the lock file (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`, path);
    }
    const held = readOwner(path);
    if (!held) continue; // released meanwhile: try again
    if (!stale(held.owner)) {
      const who = held.owner ? `another pinchoff run (${describeOwner(held.owner)}) is writing into this folder` : `the folder is locked by ${lockFileName}, which cannot be read`;
      throw new PinchoffError("io", `${who}; wait for it to finish or choose another --out (if no run is active, delete ${path})`, dir);
    }
    // Move the stale lock aside, and make sure what moved is the stale lock (another run may have taken over first).
    const aside = `${path}.${process.pid}.${randomBytes(4).toString("hex")}.stale`;
    try {
      renameSync(path, aside);
    } catch {
      continue;
    }
    const moved = readOwner(aside);
    if (moved?.text === held.text) {
      unlinkSync(aside);
      tookOver = describeOwner(held.owner!);
    } else {
      // A live lock was moved: put it back unless a new one exists, then look again.
      try {
        linkSync(aside, path);
      } catch {
        /* someone holds the name now */
      }
      unlinkSync(aside);
    }
  }
  throw new PinchoffError("io", "could not take the lock: other runs keep taking it; try again", path);
}
