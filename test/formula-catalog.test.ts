import { describe, expect, it } from "vitest";
import { loadCatalogs, mergeSymbols, refuseRestatements } from "../lib/formulas/generate.js";

describe("formula catalogs", () => {
  it("state every equation once across all catalogs", async () => {
    const catalogs = await loadCatalogs();
    expect(catalogs.length).toBeGreaterThanOrEqual(4);
    expect(() => refuseRestatements(catalogs)).not.toThrow();
    expect(() => mergeSymbols(catalogs)).not.toThrow();
  });
  it("refuse an equation restated under another name, even spaced differently", () => {
    const symbols = {};
    const a = { file: "a.catalog.ts", symbols, formulas: { sat: { title: "x", result: "ID", expr: "k / 2 * VOV^2" } } };
    const b = { file: "b.catalog.ts", symbols, formulas: { satAgain: { title: "y", result: "ID", expr: "k/2*VOV ^ 2" } } };
    expect(() => refuseRestatements([a, b])).toThrow(/b\.catalog\.ts: satAgain restates a\.catalog\.ts: sat/);
  });
  it("refuse a symbol that means two things", () => {
    const a = { file: "a.catalog.ts", symbols: { VD: { tex: "V_{D}", dim: "voltage" as const, meaning: "drain" } }, formulas: {} };
    const b = { file: "b.catalog.ts", symbols: { VD: { tex: "V_{D}", dim: "current" as const, meaning: "oops" } }, formulas: {} };
    expect(() => mergeSymbols([a, b])).toThrow(/symbol VD redefined/);
  });
});
