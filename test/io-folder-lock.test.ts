// The output-folder lock: one run per folder; stale locks of dead or recycled pids are taken over.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { hostname, tmpdir } from "node:os";
import { join } from "node:path";
import { PinchoffError } from "../lib/errors.js";
import { lockFileName, lockFolder, processStartTicks } from "../lib/io/folder-lock.js";

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "pinchoff-lock-"));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** The pid of a process that has exited (a finished child). */
const deadPid = (): number => spawnSync(process.execPath, ["-e", "0"]).pid!;

describe("lockFolder", () => {
  it("is exclusive: a second lock on the same folder is refused naming the folder and the holder's pid", () => {
    const a = lockFolder(dir, "first run");
    let err: unknown;
    try {
      lockFolder(dir, "second run");
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(PinchoffError);
    expect((err as Error).message).toContain(dir);
    expect((err as Error).message).toContain(`pid ${process.pid}`);
    expect((err as Error).message).toContain("first run");
    a.release();
    expect(existsSync(join(dir, lockFileName))).toBe(false);
    const b = lockFolder(dir, "third run");
    b.release();
  });

  it("takes over the lock of a process that has exited, and says whose it was", () => {
    const pid = deadPid();
    writeFileSync(join(dir, lockFileName), JSON.stringify({ pid, host: hostname(), started: 1, since: "2026-01-01T00:00:00.000Z", what: "an old run" }));
    const l = lockFolder(dir, "new run");
    expect(l.tookOver).toContain(`pid ${pid}`);
    expect(JSON.parse(readFileSync(join(dir, lockFileName), "utf8")).pid).toBe(process.pid);
    l.release();
    expect(readdirSync(dir)).toEqual([]);
  });

  it("a live pid with another start time is a recycled pid: the lock is stale", () => {
    const started = processStartTicks(process.pid);
    expect(started).not.toBeNull(); // Linux /proc
    writeFileSync(join(dir, lockFileName), JSON.stringify({ pid: process.pid, host: hostname(), started: started! - 1, since: "2026-01-01T00:00:00.000Z", what: "an old run" }));
    const l = lockFolder(dir, "new run");
    expect(l.tookOver).toBeDefined();
    l.release();
  });

  it("an unreadable lock or one from another host is never taken over", () => {
    for (const text of ["not json", JSON.stringify({ pid: deadPid(), host: "some-other-host", started: null, since: "x", what: "" })]) {
      writeFileSync(join(dir, lockFileName), text);
      expect(() => lockFolder(dir, "new run")).toThrow(/wait for it to finish or choose another --out/);
      expect(readFileSync(join(dir, lockFileName), "utf8")).toBe(text);
    }
    rmSync(join(dir, lockFileName));
  });

  it("release removes only its own lock", () => {
    const l = lockFolder(dir, "run");
    const other = JSON.stringify({ pid: 1, host: hostname(), started: null, since: "x", what: "someone else" });
    writeFileSync(join(dir, lockFileName), other);
    l.release();
    expect(readFileSync(join(dir, lockFileName), "utf8")).toBe(other);
    rmSync(join(dir, lockFileName));
  });
});
