/**
 * The template index: every notebook in notebooks-templates/ is a template,
 * named by its file name without `.ipynb`. Its one-line description is
 * `metadata.pinchoff.description` when present, else the first heading (or
 * first line) of its first markdown cell. `metadata.pinchoff.kind` says what
 * it makes: a stage design (the default) or a device characterisation
 * ("characterisation": measured data in, a fitted card out).
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
  /** What the template makes: a stage design, or a fitted device card from measurements. */
  readonly kind: TemplateKind;
}

export const templateKinds = ["stage", "characterisation"] as const;
export type TemplateKind = (typeof templateKinds)[number];

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
    const meta = nb.metadata.pinchoff as { demo?: unknown; kind?: unknown } | undefined;
    const demo = meta?.demo === true;
    if (meta?.kind !== undefined && !(templateKinds as readonly unknown[]).includes(meta.kind))
      throw new PinchoffError("invalid-design", `metadata.pinchoff.kind is ${JSON.stringify(meta.kind)}; expected one of ${templateKinds.map((k) => JSON.stringify(k)).join(", ")}`, path);
    return { name: f.slice(0, -".ipynb".length), path, description: describe(nb), demo, kind: (meta?.kind as TemplateKind | undefined) ?? "stage" };
  });
}

export function findTemplate(name: string, dir = templatesDir): Template {
  const all = listTemplates(dir);
  const t = all.find((x) => x.name === name);
  if (!t) throw new PinchoffError("invalid-value", `unknown template ${JSON.stringify(name)}; templates: ${all.map((x) => x.name).join(", ") || "(none installed)"}`, "template");
  return t;
}
