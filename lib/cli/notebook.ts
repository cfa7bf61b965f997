/**
 * pinchoff notebook [FOLDER] [--port N]: the Jupyter Notebook UI on a working
 * folder (the current directory, or FOLDER), local only. Never on the shipped
 * templates: autosaves there would change them for every later design. Runs
 * as root only when the user is root (Jupyter refuses root without
 * --allow-root).
 */
import { spawn } from "node:child_process";
import { existsSync, realpathSync, statSync } from "node:fs";
import { relative, resolve, isAbsolute } from "node:path";
import { InputError, PinchoffError } from "../errors.js";
import { findJupyter, jupyterEnv, requireKernel } from "../runner/execute.js";
import { templatesDir } from "../runner/paths.js";
import { defineCommand, type CommandSpec } from "./args.js";

export const command = {
  name: "notebook",
  positionals: [{ name: "FOLDER", optional: true }],
  options: { port: { kind: "value", placeholder: "N", help: "TCP port on 127.0.0.1 (default 8888)" } },
  description: `Opens the Jupyter Notebook UI (Debian package jupyter-notebook) on FOLDER
(default: the current directory), bound to 127.0.0.1 only, with the project's
TypeScript kernel. The shipped templates are never served: copy one into your
folder with pinchoff new <template> <path> and open that.`,
} as const satisfies CommandSpec;

export interface NotebookLaunch {
  readonly command: string;
  readonly args: readonly string[];
  readonly folder: string;
}

const inside = (child: string, parent: string) => {
  const r = relative(parent, child);
  return r === "" || (!r.startsWith("..") && !isAbsolute(r));
};

/** The Jupyter command line for a folder; refuses the templates folder (or anything inside it) and a folder that does not exist. */
export function notebookLaunch(opts: { readonly jupyter: string; readonly folder: string; readonly port: number; readonly root: boolean; readonly templates?: string }): NotebookLaunch {
  const folder = resolve(opts.folder);
  if (!existsSync(folder) || !statSync(folder).isDirectory()) throw new InputError(opts.folder, "an existing folder to work in", "pinchoff notebook");
  const real = realpathSync(folder);
  const templates = opts.templates ?? templatesDir;
  const shipped = existsSync(templates) ? realpathSync(templates) : resolve(templates);
  if (inside(real, shipped))
    throw new PinchoffError("io", `this is the shipped templates folder; its notebooks must stay as shipped (autosave would change them). Copy one to a folder of your own with pinchoff new <template> <path>, then run pinchoff notebook there`, folder);
  const args = ["notebook", "--ip=127.0.0.1", `--port=${opts.port}`, `--notebook-dir=${real}`];
  if (opts.root) args.push("--allow-root");
  return { command: opts.jupyter, args, folder: real };
}

export const main = defineCommand(command, async ({ values, positionals }) => {
  const port = values.port === undefined ? 8888 : Number(values.port);
  if (!Number.isInteger(port) || port < 1 || port > 65535) throw new InputError(values.port, "a TCP port number 1 to 65535", "--port");
  const { jupyter } = findJupyter();
  requireKernel();
  const launch = notebookLaunch({ jupyter, folder: positionals[0] ?? process.cwd(), port, root: process.getuid?.() === 0 });
  console.log(`starting Jupyter Notebook on http://127.0.0.1:${port}/ in ${launch.folder} (open the address Jupyter prints; Ctrl-C stops it)`);
  const child = spawn(launch.command, [...launch.args], { stdio: "inherit", env: jupyterEnv() });
  return await new Promise<number>((done, fail) => {
    child.on("error", (e) => fail(new PinchoffError("io", `cannot start ${jupyter} notebook (${e.message}); install the Debian package jupyter-notebook`)));
    child.on("close", (code) => done(code ?? 1));
  });
});
