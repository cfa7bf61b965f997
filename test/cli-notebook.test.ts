// pinchoff notebook: the command line it builds (no server or browser is started), the folder it serves.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { mkdirSync, mkdtempSync, realpathSync, rmSync, symlinkSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { PinchoffError } from "../lib/errors.js";
import { main, notebookLaunch } from "../lib/cli/notebook.js";
import { templatesDir } from "../lib/runner/paths.js";

let work: string;
beforeAll(() => {
  work = realpathSync(mkdtempSync(join(tmpdir(), "pinchoff-nb-")));
});
afterAll(() => rmSync(work, { recursive: true, force: true }));

describe("pinchoff notebook", () => {
  it("serves the folder given, local only, on the port given", () => {
    const l = notebookLaunch({ jupyter: "/usr/bin/jupyter", folder: work, port: 8890, root: false });
    expect(l).toEqual({ command: "/usr/bin/jupyter", args: ["notebook", "--ip=127.0.0.1", "--port=8890", `--notebook-dir=${work}`], folder: work });
  });

  it("passes --allow-root exactly when the user is root", () => {
    expect(notebookLaunch({ jupyter: "j", folder: work, port: 8888, root: true }).args).toContain("--allow-root");
    expect(notebookLaunch({ jupyter: "j", folder: work, port: 8888, root: false }).args).not.toContain("--allow-root");
  });

  it("never serves the shipped templates: not the folder, not a folder inside it, not through a link", () => {
    const sub = join(work, "fake-templates");
    mkdirSync(join(sub, "inner"), { recursive: true });
    const link = join(work, "link-to-templates");
    symlinkSync(sub, link);
    for (const folder of [sub, join(sub, "inner"), link]) {
      expect(() => notebookLaunch({ jupyter: "j", folder, port: 8888, root: false, templates: sub })).toThrow(/shipped templates folder/);
    }
    expect(() => notebookLaunch({ jupyter: "j", folder: templatesDir, port: 8888, root: false })).toThrow(PinchoffError);
    // A folder beside the templates whose name starts the same is not inside them.
    mkdirSync(`${sub}-mine`);
    expect(notebookLaunch({ jupyter: "j", folder: `${sub}-mine`, port: 8888, root: false, templates: sub }).folder).toBe(`${sub}-mine`);
  });

  it("refuses a folder that does not exist", () => {
    expect(() => notebookLaunch({ jupyter: "j", folder: join(work, "nowhere"), port: 8888, root: false })).toThrow(/an existing folder/);
  });

  it("the command refuses the templates folder before starting anything", async () => {
    await expect(main([templatesDir])).rejects.toThrow(/shipped templates folder/);
  });
});
