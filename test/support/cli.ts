/** Run a command's `main(argv)` in-process and capture what it prints. */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, vi } from "vitest";

export async function captureCli(main: (argv: string[]) => Promise<number>, argv: string[]): Promise<{ code: number; out: string; err: string }> {
  const out: string[] = [];
  const err: string[] = [];
  const log = vi.spyOn(console, "log").mockImplementation((s: unknown) => void out.push(String(s)));
  const error = vi.spyOn(console, "error").mockImplementation((s: unknown) => void err.push(String(s)));
  try {
    return { code: await main(argv), out: out.join("\n"), err: err.join("\n") };
  } finally {
    log.mockRestore();
    error.mockRestore();
  }
}

/** A temporary folder for design files, made before and removed after the calling file's tests; `write` puts one JSON file there and returns its path. */
export function designFolder(prefix: string): { write: (name: string, value: unknown) => string; path: (name: string) => string } {
  let dir = "";
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), prefix));
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const path = (name: string) => join(dir, name);
  return {
    path,
    write: (name, value) => {
      writeFileSync(path(name), JSON.stringify(value));
      return path(name);
    },
  };
}
