import { createRequire } from "node:module";
import { afterEach, describe, expect, it, vi } from "vitest";
import { derivationBundle, derivationMime, emit, inKernel, quantityBundle, show, showQuantity, showTable, tableBundle } from "../lib/notebook/display.js";
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
