/** pinchoff notebook: the Jupyter Notebook UI on the templates, local only. */
import { spawn } from "node:child_process";
import { InputError, PinchoffError } from "../errors.js";
import { findJupyter, jupyterEnv, requireKernel } from "../runner/execute.js";
import { templatesDir } from "../runner/paths.js";
import { defineCommand, type CommandSpec } from "./args.js";

export const command = {
  name: "notebook",
  positionals: [],
  options: { port: { kind: "value", placeholder: "N", help: "TCP port on 127.0.0.1 (default 8888)" } },
  description: `Opens the Jupyter Notebook UI (Debian package jupyter-notebook) on the
template notebooks, bound to 127.0.0.1 only, with the project's TypeScript
kernel. Copy a template with pinchoff new before editing it for a design.`,
} as const satisfies CommandSpec;

export const main = defineCommand(command, async ({ values }) => {
  const port = values.port === undefined ? 8888 : Number(values.port);
  if (!Number.isInteger(port) || port < 1 || port > 65535) throw new InputError(values.port, "a TCP port number 1 to 65535", "--port");
  const { jupyter } = findJupyter();
  requireKernel();
  console.log(`starting Jupyter Notebook on http://127.0.0.1:${port}/ in ${templatesDir} (Ctrl-C stops it)`);
  const child = spawn(jupyter, ["notebook", "--ip=127.0.0.1", `--port=${port}`, `--notebook-dir=${templatesDir}`], { stdio: "inherit", env: jupyterEnv() });
  return await new Promise<number>((resolve, reject) => {
    child.on("error", (e) => reject(new PinchoffError("io", `cannot start ${jupyter} notebook (${e.message}); install the Debian package jupyter-notebook`)));
    child.on("close", (code) => resolve(code ?? 1));
  });
});
