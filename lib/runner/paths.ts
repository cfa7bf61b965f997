/** Where the package lives on disk, and what it is called there. */
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { fileURLToPath } from "node:url";

/** The package root: lib/runner/*.ts and dist/runner/*.js both sit two levels below it. */
export const packageRoot = fileURLToPath(new URL("../../", import.meta.url)).replace(/[\\/]$/, "");

/** The project-local Jupyter data folder holding the tslab kernel spec (see lib/setup/prepare.mjs). */
export const kernelDataDir = join(packageRoot, ".kernel", "share", "jupyter");
export const kernelName = "tslab";
export const templatesDir = join(packageRoot, "notebooks-templates");
/** Staging area for runs: inside the package, so `import ... from "pinchoff"` resolves. */
export const stagingRoot = join(packageRoot, ".pinchoff-run");

let version: string | undefined;
export function toolVersion(): string {
  if (version === undefined) {
    const pkg = JSON.parse(readFileSync(join(packageRoot, "package.json"), "utf8")) as { name?: string; version?: string };
    version = `${pkg.name ?? "pinchoff"} ${pkg.version ?? "unknown"}`;
  }
  return version;
}
