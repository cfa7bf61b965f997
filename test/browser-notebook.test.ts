/**
 * The Jupyter Notebook UI (Debian jupyter-notebook, classic Notebook 6) in
 * headless Chromium: open a template, run all cells from the Cell menu, and see
 * its plots drawn inside the page, with outside network access refused. Then
 * re-run the first plot cell (which carries the plotting library) and see the
 * plots still drawn.
 */
import { execFileSync } from "node:child_process";
import { copyFileSync, mkdtempSync, rmSync, symlinkSync } from "node:fs";
import { tmpdir } from "node:os";
import { join, resolve } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { openBrowser, startNotebookServer, type BrowserSession, type NotebookServer } from "./support/browser.js";

const root = resolve(import.meta.dirname, "..");
const name = "cs-four-resistor-nmos.ipynb";

let work: string;
let server: NotebookServer | undefined;
let browser: BrowserSession | undefined;

beforeAll(async () => {
  execFileSync(process.execPath, [join(root, "lib/setup/prepare.mjs"), "build", "kernel"], { cwd: root, stdio: "pipe" });
  work = mkdtempSync(join(tmpdir(), "pinchoff-notebook-ui-"));
  copyFileSync(join(root, "notebooks-templates", name), join(work, name));
  // The kernel resolves "pinchoff" from the notebook's folder, as in a user's project with pinchoff installed.
  symlinkSync(join(root, "node_modules"), join(work, "node_modules"), "dir");
  server = await startNotebookServer(work, join(root, ".kernel/share/jupyter"));
  browser = await openBrowser();
}, 300_000);

afterAll(async () => {
  await browser?.close();
  await server?.stop();
  if (work) rmSync(work, { recursive: true, force: true });
});

const drawn = () => browser!.page.$$eval(".output_area .pinchoff-plot-area[data-drawn]", (els) => els.filter((e) => e.querySelector(".main-svg .scatterlayer .trace path")).length);

describe("Jupyter Notebook UI", () => {
  it("runs a template's cells and shows its plots", async () => {
    const page = browser!.page;
    await page.goto(`${server!.url}/notebooks/${name}?token=${server!.token}`, { waitUntil: "load", timeout: 60_000 });
    await page.waitForSelector("#kernel_indicator_icon.kernel_idle_icon", { timeout: 90_000 });
    await page.click("#celllink");
    await page.click("#run_all_cells");
    // Plotly stacks several .main-svg layers per plot: count plot boxes that hold one.
    await page.waitForFunction(() => [...document.querySelectorAll(".output_area .pinchoff-plot-area[data-drawn]")].filter((e) => e.querySelector(".main-svg")).length >= 4, undefined, { timeout: 240_000 });
    // Wait until no cell is still queued or running (prompt "In [*]").
    await page.waitForFunction(
      () => [...document.querySelectorAll(".code_cell .input_prompt")].every((p) => !(p.textContent ?? "").includes("*")) && !!document.querySelector("#kernel_indicator_icon.kernel_idle_icon"),
      undefined,
      { timeout: 240_000 },
    );
    // The Bode plot of the frequency section, then the output, transfer and gm plots.
    expect(await drawn()).toBe(4);
    expect(await page.$$eval(".output_error, .output_stderr", (e) => e.map((x) => x.textContent))).toEqual([]);
    // The derivation and the summary table are there too.
    expect(await page.$$eval(".output_area table", (e) => e.length)).toBeGreaterThan(0);
    expect(await page.$$eval(".output_area .pinchoff-plot-note", (e) => e.filter((n) => (n as HTMLElement).style.display !== "none").length)).toBe(0);
    expect(browser!.refused).toEqual([]);
  }, 400_000);

  it("keeps the plots drawn when the cell carrying the library runs again", async () => {
    const page = browser!.page;
    const index = await page.evaluate(() => {
      const cells = (window as unknown as { Jupyter: { notebook: { get_cells(): Array<{ get_text(): string }> } } }).Jupyter.notebook.get_cells();
      return cells.findIndex((c) => c.get_text().includes('library: "always"'));
    });
    expect(index).toBeGreaterThan(0);
    await page.evaluate((i) => {
      const nb = (window as unknown as { Jupyter: { notebook: { execute_cells(ix: number[]): void } } }).Jupyter.notebook;
      nb.execute_cells([i]);
    }, index);
    await page.waitForFunction((i) => {
      const cell = document.querySelectorAll(".cell")[i];
      return !!cell && !(cell.querySelector(".input_prompt")?.textContent ?? "").includes("*") && [...cell.querySelectorAll(".pinchoff-plot-area[data-drawn]")].filter((e) => e.querySelector(".main-svg")).length === 1;
    }, index, { timeout: 120_000 });
    // The library rides in the Bode plot's cell (the notebook's first plot); re-running it keeps all four drawn.
    expect(await drawn()).toBe(4);
    const carriers = await page.$$eval("script[data-pinchoff-plot-library]", (e) => e.length);
    expect(carriers).toBeGreaterThanOrEqual(1);
  }, 200_000);
});
