/**
 * The template index: every notebook in notebooks-templates/ is a template,
 * named by its file name without `.ipynb`. Its one-line description is
 * `metadata.pinchoff.description` when present, else the first heading (or
 * first line) of its first markdown cell.
 */
import { readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { PinchoffError } from "./errors.js";
import { cellSource, parseNotebook } from "./runner/notebook-file.js";
import { templatesDir } from "./runner/paths.js";

export interface Template {
  readonly name: string;
  readonly path: string;
  readonly description: string;
  /** Flagged `metadata.pinchoff.demo`: the one `npm run demo` runs. */
  readonly demo: boolean;
}

export function describeNotebook(text: string, origin: string): string {
  return describe(parseNotebook(text, origin));
}

function describe(nb: ReturnType<typeof parseNotebook>): string {
  const meta = (nb.metadata.pinchoff as { description?: unknown } | undefined)?.description;
  if (typeof meta === "string" && meta.trim()) return meta.trim().split("\n")[0]!;
  const md = nb.cells.find((c) => c.cell_type === "markdown");
  const line = md ? cellSource(md).split("\n").map((l) => l.replace(/^\s*#+\s*/, "").trim()).find((l) => l) : undefined;
  return line ?? "(no description)";
}

export function listTemplates(dir = templatesDir): Template[] {
  let files: string[];
  try {
    files = readdirSync(dir).filter((f) => f.endsWith(".ipynb")).sort();
  } catch (e) {
    throw new PinchoffError("io", `cannot read the templates folder (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`, dir);
  }
  return files.map((f) => {
    const path = join(dir, f);
    const nb = parseNotebook(readFileSync(path, "utf8"), path);
    const demo = (nb.metadata.pinchoff as { demo?: unknown } | undefined)?.demo === true;
    return { name: f.slice(0, -".ipynb".length), path, description: describe(nb), demo };
  });
}

export function findTemplate(name: string, dir = templatesDir): Template {
  const all = listTemplates(dir);
  const t = all.find((x) => x.name === name);
  if (!t) throw new PinchoffError("invalid-value", `unknown template ${JSON.stringify(name)}; templates: ${all.map((x) => x.name).join(", ") || "(none installed)"}`, "template");
  return t;
}
