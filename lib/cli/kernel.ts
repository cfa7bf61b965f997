/** pinchoff kernel: register the tslab TypeScript kernel for Jupyter. */
import { spawnSync } from "node:child_process";
import { join } from "node:path";
import { PinchoffError } from "../errors.js";
import { findJupyter } from "../runner/execute.js";
import { packageRoot } from "../io/package-root.js";
import { kernelDataDir } from "../runner/paths.js";
import { defineCommand, type CommandSpec } from "./args.js";

export const command = {
  name: "kernel",
  positionals: [],
  options: { user: { kind: "flag", help: "register it in your own Jupyter instead (jupyter kernelspec list shows it)" } },
  description: `Registers the tslab TypeScript kernel. By default it goes into the package's
own .kernel/ folder, which pinchoff run and pinchoff notebook use, and
node_modules/pinchoff is linked so cells can import "pinchoff".`,
} as const satisfies CommandSpec;

export const main = defineCommand(command, async ({ values }) => {
  if (!values.user) {
    const r = spawnSync(process.execPath, [join(packageRoot(), "lib/setup/prepare.mjs"), "kernel"], { stdio: "inherit", cwd: packageRoot() });
    if (r.status !== 0) throw new PinchoffError("io", `kernel registration failed (exit ${r.status})`, "kernel");
    console.log(`tslab kernel registered in ${kernelDataDir} (use JUPYTER_PATH=${kernelDataDir} with your own Jupyter commands)`);
    return 0;
  }
  const { python } = findJupyter();
  const tslab = join(packageRoot(), "node_modules/.bin/tslab");
  const r = spawnSync(tslab, ["install", `--python=${python}`, `--binary=${tslab}`], { stdio: "inherit" });
  if (r.error || r.status !== 0) throw new PinchoffError("io", `tslab install failed (${r.error?.message ?? `exit ${r.status}`})`, tslab);
  console.log(`tslab kernel registered in your own Jupyter, running ${tslab} on ${python}; cells import "pinchoff" from a project where it is installed`);
  return 0;
});
