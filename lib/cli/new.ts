/** pinchoff new: copy a template notebook to a path, never over a file without --force. */
import { existsSync, lstatSync, mkdirSync, readFileSync, statSync, type Stats } from "node:fs";
import { dirname, resolve } from "node:path";
import { PinchoffError } from "../errors.js";
import { findTemplate, type Template } from "../templates.js";
import { defineCommand, type CommandSpec } from "./args.js";
import { errnoOf, writeFileAtomic, type FileSystemSeam } from "../io/atomic-write.js";

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

/**
 * Copy template `name` to `path` (a file, or a folder to put `<name>.ipynb` in);
 * never replaces anything unless `force`. With `force` a symbolic link at the
 * destination is itself replaced (rename over the link), never its target.
 */
export function newNotebook(name: string, path: string, force: boolean, dir?: string, fs?: FileSystemSeam): { dest: string; template: Template } {
  const t = findTemplate(name, dir);
  let dest = resolve(path);
  if (existsSync(dest) && statSync(dest).isDirectory()) dest = resolve(dest, `${t.name}.ipynb`);
  let st: Stats | undefined;
  try {
    st = lstatSync(dest);
  } catch {
    /* nothing there */
  }
  if (st && !force) throw new PinchoffError("io", "already exists; it was left untouched (use --force to replace it)", dest);
  if (st && !st.isFile() && !st.isSymbolicLink()) throw new PinchoffError("io", "exists and is not a file", dest);
  const content = readFileSync(t.path);
  try {
    mkdirSync(dirname(dest), { recursive: true });
  } catch (e) {
    throw new PinchoffError("io", `cannot create the folder (${errnoOf(e)})`, dirname(dest));
  }
  // Without --force the file is linked into place, which fails if the name appeared meanwhile.
  writeFileAtomic(dest, content, { exclusive: !force, ...(fs ? { fs } : {}) });
  return { dest, template: t };
}
