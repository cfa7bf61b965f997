/** pinchoff new: copy a template notebook to a path, never over a file without --force. */
import { copyFileSync, constants as fsc, existsSync, mkdirSync, statSync } from "node:fs";
import { dirname, resolve } from "node:path";
import { PinchoffError } from "../errors.js";
import { findTemplate, type Template } from "../templates.js";
import { defineCommand, type CommandSpec } from "./args.js";

export const command = {
  name: "new",
  positionals: [{ name: "template" }, { name: "path.ipynb" }],
  options: { force: { kind: "flag", help: "replace an existing file at <path.ipynb>" } },
  description: `Copies a template notebook to <path.ipynb> (or into it, when it is a
folder). An existing file is never replaced unless --force is given.
pinchoff list shows the templates.`,
} as const satisfies CommandSpec;

export const main = defineCommand(command, async ({ values, positionals }) => {
  const { dest, template } = newNotebook(positionals[0]!, positionals[1]!, values.force === true);
  console.log(`created ${dest} from template ${template.name}: ${template.description}`);
  return 0;
});

/** Copy template `name` to `path` (a file, or a folder to put `<name>.ipynb` in); never replaces a file unless `force`. */
export function newNotebook(name: string, path: string, force: boolean, dir?: string): { dest: string; template: Template } {
  const t = findTemplate(name, dir);
  let dest = resolve(path);
  if (existsSync(dest) && statSync(dest).isDirectory()) dest = resolve(dest, `${t.name}.ipynb`);
  if (existsSync(dest) && !force) throw new PinchoffError("io", "already exists; it was left untouched (use --force to replace it)", dest);
  if (existsSync(dest) && !statSync(dest).isFile()) throw new PinchoffError("io", "exists and is not a file", dest);
  try {
    mkdirSync(dirname(dest), { recursive: true });
    // COPYFILE_EXCL makes the no-overwrite promise hold even if the file appears meanwhile.
    copyFileSync(t.path, dest, force ? 0 : fsc.COPYFILE_EXCL);
  } catch (e) {
    throw new PinchoffError("io", `cannot write the notebook (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`, dest);
  }
  return { dest, template: t };
}
