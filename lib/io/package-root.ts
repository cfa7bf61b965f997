/**
 * The folder the package is installed in (the one holding its package.json,
 * `processes/`, `data/`, `notebooks-templates/`), found from this module's own
 * location. The build links modules into a few files (`lib/setup/build.mjs`),
 * so a module's depth below the root differs between `lib/` and `dist/`: the
 * nearest folder upwards with a package.json is the package, the same rule Node
 * uses for a module's package scope. Found once, on first use (a few `stat`s).
 * Failure: no package.json above this file → PinchoffError naming the start.
 */
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { PinchoffError } from "../errors.js";
import { nodeFs } from "./lazy-builtins.js";

const { existsSync } = nodeFs;

let root: string | undefined;

export function packageRoot(): string {
  if (root !== undefined) return root;
  const start = dirname(fileURLToPath(import.meta.url));
  for (let dir = start; ; dir = dirname(dir)) {
    if (existsSync(join(dir, "package.json"))) return (root = dir);
    if (dirname(dir) === dir) throw new PinchoffError("io", "no package.json in this folder or any above it; the pinchoff package is incomplete", start);
  }
}
