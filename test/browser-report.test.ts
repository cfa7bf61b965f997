/**
 * Offline rendering in headless Chromium: (1) the standalone report that
 * `pinchoff run` writes for a template draws its plots and typesets its
 * formulas with every outside request refused; (2) an nbconvert HTML export of
 * the executed notebook draws the plots our notebook outputs carry (the
 * library rides in the first plot output; nbconvert's own page template asks
 * for scripts from the network, which are refused and not needed).
 */
import { execFileSync } from "node:child_process";
import { mkdtempSync, readdirSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join, resolve } from "node:path";
import { pathToFileURL } from "node:url";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { openBrowser, type BrowserSession } from "./support/browser.js";
import { device, amperesPerVoltSquared, volts, meters, type DeviceCard } from "../lib/index.js";
import { outputCharacteristics, plotHtml, plotLibraryHtml } from "../lib/plot/index.js";

const root = resolve(import.meta.dirname, "..");
const template = join(root, "notebooks-templates", "cs-four-resistor-nmos.ipynb");

let out: string;
let browser: BrowserSession;

beforeAll(async () => {
  execFileSync(process.execPath, [join(root, "lib/setup/prepare.mjs"), "build", "kernel"], { cwd: root, stdio: "pipe" });
  out = mkdtempSync(join(tmpdir(), "pinchoff-browser-report-"));
  // Exit status 0: every cell ran and every check passed.
  execFileSync(process.execPath, [join(root, "dist/cli/main.js"), "run", template, "--out", out], { cwd: root, stdio: "pipe", timeout: 400_000 });
  browser = await openBrowser();
}, 600_000);

afterAll(async () => {
  await browser?.close();
  if (out) rmSync(out, { recursive: true, force: true });
});

/** Plot boxes drawn by Plotly: an SVG with at least one trace path with a non-empty path. */
async function drawnPlots(sel: string) {
  return browser.page.$$eval(sel, (els) =>
    els.map((el) => ({
      svg: el.querySelectorAll(".main-svg").length,
      traces: el.querySelectorAll(".scatterlayer .trace").length,
      paths: [...el.querySelectorAll(".scatterlayer .trace path")].filter((p) => (p.getAttribute("d") ?? "").length > 10).length,
      title: el.querySelector(".gtitle")?.textContent ?? "",
    })),
  );
}

describe("offline pages in headless Chromium", () => {
  it("the pinchoff run report draws its plots and typesets its formulas with no network", async () => {
    const report = readdirSync(out).find((f) => f === "report.html");
    expect(report).toBeDefined();
    browser.refused.length = 0;
    browser.errors.length = 0;
    await browser.page.goto(pathToFileURL(join(out, report!)).href, { waitUntil: "load", timeout: 120_000 });
    // The results box opens the page with the demo's marked summary table; the spread and the deck follow.
    expect(await browser.page.$$eval('.results table[data-part="summary"] tr', (r) => r.length)).toBeGreaterThan(5);
    expect(await browser.page.$$eval('table[data-part="corner-spread"]', (t) => t.length)).toBe(1);
    expect(await browser.page.$eval('pre[data-part="spice-deck"]', (p) => p.textContent ?? "")).toMatch(/^\.end$/m);
    // Plotly stacks several .main-svg layers per plot: count plot boxes that hold one.
    await browser.page.waitForFunction(() => [...document.querySelectorAll(".js-plotly-plot")].filter((e) => e.querySelector(".main-svg")).length >= 3, undefined, { timeout: 60_000 });
    const plots = await drawnPlots(".js-plotly-plot");
    expect(plots.length).toBeGreaterThanOrEqual(3);
    for (const p of plots) {
      expect(p.svg).toBeGreaterThan(0);
      expect(p.traces).toBeGreaterThan(0);
      expect(p.paths).toBeGreaterThan(0);
    }
    expect(plots.map((p) => p.title).join("|")).toMatch(/Output characteristics/);
    const math = await browser.page.$$eval(".katex", (els) => els.filter((e) => e.querySelector(".katex-html") && e.getBoundingClientRect().width > 0).length);
    expect(math).toBeGreaterThan(10);
    expect(await browser.page.$$eval(".katex-error", (e) => e.length)).toBe(0);
    expect(browser.refused).toEqual([]);
    expect(browser.errors).toEqual([]);
  }, 120_000);

  it("an nbconvert HTML export of the executed notebook draws every plot output", async () => {
    const executed = readdirSync(out).find((f) => f === "notebook-as-run.ipynb")!;
    execFileSync("jupyter", ["nbconvert", "--to", "html", join(out, executed), "--output-dir", out, "--output", "export"], { cwd: out, stdio: "pipe", timeout: 120_000 });
    browser.refused.length = 0;
    browser.errors.length = 0;
    await browser.page.goto(pathToFileURL(join(out, "export.html")).href, { waitUntil: "load", timeout: 120_000 });
    const boxes = await browser.page.$$eval(".pinchoff-plot-area", (e) => e.length);
    expect(boxes).toBe(4); // the demo draws four plots: the Bode plot, output and transfer characteristics, gm and gm/ID
    await browser.page.waitForFunction((n) => [...document.querySelectorAll(".pinchoff-plot-area[data-drawn]")].filter((e) => e.querySelector(".main-svg")).length >= n, boxes, { timeout: 60_000 });
    const plots = await drawnPlots(".pinchoff-plot-area");
    for (const p of plots) expect(p.paths).toBeGreaterThan(0);
    // The "library missing" notes are hidden once each plot is drawn.
    const notes = await browser.page.$$eval(".pinchoff-plot-note", (els) => els.filter((e) => (e as HTMLElement).style.display !== "none").length);
    expect(notes).toBe(0);
    // Anything refused came from nbconvert's page template (RequireJS, MathJax), never from our outputs.
    for (const url of browser.refused) expect(url).not.toMatch(/plotly/i);
    expect(browser.errors.filter((e) => /Plotly|pinchoff/i.test(e))).toEqual([]);
  }, 120_000);

  it("a plot placed above the library in a page waits for it, and says so when the library never comes", async () => {
    // Invented card for the test (not a real part).
    const card: DeviceCard = { name: "inv-n", polarity: "nmos", kp: amperesPerVoltSquared(100e-6), vt0: volts(0.5) };
    const spec = outputCharacteristics(device(card, meters(10e-6), meters(1e-6)), { gateDrives: [1, 1.5], vdsMax: 3 });
    const page = (body: string) => `<!doctype html><html><head><meta charset="utf-8"></head><body>${body}</body></html>`;
    writeFileSync(join(out, "late-library.html"), page(plotHtml(spec) + "<p>text between</p>" + plotHtml(spec, { library: true })));
    writeFileSync(join(out, "no-library.html"), page(plotHtml(spec)));
    browser.refused.length = 0;
    browser.errors.length = 0;
    await browser.page.goto(pathToFileURL(join(out, "late-library.html")).href, { waitUntil: "load", timeout: 120_000 });
    await browser.page.waitForFunction(() => [...document.querySelectorAll(".pinchoff-plot-area[data-drawn]")].filter((e) => e.querySelector(".main-svg")).length === 2, undefined, { timeout: 60_000 });
    expect(browser.errors).toEqual([]);
    await browser.page.goto(pathToFileURL(join(out, "no-library.html")).href, { waitUntil: "load", timeout: 120_000 });
    await browser.page.waitForTimeout(500);
    expect(await browser.page.$$eval(".pinchoff-plot-area .main-svg", (e) => e.length)).toBe(0);
    const note = await browser.page.$eval(".pinchoff-plot-note", (e) => ({ shown: (e as HTMLElement).style.display !== "none", text: e.textContent ?? "" }));
    expect(note.shown).toBe(true);
    expect(note.text).toMatch(/run the notebook again from the top/);
    expect(browser.refused).toEqual([]);
  }, 120_000);
});
