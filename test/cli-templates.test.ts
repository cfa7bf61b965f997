// pinchoff new and list: copying templates without ever replacing a user's file.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { lstatSync, mkdtempSync, readFileSync, readlinkSync, readdirSync, rmSync, symlinkSync, writeFileSync, mkdirSync } from "node:fs";
import { nodeFileSystem, type FileSystemSeam } from "../lib/io/atomic-write.js";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { PinchoffError } from "../lib/errors.js";
import { newNotebook } from "../lib/cli/new.js";
import { describeNotebook, findTemplate, listTemplates } from "../lib/templates.js";
import { demoTemplate } from "../lib/cli/demo.js";

let dir: string;
let templates: string;
const nb = (meta: object, cells: object[]) => JSON.stringify({ nbformat: 4, nbformat_minor: 5, metadata: meta, cells });

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "pinchoff-cli-"));
  templates = join(dir, "templates");
  mkdirSync(templates);
  writeFileSync(join(templates, "alpha.ipynb"), nb({ pinchoff: { description: "Alpha from metadata" } }, []));
  writeFileSync(join(templates, "beta.ipynb"), nb({}, [{ cell_type: "markdown", metadata: {}, source: ["\n", "## Beta from the heading\n", "more text"] }]));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("template index", () => {
  it("names templates by file and describes them from metadata, else the first markdown line", () => {
    expect(listTemplates(templates).map((t) => [t.name, t.description])).toEqual([
      ["alpha", "Alpha from metadata"],
      ["beta", "Beta from the heading"],
    ]);
    expect(describeNotebook(nb({}, []), "x")).toBe("(no description)");
  });

  it("the demo is the one template flagged metadata.pinchoff.demo", () => {
    expect(demoTemplate().name).toBe("cs-four-resistor-nmos");
    expect(() => demoTemplate(listTemplates(templates))).toThrow(/exactly one template with metadata\.pinchoff\.demo = true .* found 0/);
  });

  it("an unknown template names the known ones", () => {
    expect(() => findTemplate("gamma", templates)).toThrow(/unknown template "gamma"; templates: alpha, beta/);
  });

  it("every installed template has a description and a design-inputs cell", () => {
    for (const t of listTemplates()) {
      expect(t.description).not.toBe("(no description)");
      expect(readFileSync(t.path, "utf8")).toContain('"design-inputs"');
    }
  });

  it("says what each installed template makes: the stage templates and the device characterisation", () => {
    const kinds = Object.fromEntries(listTemplates().map((t) => [t.name, t.kind]));
    expect(kinds["device-characterisation-gf180-nmos"]).toBe("characterisation");
    expect(kinds["cs-four-resistor-nmos"]).toBe("stage");
  });
});

describe("pinchoff new", () => {
  it("copies a template, and refuses to replace an existing file unless --force", () => {
    const dest = join(dir, "mine.ipynb");
    newNotebook("alpha", dest, false, templates);
    expect(readFileSync(dest, "utf8")).toBe(readFileSync(join(templates, "alpha.ipynb"), "utf8"));
    writeFileSync(dest, "my edits");
    let err: unknown;
    try {
      newNotebook("beta", dest, false, templates);
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(PinchoffError);
    expect((err as Error).message).toMatch(/already exists; it was left untouched/);
    expect(readFileSync(dest, "utf8")).toBe("my edits");
    newNotebook("beta", dest, true, templates);
    expect(readFileSync(dest, "utf8")).toBe(readFileSync(join(templates, "beta.ipynb"), "utf8"));
  });

  it("into a folder, names the copy after the template", () => {
    const r = newNotebook("alpha", dir, false, templates);
    expect(r.dest).toBe(join(dir, "alpha.ipynb"));
  });

  it("--force onto a symbolic link replaces the link itself, never the file it points to", () => {
    const target = join(dir, "someone-elses.ipynb");
    writeFileSync(target, "not mine to change");
    const link = join(dir, "link.ipynb");
    symlinkSync(target, link);
    expect(() => newNotebook("alpha", link, false, templates)).toThrow(/already exists; it was left untouched/);
    newNotebook("alpha", link, true, templates);
    expect(readFileSync(target, "utf8")).toBe("not mine to change");
    expect(lstatSync(link).isSymbolicLink()).toBe(false);
    expect(readFileSync(link, "utf8")).toBe(readFileSync(join(templates, "alpha.ipynb"), "utf8"));
  });

  it("a dangling link is an existing name: refused without --force, and nothing is created at its target", () => {
    const link = join(dir, "dangling.ipynb");
    const target = join(dir, "nowhere.ipynb");
    symlinkSync(target, link);
    expect(() => newNotebook("alpha", link, false, templates)).toThrow(/already exists/);
    expect(readlinkSync(link)).toBe(target);
    expect(() => lstatSync(target)).toThrow();
  });

  it("a full disk while copying leaves the existing file intact and no temporary behind", () => {
    const dest = join(dir, "full.ipynb");
    writeFileSync(dest, "earlier design");
    const full: FileSystemSeam = { ...nodeFileSystem, writeSync: () => { throw Object.assign(new Error("no space left on device"), { code: "ENOSPC" }); } };
    expect(() => newNotebook("alpha", dest, true, templates, full)).toThrow(/cannot write \(ENOSPC\)/);
    expect(readFileSync(dest, "utf8")).toBe("earlier design");
    expect(readdirSync(dir).filter((f) => f.endsWith(".tmp"))).toEqual([]);
  });

  it("an unknown template writes nothing", () => {
    const dest = join(dir, "none.ipynb");
    expect(() => newNotebook("gamma", dest, false, templates)).toThrow(/templates: alpha, beta/);
    expect(() => readFileSync(dest)).toThrow();
  });
});
