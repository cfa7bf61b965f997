import { createRequire } from "node:module";
import { afterEach, describe, expect, it, vi } from "vitest";
import { device, amperesPerVoltSquared, volts, meters, type DeviceCard } from "../lib/index.js";
import { InputError } from "../lib/errors.js";
import { outputCharacteristics, plotBundle, plotHtml, plotLibraryHtml, plotMimeType, showPlot } from "../lib/plot/index.js";

// Invented card for the tests (not a real process).
const card: DeviceCard = { name: "inv-n", polarity: "nmos", kp: amperesPerVoltSquared(100e-6), vt0: volts(0.5) };
const spec = outputCharacteristics(device(card, meters(10e-6), meters(1e-6)), { gateDrives: [1, 1.5], vdsMax: 3, title: "</script><b>x</b>" });

describe("plot HTML", () => {
  it("embeds the library with no sequence that would end or confuse its <script> (HTML Living Standard, script data states)", () => {
    const lib = plotLibraryHtml();
    const body = lib.slice(lib.indexOf(">") + 1, lib.lastIndexOf("</script>"));
    expect(body).not.toMatch(/<\/script/i);
    expect(body).not.toContain("<!--");
    // the basic bundle (scatter, bar, pie): about 1.2 MB
    expect(body.length).toBeGreaterThan(1_000_000);
    // Shadowing AMD/CommonJS names makes the bundle set window.Plotly even under RequireJS (the classic Notebook page).
    expect(lib).toContain("(function (define, module, exports)");
    expect(lib).toContain("if (!window.Plotly)");
    expect(lib).not.toMatch(/src\s*=\s*["']https?:/);
  });

  it("refuses a trace type the embedded basic bundle cannot draw, naming the plot (an empty box would hide it)", () => {
    const heat = { ...spec, figure: { ...spec.figure, data: [...(spec.figure.data as object[]), { type: "heatmap", z: [[1]] }] } };
    expect(() => plotHtml(heat)).toThrow(InputError);
    expect(() => plotBundle(heat as never, false)).toThrow(/trace type/);
    expect(plotHtml(spec)).toContain("newPlot");
  });

  it("escapes user text in the figure and in the caption", () => {
    const html = plotHtml(spec);
    const scripts = [...html.matchAll(/<script>([\s\S]*?)<\/script>/g)];
    expect(scripts).toHaveLength(1);
    expect(scripts[0]![1]).toContain("\\u003c/script>\\u003cb>");
    expect(html).toContain("&lt;/script&gt;&lt;b&gt;x&lt;/b&gt;");
    expect(html).not.toContain("<b>x</b>");
  });

  it("refuses a layout height that is not a finite number of px in range (it goes into a style attribute)", () => {
    const crafted = '1px"><img src=x onerror=alert(1)><div style="';
    for (const height of [crafted, "300", Number.NaN, Number.POSITIVE_INFINITY, -5, 1e9]) {
      const bad = { ...spec, figure: { ...spec.figure, layout: { ...spec.figure.layout, height: height as number } } };
      expect(() => plotHtml(bad)).toThrow(InputError);
      expect(() => plotBundle(bad, false)).toThrow(/layout\.height of plot/);
    }
    expect(() => plotHtml(spec, { height: Number.NaN })).toThrow(InputError);
    expect(plotHtml({ ...spec, figure: { ...spec.figure, layout: { ...spec.figure.layout, height: 333 } } })).toContain("height:333px");
  });

  it("gives every plot its own element id", () => {
    const ids = [plotHtml(spec), plotHtml(spec)].map((h) => /id="([^"]+)"/.exec(h)![1]);
    expect(ids[0]).not.toBe(ids[1]);
  });
});

describe("notebook output", () => {
  const req = createRequire(import.meta.url);
  const jupyter = req("tslab/dist/jupyter.js") as { lastWriteDisplayData: unknown };
  afterEach(() => {
    jupyter.lastWriteDisplayData = null;
  });

  it("sends one bundle with our JSON type, HTML and text", () => {
    const b = plotBundle(spec, false);
    expect(Object.keys(b).sort()).toEqual([plotMimeType, "text/html", "text/plain"].sort());
    expect(b[plotMimeType]).toBe(spec);
    expect(b["text/plain"]).toBe(spec.summary);
  });

  it("carries the library in the first plot of a kernel session only, unless told", () => {
    const sent: Array<Record<string, unknown>> = [];
    jupyter.lastWriteDisplayData = (c: { data: Record<string, unknown> }) => sent.push(c.data);
    const key = Symbol.for("pinchoff.plot.librarySent");
    delete (globalThis as unknown as Record<symbol, unknown>)[key];
    showPlot(spec);
    showPlot(spec);
    showPlot(spec, { library: "always" });
    showPlot(spec, { library: "never" });
    const carries = sent.map((d) => String(d["text/html"]).includes("data-pinchoff-plot-library"));
    expect(carries).toEqual([true, false, true, false]);
  });

  it("prints the summary outside a kernel", () => {
    const log = vi.spyOn(console, "log").mockImplementation(() => {});
    showPlot(spec);
    expect(log).toHaveBeenCalledWith(spec.summary);
    log.mockRestore();
  });
});
