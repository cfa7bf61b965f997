/**
 * Child-process timing for start-up and import cases: the wall time of a whole
 * `node` run, and any JSON line the child prints.
 */
import { spawnSync } from "node:child_process";

export interface ChildRun {
  readonly ms: number;
  /** The last line of stdout parsed as JSON, when the child printed one. */
  readonly report?: Record<string, number>;
}

export function timeNode(args: readonly string[], cwd: string): ChildRun {
  const t0 = performance.now();
  const r = spawnSync(process.execPath, args, { cwd, encoding: "utf8" });
  const ms = performance.now() - t0;
  if (r.status !== 0) throw new Error(`bench: node ${args.join(" ").slice(0, 200)} exited ${r.status}: ${r.stderr.slice(0, 2000)}`);
  const last = r.stdout.trim().split("\n").at(-1);
  return { ms, ...(last && last.startsWith("{") ? { report: JSON.parse(last) as Record<string, number> } : {}) };
}

/** `node --input-type=module -e SCRIPT`: an ES module script, as `import` users run it. */
export const esmScript = (script: string) => ["--input-type=module", "-e", script];
