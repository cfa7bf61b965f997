/** Where the package lives on disk, and what it is called there. */
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { packageRoot } from "../io/package-root.js";

/** The package root (lib/io/package-root.ts), found once when the runner loads. */
const root = packageRoot();

/** The project-local Jupyter data folder holding the tslab kernel spec (see lib/setup/prepare.mjs). */
export const kernelDataDir = join(root, ".kernel", "share", "jupyter");
export const kernelName = "tslab";
export const templatesDir = join(root, "notebooks-templates");
/** Staging area for runs: inside the package, so `import ... from "pinchoff"` resolves. */
export const stagingRoot = join(root, ".pinchoff-run");

let version: string | undefined;
export function toolVersion(): string {
  if (version === undefined) {
    const pkg = JSON.parse(readFileSync(join(root, "package.json"), "utf8")) as { name?: string; version?: string };
    version = `${pkg.name ?? "pinchoff"} ${pkg.version ?? "unknown"}`;
  }
  return version;
}
