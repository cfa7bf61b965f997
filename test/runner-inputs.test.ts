// The design-inputs cell: reading it, checking --set overrides in Node, and
// editing only the overridden value strings. Values are invented for the tests.
import { describe, expect, expectTypeOf, it } from "vitest";
import fc from "fast-check";
import { readFileSync } from "node:fs";
import { InputError, PinchoffError, type Amperes, type Ohms, type Volts } from "../lib/index.js";
import { designInputs, inputEntries, recordInputs } from "../lib/notebook/inputs.js";
import { Derivation } from "../lib/record/derivation.js";
import { applyOverrides, findInputsCell, parseOverride, resolveInputs } from "../lib/runner/inputs-cell.js";
import { cellSource, ensureCellIds, parseNotebook, type Notebook } from "../lib/runner/notebook-file.js";

const fixture = readFileSync(new URL("./fixtures/saturation-check.ipynb", import.meta.url), "utf8");
const load = () => parseNotebook(fixture, "fixture.ipynb");

function notebookWith(src: string, tags = ["design-inputs"]): Notebook {
  return parseNotebook(JSON.stringify({ nbformat: 4, nbformat_minor: 5, metadata: {}, cells: [{ cell_type: "code", metadata: { tags }, source: src, outputs: [] }] }), "nb.ipynb");
}

const errorOf = (f: () => unknown): PinchoffError => {
  try {
    f();
  } catch (e) {
    if (e instanceof PinchoffError) return e;
    throw e;
  }
  throw new Error("expected a PinchoffError");
};

describe("designInputs", () => {
  it("parses each value in its declared dimension and brands it", () => {
    const given = designInputs({ VDD: ["5 V", "voltage"], ID: ["200 uA", "current"], RD: ["10 kohm", "resistance"] });
    expect(given.VDD).toBe(5);
    expect(given.ID).toBeCloseTo(200e-6, 15);
    expect(given.RD).toBe(10e3);
    expectTypeOf(given.ID).toEqualTypeOf<Amperes>();
    expectTypeOf(given.VDD).toEqualTypeOf<Volts>();
    expectTypeOf(given.RD).toEqualTypeOf<Ohms>();
    // @ts-expect-error a current is not a voltage
    const v: Volts = given.ID;
    expect(v).toBe(given.ID);
  });

  it("records the entries and copies them into a derivation", () => {
    const given = designInputs({ ID: ["200 uA", "current"] });
    expect(inputEntries(given)).toEqual([{ name: "ID", value: given.ID, dim: "current", origin: "design inputs", text: "200 uA" }]);
    const rec = recordInputs(new Derivation("t"), given);
    expect(rec.inputs.map((i) => [i.name, i.text])).toEqual([["ID", "200 uA"]]);
    expect(() => inputEntries({})).toThrow(InputError);
  });

  it("names the input when a value has the wrong dimension", () => {
    const e = errorOf(() => designInputs({ ID: ["3 V", "current"] }));
    expect(e.message).toContain("design inputs: ID");
    expect(e.message).toContain('"3 V"');
  });

  it("refuses an unknown dimension", () => {
    const e = errorOf(() => designInputs({ X: ["3 V", "volts" as "voltage"] }));
    expect(e.message).toContain('"volts"');
    expect(e.message).toContain("voltage");
  });
});

describe("the design-inputs cell", () => {
  it("finds the entries of the fixture with their dimensions", () => {
    const cell = findInputsCell(load(), "fixture.ipynb");
    expect(cell.index).toBe(1);
    expect(cell.lines.map((l) => [l.name, l.text, l.dim])).toEqual([
      ["VDD", "5 V", "voltage"],
      ["KN", "2 mA/V^2", "transconductanceParameter"],
      ["VOV", "0.3 V", "voltage"],
      ["RD", "20 kohm", "resistance"],
    ]);
  });

  it("replaces only the value string of the overridden entry", () => {
    const nb = load();
    const before = JSON.stringify(nb);
    const cell = findInputsCell(nb, "f");
    const inputs = resolveInputs(cell, [parseOverride("RD=60kohm")], "f");
    const copy = applyOverrides(nb, cell, inputs);
    expect(JSON.stringify(nb)).toBe(before); // the source object is untouched
    const a = cellSource(nb.cells[1]!).split("\n");
    const b = cellSource(copy.cells[1]!).split("\n");
    expect(b.length).toBe(a.length);
    a.forEach((line, i) => (line.includes("RD:") ? expect(b[i]).toBe('  RD: ["60kohm", "resistance"],') : expect(b[i]).toBe(line)));
    expect(inputs.find((i) => i.name === "RD")).toMatchObject({ value: 60e3, overridden: true, original: "20 kohm" });
  });

  it("keeps comments and other entries for any override text (property)", () => {
    const nb = notebookWith('const given = designInputs({\n  ID: ["1 mA", "current"], // keep "me"\n  VDD: ["5 V", "voltage"],\n});');
    const cell = findInputsCell(nb, "nb");
    fc.assert(
      fc.property(fc.double({ min: 1e-9, max: 1, noNaN: true }), fc.constantFrom("A", "mA", "uA", "nA"), (x, unit) => {
        const text = `${x} ${unit}`;
        const copy = applyOverrides(nb, cell, resolveInputs(cell, [{ name: "ID", text }], "nb"));
        const again = findInputsCell(copy, "copy");
        expect(again.lines.map((l) => [l.name, l.text])).toEqual([["ID", text], ["VDD", "5 V"]]);
        expect(cellSource(copy.cells[0]!)).toContain('// keep "me"');
      }),
      { numRuns: 50 },
    );
  });

  it("--set with the wrong dimension names the input, the value, what it is and what was expected", () => {
    const cell = findInputsCell(load(), "f");
    const e = errorOf(() => resolveInputs(cell, [parseOverride("VOV=3A")], "f"));
    expect(e.code).toBe("wrong-dimension");
    expect(e.message).toContain("--set VOV=3A");
    expect(e.message).toContain('"3A"');
    expect(e.message).toMatch(/voltage/);
    expect(e.message).toMatch(/current/);
  });

  it("--set of an unknown name lists the known names", () => {
    const cell = findInputsCell(load(), "f");
    const e = errorOf(() => resolveInputs(cell, [parseOverride("IDD=1mA")], "f"));
    expect(e.message).toContain("IDD");
    expect(e.message).toContain("VDD, KN, VOV, RD");
  });

  it("--set without NAME=VALUE and twice for one input are refused", () => {
    expect(() => parseOverride("=3")).toThrow(InputError);
    expect(() => parseOverride("ID")).toThrow(InputError);
    const cell = findInputsCell(load(), "f");
    expect(() => resolveInputs(cell, [parseOverride("RD=1k"), parseOverride("RD=2k")], "f")).toThrow(/each input set once/);
  });

  it("refuses notebooks without exactly one inputs cell, and malformed entries", () => {
    expect(errorOf(() => findInputsCell(notebookWith("1", []), "nb.ipynb")).message).toMatch(/no design-inputs cell/);
    const two = parseNotebook(JSON.stringify({ nbformat: 4, nbformat_minor: 5, metadata: {}, cells: [0, 1].map(() => ({ cell_type: "code", metadata: { tags: ["design-inputs"] }, source: "", outputs: [] })) }), "nb");
    expect(errorOf(() => findInputsCell(two, "nb")).message).toMatch(/2 cells are tagged/);
    expect(errorOf(() => findInputsCell(notebookWith("const given = designInputs({\n  ID: 3,\n});"), "nb")).message).toMatch(/line 2 is not an entry/);
    expect(errorOf(() => findInputsCell(notebookWith('const given = designInputs({\n  ID: ["3 A", "amps"],\n});'), "nb")).message).toMatch(/"amps"/);
    expect(errorOf(() => findInputsCell(notebookWith('const given = designInputs({\n  ID: ["3 A", "current"],'), "nb")).message).toMatch(/not closed/);
  });
});

describe("notebook files", () => {
  it("reports the line and column of malformed JSON", () => {
    const e = errorOf(() => parseNotebook('{\n "nbformat": 4,\n "cells": [,]\n}', "broken.ipynb"));
    expect(e.message).toContain("broken.ipynb");
    expect(e.message).toMatch(/line 3, column \d+/);
  });

  it("refuses JSON that is not nbformat 4", () => {
    expect(errorOf(() => parseNotebook("[]", "a.ipynb")).message).toMatch(/a notebook object/);
    expect(errorOf(() => parseNotebook('{"nbformat":3,"cells":[]}', "a.ipynb")).message).toMatch(/nbformat 4/);
    expect(errorOf(() => parseNotebook('{"nbformat":4,"cells":[{"cell_type":"code","source":3}]}', "a.ipynb")).message).toMatch(/cell 1/);
  });

  it("gives every cell a unique id", () => {
    const nb = parseNotebook(JSON.stringify({ nbformat: 4, nbformat_minor: 4, metadata: {}, cells: [{ cell_type: "markdown", source: "", metadata: {} }, { cell_type: "markdown", id: "cell-1", source: "", metadata: {} }, { cell_type: "markdown", id: "cell-1", source: "", metadata: {} }] }), "n");
    ensureCellIds(nb);
    const ids = nb.cells.map((c) => c.id);
    expect(new Set(ids).size).toBe(3);
    expect(nb.nbformat_minor).toBe(5);
  });
});
