// The standalone report: escaping, assets embedded once, offline, marked overrides, cautions.
import { describe, expect, it } from "vitest";
import { buildReport, reportMarker, type ReportModel } from "../lib/report/html.js";
import { cautionList as cautions } from "../lib/record/cautions.js";
import { allChecks, collect, plotMime } from "../lib/runner/collect.js";
import { renderHtmlFragment } from "../lib/record/render-html.js";
import escapeHtml from "escape-html";
import type { Notebook } from "../lib/runner/notebook-file.js";
import { analyzeStage } from "../lib/bias/analyze.js";
import { analyzeFrequency, isFrequencyRecord } from "../lib/bias/frequency.js";
import { frequencyRows } from "../lib/bias/frequency-summary.js";
import type { Stage } from "../lib/bias/topology.js";
import { bodePlot } from "../lib/plot/bode.js";
import { Derivation, solverCheckPrefix } from "../lib/record/derivation.js";
import { tableBundle, partMime } from "../lib/notebook/display.js";
import { amperesPerVoltSquared, farads, hertz, meters, ohms, perVolt, volts } from "../lib/quantity.js";

const esc = (t: string) => escapeHtml(t);
const hostile = '<script>alert("x")</script>&';
const model = (over: Partial<ReportModel> = {}): ReportModel => ({
  title: `Title ${hostile}`,
  notebookPath: `/tmp/${hostile}.ipynb`,
  toolVersion: "pinchoff 0.1.0",
  date: new Date("2026-01-02T03:04:05Z"),
  sourceFingerprint: "a".repeat(64),
  inputsFingerprint: "b".repeat(64),
  inputs: [{ name: "ID", text: hostile, dim: "current", value: 2e-4, overridden: true, original: "100 uA" }],
  derivations: [],
  checks: [{ title: `check ${hostile}`, passed: false, value: -0.1, dim: "voltage", min: 0, margin: -0.1, derivation: `d ${hostile}`, cell: 2 }],
  plots: [{ cell: 3, title: `plot ${hostile}`, figure: { data: [{ x: [1], y: [2], name: "</script><b>trace</b>" }] } }],
  failures: [],
  skipped: [],
  ...over,
});

describe("report", () => {
  it("escapes every user string, including inside the plot spec", () => {
    const html = buildReport(model());
    expect(html).not.toContain(hostile);
    expect(html).toContain("&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;&amp;");
    // The spec sits inside the plot's drawing script; no "<" may survive there.
    const script = /<script>(\(function \(\) \{\n  var id = [^]*?)<\/script>/.exec(html)![1]!;
    const spec = /spec = (\{.*\}), tries = 0;/.exec(script)![1]!;
    expect(spec).not.toContain("<");
    expect(JSON.parse(spec).data[0].name).toBe("</script><b>trace</b>");
  });

  it("a crafted plot height read back from a notebook never reaches an attribute", () => {
    const crafted = '1px"></div><script>alert("h")</script><div style="';
    const nb: Notebook = {
      nbformat: 4,
      nbformat_minor: 5,
      metadata: {},
      cells: [{ cell_type: "code", id: "p", metadata: {}, source: "", outputs: [{ output_type: "display_data", data: { [plotMime]: { title: "t", summary: "s", figure: { data: [{ x: [1], y: [2] }], layout: { height: crafted } } } } }] }],
    };
    const got = collect(nb, new Map([[0, "ok"]]));
    expect(got.plots).toHaveLength(1);
    const html = buildReport(model({ plots: got.plots }));
    expect(html).not.toContain('alert("h")');
    expect(html).toContain("height:420px");
  });

  it("opens with the results box: verdict, the summary table, every check; then the corner spread and the deck", () => {
    const html = buildReport(
      model({
        parts: [
          { cell: 9, part: "summary", title: "Summary at the chosen values", rows: [{ name: "ID", text: "1.00 mA" }, { name: "VDS − VOV", text: "1.15 V", note: `saturation margin ${hostile}` }] },
          { cell: 5, part: "corner-spread", title: "Spread over 192 corner cases", rows: [{ name: "ID min", text: "852 µA", note: "rg1+ @ -40 °C" }] },
          { cell: 11, part: "spice-deck", title: "SPICE deck", text: `* deck ${hostile}\nM1 d g s s n1\n.end` },
        ],
      }),
    );
    expect(html).not.toContain(hostile);
    const at = (s: string) => html.indexOf(s);
    const box = html.slice(at('<section class="results">'), html.indexOf("</section>", at('<section class="results">')));
    expect(box).toContain("1 of 1 checks fail");
    expect(box).toContain("Summary at the chosen values");
    expect(box).toContain("1.15 V");
    expect(box).toContain("check &lt;script&gt;");
    expect(box).not.toContain("852 µA");
    expect(at('<section class="results">')).toBeLessThan(at("<h2>Design inputs</h2>"));
    expect(at("<h2>Spread over the corners</h2>")).toBeGreaterThan(at("<h2>Derivations</h2>"));
    expect(html).toContain("852 µA");
    expect(html).toMatch(/<pre data-part="spice-deck">\* deck &lt;script&gt;/);
    expect(at("<h2>SPICE deck</h2>")).toBeLessThan(at("<h2>Cautions</h2>"));
    // Without a marked summary the box says how to mark one.
    expect(buildReport(model())).toContain('showTable(rows, title, { part: "summary" })');
  });

  it("lists the solver's KCL check apart from the design checks in the results box, as the record does", () => {
    // Invented stage; the DC record carries design checks and the solver's own KCL residual.
    const stage: Stage = {
      topology: "four-resistor",
      name: "report stage (invented)",
      device: { card: { name: "t", polarity: "nmos", kp: amperesPerVoltSquared(100e-6), vt0: volts(0.7), lambda: perVolt(0.02), provenance: "invented for the tests" }, w: meters(40e-6), l: meters(2e-6) },
      components: { rg1: ohms(680e3), rg2: ohms(220e3), rd: ohms(10e3), rs: ohms(1.5e3) },
      supplies: { vdd: volts(12) },
    };
    const rec = new Derivation("Bias: report stage");
    analyzeStage(stage as never, rec);
    const data = rec.toJSON();
    const checks = allChecks({ derivations: [{ cell: 1, data }], plots: [], parts: [], failures: [], skipped: [] });
    const kcl = data.checks.find((c) => c.title.startsWith(solverCheckPrefix))!;
    expect(kcl.title).toMatch(/KCL/);
    const html = buildReport(model({ checks, derivations: [{ title: data.title, cell: 1, html: renderHtmlFragment(data) }] }));
    const box = html.slice(html.indexOf('<section class="results">'), html.indexOf("</section>", html.indexOf('<section class="results">')));
    const table = (kind: string) => box.slice(box.indexOf(`<table data-checks="${kind}">`), box.indexOf("</table>", box.indexOf(`<table data-checks="${kind}">`)));
    const bare = esc(kcl.title.slice(solverCheckPrefix.length));
    expect(table("design")).not.toContain("KCL");
    expect(table("solver")).toContain(bare);
    expect(box).not.toContain(esc(solverCheckPrefix));
    expect(box.indexOf("<h3>Solver checks</h3>")).toBeGreaterThan(box.indexOf('<table data-checks="design">'));
    for (const c of data.checks.filter((x) => !x.title.startsWith(solverCheckPrefix))) expect(table("design")).toContain(esc(c.title));
    // The record rendered below the box puts the same check under its own solver heading.
    const record = html.slice(html.indexOf('<section class="derivation"'));
    expect(record.indexOf("Solver checks")).toBeGreaterThan(-1);
    expect(record.indexOf(bare)).toBeGreaterThan(record.indexOf("Solver checks"));
    // The verdict still counts every check.
    expect(box).toContain(`All ${data.checks.length} checks pass`);
  });

  it("marks overrides, the failing check and its margin, and carries the record and cautions", () => {
    const html = buildReport(model());
    expect(html).toContain(reportMarker);
    expect(html).toContain("set on the command line");
    expect(html).toContain("100 uA");
    expect(html).toMatch(/class="fail">FAIL/);
    expect(html).toContain("-100 mV"); // margin of -0.1 V
    expect(html).toContain("2026-01-02T03:04:05.000Z");
    expect(html).toContain(Array(8).fill("a".repeat(8)).join("<wbr>"));
    for (const c of cautions) expect(html).toContain(c.replace(/'/g, "&#39;"));
  });

  it("embeds Plotly once when there are plots, not at all otherwise, and fetches nothing", () => {
    const two = buildReport(model({ plots: [model().plots[0]!, model().plots[0]!] }));
    expect(two.match(/<script data-pinchoff-plot-library=/g)).toHaveLength(1);
    expect((two.match(/plotly\.js v\d/g) ?? []).length).toBeLessThanOrEqual(1);
    expect(two.match(/class="pinchoff-plot-area"/g)).toHaveLength(2);
    expect(two).not.toMatch(/<(script|link)[^>]+(src|href)=["']?https?:/i);
    expect(Buffer.byteLength(two)).toBeLessThanOrEqual(6e6);
    const none = buildReport(model({ plots: [] }));
    expect(none).not.toContain("Plotly");
    expect(Buffer.byteLength(none)).toBeLessThan(50_000);
  });

  it("lets a fingerprint wrap only between blocks of 8 digits, never inside a block (issue 7 item 20)", () => {
    const fp = "0123456789abcdef".repeat(4);
    const html = buildReport(model({ inputsFingerprint: fp }));
    expect(html).not.toMatch(/break-all/);
    const code = html.match(/<dt>Inputs fingerprint<\/dt><dd><code class="fp">(.*?)<\/code>/)![1]!;
    const blocks = code.split("<wbr>");
    expect(blocks).toHaveLength(8);
    expect(blocks.every((b) => /^[0-9a-f]{8}$/.test(b))).toBe(true);
    expect(blocks.join("")).toBe(fp);
    expect(html).toMatch(/code\.fp\{overflow-wrap:normal;word-break:normal\}/);
  });
  it("says the run is incomplete when a cell failed", () => {
    const html = buildReport(model({ failures: [{ cell: 4, status: "error", lines: ["Error: invented"], source: "throw 1" }], skipped: [5] }));
    expect(html).toContain("Incomplete: cell 5 failed, 1 later cell(s) not run");
    expect(html).toContain("Error: invented");
  });

  it("files the frequency analysis under its own heading: table, record and Bode plot, apart from the DC record and plots", () => {
    // Invented card and stage for the test.
    const stage: Stage = {
      topology: "four-resistor",
      name: "report stage (invented)",
      device: { card: { name: "t", polarity: "nmos", kp: amperesPerVoltSquared(100e-6), vt0: volts(0.7), lambda: perVolt(0.02), capacitance: { tox: meters(20e-9), cgso: 2e-10 as never, cgdo: 2e-10 as never, cj: 5e-4 as never, cjsw: 2e-10 as never }, provenance: "invented for the tests" }, w: meters(40e-6), l: meters(2e-6) },
      components: { rg1: ohms(680e3), rg2: ohms(220e3), rd: ohms(10e3), rs: ohms(1.5e3) },
      supplies: { vdd: volts(12) },
    };
    const dc = analyzeStage(stage as never);
    const rec = new Derivation("Frequency response: report stage");
    const fa = analyzeFrequency(stage, dc, { source: { resistance: ohms(10e3) }, load: { resistance: ohms(100e3), capacitance: farads(10e-12) }, targets: { lowCorner: hertz(20) } }, rec);
    expect(isFrequencyRecord(rec.toJSON())).toBe(true);
    expect(isFrequencyRecord(new Derivation("DC").note("Bias", "x").toJSON())).toBe(false);
    const rows = frequencyRows(fa);
    expect(rows.map((r) => r.name)).toEqual(expect.arrayContaining(["midband gain", "C bypass", "low corner", "upper corner", "dominant pole"]));
    expect(rows.some((r) => r.name.startsWith("condition: Upper poles"))).toBe(true);
    // The table as a notebook marks it, read back by the runner.
    const nb: Notebook = { nbformat: 4, nbformat_minor: 5, metadata: {}, cells: [{ cell_type: "code", id: "f", metadata: {}, source: "", outputs: [{ output_type: "display_data", data: { [partMime]: tableBundle(rows, "Frequency response at the chosen capacitors", { part: "frequency" })[partMime] } }] }] };
    const parts = collect(nb, new Map([[0, "ok"]])).parts;
    expect(parts).toHaveLength(1);
    const bode = bodePlot(fa);
    const html = buildReport(
      model({
        parts,
        derivations: [
          { title: "DC design", cell: 1, html: "<p>dc record</p>" },
          { title: rec.title, cell: 4, html: "<p>frequency record</p>", section: "frequency" },
        ],
        plots: [model().plots[0]!, { cell: 4, title: "Bode", figure: { data: bode.figure.data as unknown[] } }],
      }),
    );
    const at = (x: string) => html.indexOf(x);
    const freq = html.slice(at("<h2>Frequency response</h2>"), at("<h2>Plots</h2>"));
    expect(at("<h2>Frequency response</h2>")).toBeGreaterThan(at("<h2>Derivations</h2>"));
    expect(freq).toContain("frequency record");
    expect(freq).not.toContain("dc record");
    expect(freq).toContain("Frequency response at the chosen capacitors");
    expect(freq).toContain("low corner");
    expect(freq).toContain("condition: Upper poles");
    expect(freq).toMatch(/Bode/);
    const rest = html.slice(at("<h2>Plots</h2>"));
    expect(rest).not.toContain('"role":"magnitude"');
    // The plotting library is placed once, before the first plot.
    expect(html.split(/<script[^>]*>[^<]{20000,}/).length - 1).toBeLessThanOrEqual(1);
  });
});
