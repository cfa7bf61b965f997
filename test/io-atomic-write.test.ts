// The one atomic writer: complete, synced writes or a clear error with the old file intact.
// A full disk, short writes and failed syncs are simulated through the file system seam.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { lstatSync, mkdtempSync, readFileSync, readdirSync, readlinkSync, rmSync, symlinkSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { PinchoffError } from "../lib/errors.js";
import { nodeFileSystem, writeAtomically, writeFileAtomic, type FileSystemSeam } from "../lib/io/atomic-write.js";

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "pinchoff-io-"));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const enospc = () => Object.assign(new Error("no space left on device"), { code: "ENOSPC" });
const temps = () => readdirSync(dir).filter((f) => f.endsWith(".tmp"));

/** A file system that accepts `room` bytes in all, then writes nothing more (a disk filling up). */
function fillingDisk(room: number, mode: "zero" | "throw"): FileSystemSeam {
  let left = room;
  return {
    ...nodeFileSystem,
    writeSync(fd, buf, off, len) {
      if (left <= 0) {
        if (mode === "throw") throw enospc();
        return 0;
      }
      const n = Math.min(len, left);
      left -= n;
      return nodeFileSystem.writeSync(fd, buf, off, n);
    },
  };
}

function caught(f: () => void): PinchoffError {
  try {
    f();
  } catch (e) {
    if (e instanceof PinchoffError) return e;
    throw e;
  }
  throw new Error("expected a PinchoffError");
}

describe("writeAtomically", () => {
  it("continues after short writes until every byte is on disk", () => {
    const p = join(dir, "short.txt");
    const content = "x".repeat(10_000) + "é end";
    let calls = 0;
    const stingy: FileSystemSeam = { ...nodeFileSystem, writeSync: (fd, b, o, l) => (calls++, nodeFileSystem.writeSync(fd, b, o, Math.min(l, 7))) };
    writeFileAtomic(p, content, { fs: stingy });
    expect(readFileSync(p, "utf8")).toBe(content);
    expect(calls).toBe(Math.ceil(Buffer.byteLength(content) / 7));
  });

  for (const mode of ["zero", "throw"] as const) {
    it(`a disk that fills part way (${mode === "zero" ? "write returns 0" : "write throws ENOSPC"}) leaves the earlier report intact`, () => {
      const p = join(dir, `report-${mode}.html`);
      writeFileSync(p, "<p>earlier complete report</p>");
      const e = caught(() => writeFileAtomic(p, "<p>" + "new ".repeat(5000) + "</p>", { fs: fillingDisk(1000, mode) }));
      expect(e.code).toBe("io");
      expect(e.message).toContain(p);
      expect(e.message).toContain("ENOSPC");
      expect(e.message).toMatch(/nothing was replaced/);
      expect(readFileSync(p, "utf8")).toBe("<p>earlier complete report</p>");
      expect(temps()).toEqual([]);
    });
  }

  it("with several files, a failure on the second replaces none of them", () => {
    const a = join(dir, "a.txt");
    const b = join(dir, "b.txt");
    writeFileSync(a, "old a");
    writeFileSync(b, "old b");
    const e = caught(() => writeAtomically([{ path: a, content: "new a" }, { path: b, content: "new b, longer" }], { fs: fillingDisk(8, "throw") }));
    expect(e.message).toContain(b);
    expect(e.message).toMatch(/no file was replaced/);
    expect([readFileSync(a, "utf8"), readFileSync(b, "utf8")]).toEqual(["old a", "old b"]);
    expect(temps()).toEqual([]);
  });

  it("a failed fsync or close is a failure, not a success", () => {
    const p = join(dir, "sync.txt");
    writeFileSync(p, "old");
    const eio = () => {
      throw Object.assign(new Error("i/o error"), { code: "EIO" });
    };
    for (const seam of [{ ...nodeFileSystem, fsyncSync: eio }, { ...nodeFileSystem, closeSync: (fd: number) => (nodeFileSystem.closeSync(fd), eio()) }]) {
      expect(caught(() => writeFileAtomic(p, "new", { fs: seam })).message).toMatch(/EIO/);
      expect(readFileSync(p, "utf8")).toBe("old");
    }
    expect(temps()).toEqual([]);
  });

  it("syncs the file before the rename and the folder before and after it", () => {
    const p = join(dir, "order.txt");
    const log: string[] = [];
    const fds = new Map<number, string>();
    const seam: FileSystemSeam = {
      ...nodeFileSystem,
      openSync: (path, f, m) => {
        const fd = nodeFileSystem.openSync(path, f, m);
        fds.set(fd, path === dir ? "dir" : "file");
        return fd;
      },
      fsyncSync: (fd) => (log.push(`sync ${fds.get(fd)}`), nodeFileSystem.fsyncSync(fd)),
      renameSync: (a, b) => (log.push("rename"), nodeFileSystem.renameSync(a, b)),
    };
    writeFileAtomic(p, "ordered", { fs: seam });
    expect(log).toEqual(["sync file", "sync dir", "rename", "sync dir"]);
  });

  it("replaces a symbolic link itself, never the file it points to", () => {
    const target = join(dir, "target.txt");
    const link = join(dir, "link.txt");
    writeFileSync(target, "the link's target");
    symlinkSync(target, link);
    writeFileAtomic(link, "new file");
    expect(readFileSync(target, "utf8")).toBe("the link's target");
    expect(lstatSync(link).isFile()).toBe(true);
    expect(readFileSync(link, "utf8")).toBe("new file");
  });

  it("exclusive: never replaces an existing name (file or dangling link)", () => {
    const p = join(dir, "mine.txt");
    writeFileSync(p, "mine");
    expect(caught(() => writeFileAtomic(p, "theirs", { exclusive: true })).message).toMatch(/already exists; it was left untouched/);
    expect(readFileSync(p, "utf8")).toBe("mine");
    const dangling = join(dir, "dangling.txt");
    symlinkSync(join(dir, "nowhere.txt"), dangling);
    expect(() => writeFileAtomic(dangling, "x", { exclusive: true })).toThrow(/already exists/);
    expect(readlinkSync(dangling)).toBe(join(dir, "nowhere.txt"));
    expect(temps()).toEqual([]);
  });
});
