// The standalone report: escaping, assets embedded once, offline, marked overrides, cautions.
import { describe, expect, it } from "vitest";
import { buildReport, reportMarker, type ReportModel } from "../lib/report/html.js";
import { cautionList as cautions } from "../lib/record/cautions.js";
import { collect, plotMime } from "../lib/runner/collect.js";
import type { Notebook } from "../lib/runner/notebook-file.js";

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

  it("marks overrides, the failing check and its margin, and carries the record and cautions", () => {
    const html = buildReport(model());
    expect(html).toContain(reportMarker);
    expect(html).toContain("set on the command line");
    expect(html).toContain("100 uA");
    expect(html).toMatch(/class="fail">FAIL/);
    expect(html).toContain("-100 mV"); // margin of -0.1 V
    expect(html).toContain("2026-01-02T03:04:05.000Z");
    expect(html).toContain("a".repeat(64));
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

  it("says the run is incomplete when a cell failed", () => {
    const html = buildReport(model({ failures: [{ cell: 4, status: "error", lines: ["Error: invented"], source: "throw 1" }], skipped: [5] }));
    expect(html).toContain("Incomplete: cell 5 failed, 1 later cell(s) not run");
    expect(html).toContain("Error: invented");
  });
});
