/**
 * Messages that said too little or contradicted themselves (issue 7 item 14,
 * library side): overflow in the closed forms, range errors without the file,
 * a byte-order mark, rounding that made a value equal its limit, and the
 * candidates cap that the README and the validation stated differently.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { parseDesign, parseDesignFile, readDesign } from "../lib/bias/design-file.js";
import { synthesize } from "../lib/bias/synthesis.js";
import { InfeasibleError, InputError } from "../lib/errors.js";
import { amperes, amperesPerVoltSquared, meters, volts } from "../lib/quantity.js";
import { Derivation } from "../lib/record/derivation.js";
import { renderText } from "../lib/record/render-text.js";
import { contrastDigits } from "../lib/units/format.js";
import { designShape } from "./support/design-shape.js";

// Invented card and stage (not a real process).
const card = { name: "msg-n (invented)", polarity: "nmos", kp: "200 uA/V^2", vt0: "0.5 V" };
const design = (over: Record<string, unknown> = {}) => ({
  topology: "four-resistor",
  device: { card, w: "10 um", l: "1 um" },
  components: { rg1: "1M", rg2: "1M", rd: "1k", rs: "1k" },
  supplies: { vdd: "5 V" },
  ...over,
});
const dir = mkdtempSync(join(tmpdir(), "pinchoff-messages-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("range errors name the file", () => {
  it("a negative resistor", () => {
    const bad = () => parseDesign(design({ components: { rg1: "1M", rg2: "1M", rd: "-1k", rs: "1k" } }), "amp.json");
    expect(bad).toThrow(InputError);
    expect(bad).toThrow(/^amp\.json: components\.rd: got -1000, expected a resistance ≥ 0 Ω/);
  });
  it("vss above vdd", () => {
    expect(() => parseDesign(design({ supplies: { vdd: "5 V", vss: "6 V" } }), "amp.json")).toThrow(/^amp\.json: supplies\.vss: got 6, expected a finite voltage below supplies\.vdd = 5 V/);
  });
  it("a negative power limit", () => {
    expect(() => parseDesign(design({ limits: { maxDevicePower: "-1 mW" } }), "amp.json")).toThrow(/^amp\.json: limits\.maxDevicePower: got -0\.001, expected a transistor power limit > 0 in W/);
  });
});

describe("a byte-order mark at the start of a design file is accepted", () => {
  it("reads the same stage with and without it", () => {
    const plain = join(dir, "plain.json");
    const marked = join(dir, "marked.json");
    writeFileSync(plain, JSON.stringify(design()));
    writeFileSync(marked, "\uFEFF" + JSON.stringify(design()));
    expect(readDesign(marked)).toEqual(readDesign(plain));
  });
});

describe("values near the largest double no longer break the closed forms", () => {
  it("a 1e308 Ω gate resistor solves (the divider no longer overflows) and a 1e308 Ω drain resistor solves to triode", () => {
    expect(analyzeStage(parseDesign(design({ components: { rg1: "1", rg2: 1e308, rd: "1k", rs: "1k" } }), "big.json")).nodes.gate).toBeCloseTo(5, 12);
    const a = analyzeStage(parseDesign(design({ components: { rg1: "1M", rg2: "1M", rd: 1e308, rs: "1k" } }), "big.json"));
    expect(a.region).toBe("triode");
    expect(a.nodes.drain).toBeLessThan(1e-9);
  });
  it("a device gain kp·W/L that overflows is refused by name, not turned into NaN roots", () => {
    expect(() => analyzeStage(parseDesign(design({ device: { card: { ...card, kp: 1e308 }, w: "10 um", l: "1 um" } }), "big.json"))).toThrow(/finite device gain k = kp·W\/L/);
  });
});

describe("a value and its limit never print alike when they differ", () => {
  it("contrastDigits adds digits until the two differ", () => {
    expect(contrastDigits(0.29999, 0.3)).toBe(5);
    expect(contrastDigits(0.25, 0.3)).toBe(3);
    expect(contrastDigits(0.3, 0.3)).toBe(3);
    expect(contrastDigits(2.0999999, 2.1, 4)).toBe(8);
  });
  it("a failed check's value and bound are told apart in the record", () => {
    const rec = new Derivation("t");
    rec.check("Saturation margin", 0.29999, "voltage", { min: 0.3 });
    const text = renderText(rec);
    const row = text.split("\n").find((l) => l.includes("Saturation margin"))!;
    expect(row).toMatch(/299\.99 mV/);
    expect(row).toMatch(/≥ 300\.00 mV/);
  });
  it("the synthesis triode message shows VDS and VOV with enough digits", () => {
    const bad = () =>
      synthesize(designShape({
        topology: "fixed-gate",
        card: { name: "msg-n", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.5) },
        supplies: { vdd: volts(5) },
        id: amperes(1e-3),
        sizing: { vov: volts(0.3), l: meters(1e-6) },
        drain: { vd: volts(0.29999) },
      }));
    expect(bad).toThrow(InfeasibleError);
    expect(bad).toThrow(/VDS = 0\.29999 V < VOV = 0\.3 V/);
  });
});

describe("the candidates cap: README and validation agree, and the reason is given", () => {
  it("candidates: 200 is refused as a whole number from 1 to 8, with the reason", () => {
    const spec = { topology: "four-resistor", device: { card }, supplies: { vdd: "9 V" }, specification: { id: "1 mA", sizing: { vov: "0.3 V", l: "1 um" }, candidates: 200 } };
    expect(() => parseDesignFile(spec, "d.json")).toThrow(/^d\.json: specification\.candidates: got 200, expected a whole number from 1 to 8: .*grow as candidates\^resistors/);
    expect(parseDesignFile({ ...spec, specification: { ...spec.specification, candidates: 8 } }, "d.json").kind).toBe("specification");
  });
});
