import { createRequire } from "node:module";
import { afterEach, describe, expect, it, vi } from "vitest";
import { deckBundle, derivationBundle, derivationMime, emit, inKernel, partMime, quantityBundle, show, showQuantity, showTable, tableBundle, type ReportPart } from "../lib/notebook/display.js";
import { collect, partMime as collectedPartMime } from "../lib/runner/collect.js";
import { InputError } from "../lib/errors.js";
import { fixtureDerivation } from "./support/derivation-fixture.js";
import { expectReevaluates } from "./support/reevaluate.js";

// A stand-in for tslab's kernel module, placed where display.ts looks for it (Node's module cache).
const cache = createRequire(import.meta.url).cache as Record<string, unknown>;
const fakeKernel = "/nowhere/node_modules/tslab/dist/jupyter.js";
function withFakeKernel() {
  const sent: Array<{ content: { data: Record<string, unknown> }; update: boolean }> = [];
  cache[fakeKernel] = { exports: { lastWriteDisplayData: (content: { data: Record<string, unknown> }, update: boolean) => sent.push({ content, update }) } };
  return sent;
}
afterEach(() => {
  delete cache[fakeKernel];
  vi.restoreAllMocks();
});

describe("notebook display", () => {
  it("sends one display_data per derivation carrying all four MIME types", () => {
    const sent = withFakeKernel();
    expect(inKernel()).toBe(true);
    const d = fixtureDerivation();
    show([d, d.toJSON()]);
    expect(sent).toHaveLength(2);
    for (const s of sent) {
      expect(s.update).toBe(false);
      expect(Object.keys(s.content.data).sort()).toEqual([derivationMime, "text/html", "text/markdown", "text/plain"].sort());
      const json = s.content.data[derivationMime] as ReturnType<typeof d.toJSON>;
      expect(json.fingerprint).toBe(d.fingerprint());
      expect(json.schemaVersion).toBe(1);
      expect(json.checks).toHaveLength(3);
      expect(expectReevaluates(json)).toBeGreaterThan(0);
    }
  });

  it("uses MathML in notebook HTML (no KaTeX stylesheet needed) and escapes user text", () => {
    const html = derivationBundle(fixtureDerivation())["text/html"] as string;
    expect(html).toContain("<math");
    expect(html).not.toContain('class="katex-html"');
    expect(html).not.toContain("<script>alert");
    expect(html.length).toBeLessThan(40_000);
  });

  it("carries Infinity as a string in the JSON type (JSON has no Infinity)", () => {
    const json = derivationBundle(fixtureDerivation())[derivationMime] as { checks: Array<{ value: unknown }> };
    expect(json.checks[2]!.value).toBe("Infinity");
  });

  it("shows a quantity and a table of quantities with SI prefixes", () => {
    expect(quantityBundle(95.4e-6, "current", "ID")["text/plain"]).toBe("ID = 95.4 µA");
    expect(quantityBundle(4700, "resistance", "R<1>")["text/html"]).toContain("<b>R&lt;1&gt;</b> = 4.70 kΩ");
    const t = tableBundle([{ name: "RD", value: 4700, dim: "resistance" }, { name: "ID", value: 1e-3, dim: "current", note: "target" }], "Stage | A");
    expect(t["text/plain"]).toBe("Stage | A\nquantity  value    note\n--------  -------  ------\nRD        4.70 kΩ\nID        1.00 mA  target");
    expect(t["text/markdown"]).toContain("| RD | 4.70 kΩ |  |");
    expect(t["text/markdown"]).toContain("**Stage \\| A**");
    const sent = withFakeKernel();
    showQuantity(1e-3, "current", "ID");
    showTable([{ name: "VDD", value: 5, dim: "voltage" }]);
    expect(sent.map((s) => s.content.data["text/plain"])).toEqual(["ID = 1.00 mA", "quantity  value\n--------  ------\nVDD       5.00 V"]);
  });

  it("marks the summary table, the corner spread and the deck so a run collects them, and refuses an unknown part", () => {
    expect(collectedPartMime).toBe(partMime);
    const plain = tableBundle([{ name: "ID", value: 1e-3, dim: "current" }], "t");
    expect(plain[partMime]).toBeUndefined();
    const summary = tableBundle([{ name: "ID", value: 1e-3, dim: "current" }, { name: "VDS − VOV", value: 1.15, dim: "voltage", note: "saturation margin; region: saturation" }, { name: "R", value: Infinity, dim: "resistance" }], "Summary", { part: "summary" });
    expect(summary[partMime]).toEqual({
      part: "summary",
      title: "Summary",
      rows: [
        { name: "ID", value: 1e-3, dim: "current", text: "1.00 mA" },
        { name: "VDS − VOV", value: 1.15, dim: "voltage", text: "1.15 V", note: "saturation margin; region: saturation" },
        { name: "R", value: "Infinity", dim: "resistance", text: "∞ Ω" },
      ],
    });
    expect(() => tableBundle([], "x", { part: "results" as ReportPart })).toThrow(InputError);
    const deck = deckBundle("* stage <x>\nM1 d g s s nmos1 W=1u L=1u\n.end");
    expect(deck["text/html"]).toContain("&lt;x&gt;");
    expect(deck[partMime]).toEqual({ part: "spice-deck", title: "SPICE deck", text: "* stage <x>\nM1 d g s s nmos1 W=1u L=1u\n.end" });
    expect(() => deckBundle("  ")).toThrow(InputError);
    // Read back as a run reads a saved notebook; a malformed or unknown part is left out.
    const outputs = [summary, deck, { [partMime]: { part: "bogus", rows: [] } }, { [partMime]: { part: "summary", rows: "x" } }].map((data) => ({ output_type: "display_data" as const, data: JSON.parse(JSON.stringify(data)) as Record<string, unknown> }));
    const got = collect({ nbformat: 4, nbformat_minor: 5, metadata: {}, cells: [{ cell_type: "code", id: "a", metadata: {}, source: "", outputs }] }, new Map([[0, "ok"]]));
    expect(got.parts.map((p) => p.part)).toEqual(["summary", "spice-deck"]);
  });

  it("prints plain text outside a kernel, and emit reports false", () => {
    expect(inKernel()).toBe(false);
    expect(emit({ "text/plain": "x" })).toBe(false);
    const log = vi.spyOn(console, "log").mockImplementation(() => {});
    showQuantity(2.2e-3, "current", "ID");
    expect(log).toHaveBeenCalledWith("ID = 2.20 mA");
  });

  it("refuses what it cannot show with typed errors", () => {
    expect(() => show({ title: "x" } as never)).toThrow(InputError);
    expect(() => showQuantity(NaN, "current", "ID")).toThrow(/ID.*got NaN/);
    expect(() => showTable([{ name: "RD", value: NaN, dim: "resistance" }])).toThrow(InputError);
  });
});
