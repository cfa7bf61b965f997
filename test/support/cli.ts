/** Run a command's `main(argv)` in-process and capture what it prints. */
import { vi } from "vitest";

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
