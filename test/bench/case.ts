/**
 * The shape of a benchmark case; see the comment at the top of run.ts.
 * Case files in test/bench/cases/ export `cases: BenchCase[]`.
 */
import { existsSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";

export interface BenchFigure {
  /** Unit of the figure as printed: "evals/s", "ms", "µs", "MB". */
  readonly unit: string;
  /** Which way is better, to judge the target. */
  readonly better: "higher" | "lower";
  /** Target for the median, when the project has one. */
  readonly target?: number;
  /** One line on what the figure means. */
  readonly note?: string;
}

export interface BenchRatio {
  readonly name: string;
  /** Figure names: the ratio is median(of) / median(over). */
  readonly of: string;
  readonly over: string;
  readonly better?: "higher" | "lower";
  readonly target?: number;
  readonly note?: string;
}

export interface BenchCase {
  /** Stable identifier, "area.what", used by --filter and in out/bench.json. */
  readonly id: string;
  readonly title: string;
  /** Repeats of `measure`; 7 unless told. Medians are over these. */
  readonly repeats?: number;
  /** Once before the repeats: build inputs, warm up the code under test. */
  readonly setup?: () => void | Promise<void>;
  /** One repeat: returns a value for every name in `figures`. */
  readonly measure: () => Record<string, number> | Promise<Record<string, number>>;
  readonly figures: Readonly<Record<string, BenchFigure>>;
  readonly ratios?: readonly BenchRatio[];
  /** Once after the repeats. */
  readonly teardown?: () => void | Promise<void>;
}

/** Identity helper that checks a case file's export against the shape. */
export const defineCases = (cases: readonly BenchCase[]): readonly BenchCase[] => cases;

/** The repository root, and the built numeric core (cases measure dist/, which `npm run bench` builds first). */
export const repoRoot = resolve(dirname(fileURLToPath(import.meta.url)), "../..");
export type Core = typeof import("../../lib/index.js");
export async function builtCore(): Promise<Core> {
  const file = join(repoRoot, "dist/index.js");
  if (!existsSync(file)) throw new Error("bench: dist/index.js is missing: run `npm run bench` (it builds first)");
  return (await import(pathToFileURL(file).href)) as Core;
}
