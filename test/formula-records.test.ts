/**
 * Formula records whose texts are read on first use (lib/formulas/record.ts): every
 * generated record carries its catalog entry's texts, has the keys of `Formula` in their
 * order before and after the texts are read, computes without them, and says which file
 * is at fault when they cannot be read.
 */
import { readdirSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { describe, expect, it } from "vitest";
import { PinchoffError } from "../lib/errors.js";
import type { Formula } from "../lib/formulas/define.js";
import { loadCatalogs } from "../lib/formulas/generate.js";
import { CatalogTexts, formulaRecord, formulaTextsFolder } from "../lib/formulas/record.js";

const folder = join(dirname(fileURLToPath(import.meta.url)), "../lib/formulas");
const keys = ["id", "title", "expr", "tex", "result", "resultDim", "vars", "dims", "source", "fn"];

/** A record of the mirror catalog built afresh, its texts not read yet. */
const freshMirrorRatio = () =>
  formulaRecord<Formula<[number, number], number>>(new CatalogTexts("mirror.texts.json"), "mirrorRatio", true, (k2: number, k1: number) => k2 / k1);

describe("generated formula records", () => {
  it("carry the texts of their catalog entry, every formula of every catalog", async () => {
    const catalogs = await loadCatalogs();
    let n = 0;
    for (const c of catalogs) {
      const mod = (await import(pathToFileURL(join(folder, c.file.replace(/\.catalog\.ts$/, ".formulas.ts"))).href)) as Record<string, unknown>;
      for (const [id, spec] of Object.entries(c.formulas)) {
        const rec = mod[id] as Formula;
        expect(Object.keys(rec), id).toEqual(spec.source ? keys : keys.filter((k) => k !== "source"));
        expect({ id: rec.id, title: rec.title, expr: rec.expr, result: rec.result, source: rec.source }, id).toEqual({ id, title: spec.title, expr: spec.expr, result: spec.result, source: spec.source });
        expect(rec.vars.length, id).toBe(rec.dims.length);
        expect(rec.fn.length, id).toBe(rec.vars.length);
        expect(rec.tex.startsWith(`${c.symbols[spec.result]?.tex ?? ""} = `), id).toBe(true);
        n++;
      }
    }
    expect(n).toBeGreaterThan(300);
    // every texts file belongs to a catalog: none left behind by a removed catalog
    expect(readdirSync(folder).filter((f) => f.endsWith(".texts.json")).sort()).toEqual(catalogs.map((c) => c.file.replace(/\.catalog\.ts$/, ".texts.json")).sort());
  });

  it("have their keys in order before the texts are read, and are plain data after", () => {
    const rec = freshMirrorRatio();
    expect(Object.keys(rec)).toEqual(keys);
    expect(Object.getOwnPropertyDescriptor(rec, "tex")?.get).toBeTypeOf("function");
    expect(rec.fn(4e-3, 1e-3)).toBe(4);
    expect(rec.tex).toBe("N = \\frac{{k_{2}}}{{k_{1}}}");
    for (const k of keys) expect(Object.getOwnPropertyDescriptor(rec, k), k).toMatchObject({ enumerable: true, writable: true });
    expect(Object.keys(rec)).toEqual(keys);
    // spread and JSON see the whole record
    expect({ ...rec }).toEqual({ id: "mirrorRatio", title: "Mirror ratio", expr: "k2 / k1", tex: rec.tex, result: "Nm", resultDim: "dimensionless", vars: ["k2", "k1"], dims: ["transconductanceParameter", "transconductanceParameter"], source: "square law, equal VGS and Vt (common practice)", fn: rec.fn });
    expect(Object.keys(JSON.parse(JSON.stringify(rec)))).toEqual(keys.filter((k) => k !== "fn"));
  });

  it("take a write before the texts are read, keeping the other texts", () => {
    const rec = freshMirrorRatio() as unknown as Record<string, unknown>;
    rec.title = "renamed";
    expect(rec.title).toBe("renamed");
    expect(rec.expr).toBe("k2 / k1");
  });

  it("answer through an object that inherits from them, and keep a write there on that object", () => {
    const rec = freshMirrorRatio();
    const child = Object.create(rec) as Record<string, unknown>;
    expect(child.expr).toBe("k2 / k1");
    child.title = "child's own";
    expect(child.title).toBe("child's own");
    expect(rec.title).toBe("Mirror ratio");
  });

  it("still give their texts when frozen before reading them, and refuse a write then", () => {
    const rec = Object.freeze(freshMirrorRatio());
    expect(rec.tex).toBe("N = \\frac{{k_{2}}}{{k_{1}}}");
    expect(rec.vars).toEqual(["k2", "k1"]);
    expect(() => {
      (rec as unknown as Record<string, unknown>).title = "x";
    }).toThrow(/frozen or sealed before its texts were read/);
    expect(rec.title).toBe("Mirror ratio");
  });

  it("compute without their texts file, and name the file when a text is asked for", () => {
    const rec = formulaRecord<Formula<[number], number>>(new CatalogTexts("absent.texts.json"), "double", false, (x: number) => 2 * x);
    expect(rec.fn(21)).toBe(42);
    expect(Object.keys(rec)).toEqual(keys.filter((k) => k !== "source"));
    const path = join(formulaTextsFolder(), "absent.texts.json");
    expect(() => rec.tex).toThrow(PinchoffError);
    expect(() => rec.tex).toThrow(`${path}: cannot read the formula texts`);
  });

  it("refuse a record its texts file does not hold (generated files out of step)", () => {
    const rec = formulaRecord<Formula<[number], number>>(new CatalogTexts("mirror.texts.json"), "noSuchFormula", true, (x: number) => x);
    expect(() => rec.title).toThrow(/no texts for formula noSuchFormula; the generated formula files are out of step \(run npm run gen\)/);
  });
});
