/**
 * Discrete parts: the square-law model derived from datasheet figures, checked
 * against a hand calculation written out below, and the absolute maximum
 * ratings checked in a design file through `pinchoff op`, with cases that
 * must fail. The part "QN-60 (invented)" is invented for the tests: figures
 * of the size a small-signal N-channel part in a through-hole package states.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { parseDesign, parseDesignFile } from "../lib/bias/design-file.js";
import { parsePartCard } from "../lib/bias/part-file.js";
import { main } from "../lib/cli/op.js";
import { checkPart, partModel, ratingChecks, type DiscretePart } from "../lib/device/discrete-part.js";
import { kelvin } from "../lib/quantity.js";
import { Derivation } from "../lib/record/derivation.js";
import { expectReevaluates } from "./support/reevaluate.js";
import { captureCli } from "./support/cli.js";

const partJson = {
  name: "QN-60 (invented)",
  polarity: "nmos",
  threshold: { vgs: "2.0 V", id: "1 mA" },
  forwardTransconductance: { gfs: "200 mS", id: "200 mA", vds: "10 V" },
  onResistance: { rds: "1.8 Ohm", vgs: "10 V", id: "500 mA" },
  ratings: { vds: "60 V", vgs: "20 V", id: "300 mA", pd: "400 mW", pdAt: { ambient: "25 degC" }, tjMax: "150 degC", rthJA: "312.5 K/W" },
  provenance: "invented for the tests",
};

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "pinchoff-part-"));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const write = (name: string, v: unknown) => {
  const p = join(dir, name);
  writeFileSync(p, JSON.stringify(v));
  return p;
};

describe("square-law model from a datasheet", () => {
  it("derives k, Vt and the RDS(on) cross-check as the hand calculation does", () => {
    // Hand calculation (square law, common practice):
    //   k   = gfs²/(2·ID)        = 0.2²/(2·0.2)          = 0.04/0.4       = 0.1 A/V²
    //   Vt  = VGS(th) − √(2·ID/k) = 2.0 − √(2·0.001/0.1) = 2.0 − √0.02    = 2.0 − 0.1414214 = 1.8585786 V
    //   Ron = 1/(k·(VGS − Vt))    = 1/(0.1·(10 − 1.8585786)) = 1/0.81414214 = 1.2282868 Ω
    //   Ron/RDS(on)               = 1.2282868/1.8          = 0.6823815
    const part = parsePartCard(partJson, "p.json");
    const rec = new Derivation("QN-60 model");
    const m = partModel(part, rec);
    expect(m.k).toBeCloseTo(0.1, 12);
    expect(m.vt).toBeCloseTo(2.0 - Math.sqrt(0.02), 12);
    expect(m.vt).toBeCloseTo(1.8585786, 6);
    expect(m.ron!).toBeCloseTo(1.2282868, 6);
    expect(m.ronRatio!).toBeCloseTo(0.6823815, 6);
    expect(m.card).toMatchObject({ polarity: "nmos", kp: m.k, lambda: 0, gamma: 0 });
    expect(m.card.vt0).toBeCloseTo(m.vt, 15);
    expect(m.w).toBe(m.l); // W/L = 1: the part's W/L is absorbed in k
    // The discrepancy is a finding, not silence; within a factor of two it is a note, not a warning.
    expect(rec.findings.some((f) => f.severity === "note" && /-32 %/.test(f.text))).toBe(true);
    expect(rec.steps.filter((s) => s.kind === "formula").map((s) => (s as { formula: string }).formula)).toEqual([
      "kFromForwardTransconductance",
      "thresholdFromGateThreshold",
      "overdrive",
      "onResistance",
      "onResistanceRatio",
    ]);
    expectReevaluates(rec.toJSON());
  });

  it("takes a P-channel datasheet's negative figures as magnitudes and gives a negative vt0", () => {
    const p = parsePartCard({ ...partJson, name: "QP-60 (invented)", polarity: "pmos", threshold: { vgs: "-2.0 V", id: "-1 mA" }, forwardTransconductance: { gfs: "200 mS", id: "-200 mA" } }, "p.json");
    const m = partModel(p);
    expect(m.card.vt0).toBeCloseTo(-(2.0 - Math.sqrt(0.02)), 12);
    expect(m.k).toBeCloseTo(0.1, 12);
  });

  it("refuses figures that give no positive threshold, and bad fields, naming them", () => {
    // gfs at a tiny current gives a small k: √(2·ID(th)/k) = √(2·0.001/0.0005) = 2 V ≥ VGS(th) − 0 → Vt = 0.
    expect(() => partModel(parsePartCard({ ...partJson, forwardTransconductance: { gfs: "1 mS", id: "1 mA" } }, "p.json"))).toThrow(/threshold: got 0, expected a threshold Vt > 0/);
    expect(() => parsePartCard({ ...partJson, ratings: { ...partJson.ratings, pdAt: { board: "25 degC" } } }, "p.json")).toThrow(/p\.json\.ratings\.pdAt/);
    expect(() => parsePartCard({ ...partJson, threshold: { vgs: "2 A", id: "1 mA" } }, "p.json")).toThrow(/p\.json\.threshold\.vgs/);
    expect(() => parsePartCard({ ...partJson, ratings: { ...partJson.ratings, tjMax: "20 degC" } }, "p.json")).toThrow(/ratings\.tjMax/);
    expect(() => parsePartCard({ ...partJson, colour: "black" }, "p.json")).toThrow(/p\.json\.colour/);
  });
});

describe("where PD is stated (ratings.pdAt): one shape in a part file and in the library", () => {
  it("a file's { ambient } or { case } with units is the library's { ambient } or { case } in K", () => {
    const ta = parsePartCard(partJson, "p.json");
    expect(ta.ratings.pdAt).toEqual({ ambient: 298.15 });
    const tc = parsePartCard({ ...partJson, ratings: { ...partJson.ratings, pdAt: { case: "25 degC" } } }, "p.json");
    expect(tc.ratings.pdAt).toEqual({ case: 298.15 });
    // The library takes the same object: the parsed card and one written by hand are checked alike.
    const byHand = { ...ta, ratings: { ...ta.ratings, pdAt: { case: 298.15 } } } as DiscretePart;
    expect(checkPart(byHand, "lib").ratings.pdAt).toEqual({ case: 298.15 });
    const spelled = { ...ta, ratings: { ...ta.ratings, pdAt: { ambient: kelvin(298.15), case: undefined } } };
    expect(() => checkPart(spelled, "lib")).not.toThrow();
  });
  it("derates a PD stated at the ambient and cautions on one stated at the case, from either path", () => {
    const ta = parsePartCard(partJson, "p.json");
    const use = (pdAt: DiscretePart["ratings"]["pdAt"]) => ({ part: { ...ta, ratings: { ...ta.ratings, pdAt } }, ambient: kelvin(313.15) });
    const stress = { vds: 5, vgs: 3, id: 0.02, power: 0.1 };
    const allowed = (pdAt: DiscretePart["ratings"]["pdAt"], rec?: Derivation) => ratingChecks(use(pdAt), stress, (name, _v, _d, max) => ({ name, max }), rec).find((c) => c.name.endsWith("dissipation within PD"))!.max;
    // PD derated linearly from 25 °C to TJ(max) 150 °C at a 40 °C ambient: 0.4·(150 − 40)/(150 − 25) = 0.352 W.
    expect(allowed({ ambient: kelvin(298.15) })).toBeCloseTo(0.352, 12);
    const rec = new Derivation("case");
    expect(allowed({ case: kelvin(298.15) }, rec)).toBe(0.4);
    expect(rec.findings.some((f) => /stated at the case/.test(f.text))).toBe(true);
  });
  it("refuses any other shape, saying what to write, in a file and in the library", () => {
    expect(() => parsePartCard({ ...partJson, ratings: { ...partJson.ratings, pdAt: { kind: "ambient", temperature: "25 degC" } } }, "p.json")).toThrow(/p\.json\.ratings\.pdAt.*\{ "ambient": "25 degC" \}/);
    expect(() => parsePartCard({ ...partJson, ratings: { ...partJson.ratings, pdAt: { ambient: "25 degC", case: "25 degC" } } }, "p.json")).toThrow(/p\.json\.ratings\.pdAt/);
    const ta = parsePartCard(partJson, "p.json");
    for (const pdAt of [{ kind: "ambient", temperature: 298.15 }, { ambient: 298.15, case: 298.15 }, {}])
      expect(() => checkPart({ ...ta, ratings: { ...ta.ratings, pdAt } } as never, "lib")).toThrow(/lib "QN-60 \(invented\)"\.ratings\.pdAt.*\{ ambient: 298\.15 \} or \{ case: 298\.15 \}/);
    expect(() => checkPart({ ...ta, ratings: { ...ta.ratings, pdAt: { case: -1 } } } as never, "lib")).toThrow(/ratings\.pdAt\.case/);
    expect(() => checkPart({ ...ta, ratings: { ...ta.ratings, pdAt: { ambient: 500 } } } as never, "lib")).toThrow(/ratings\.tjMax/);
  });
});

describe("ratings checked in a design that uses the part", () => {
  // A 12 V common-source stage around the invented part (values invented).
  const stageJson = {
    name: "QN-60 line stage (invented)",
    topology: "four-resistor",
    device: { part: partJson, ambient: "40 degC" },
    components: { rg1: "68k", rg2: "39k", rd: "240", rs: "120" },
    supplies: { vdd: "12 V" },
  };
  const run = (argv: string[]) => captureCli(main, argv);

  it("passes with margin at a sensible bias, with every rating among the checks", async () => {
    const r = await run([write("ok.json", stageJson), "--json"]);
    const j = JSON.parse(r.out);
    expect(r.code).toBe(0);
    const names = j.metrics.checks.map((c: { name: string }) => c.name);
    for (const n of ["|VDS| within VDS(max)", "|VGS| within VGS(max)", "ID within ID(max)", "dissipation within PD", "junction temperature within TJ(max)"])
      expect(names).toContain(`QN-60 (invented): ${n}`);
    // Tj = Ta + P·RθJA, with P = ID·VDS from the same analysis.
    const p = j.power.transistor;
    const tj = j.metrics.checks.find((c: { name: string }) => c.name.endsWith("junction temperature within TJ(max)"));
    expect(tj.value).toBeCloseTo(313.15 + p * 312.5, 9);
    // PD derated linearly from 25 °C to 150 °C at the 40 °C ambient: 0.4·(150 − 40)/(150 − 25) = 0.352 W.
    const pd = j.metrics.checks.find((c: { name: string }) => c.name.endsWith("dissipation within PD"));
    expect(pd.max).toBeCloseTo(0.352, 12);
  });

  const failing: [string, Record<string, unknown>, RegExp][] = [
    ["VDS over VDS(max) (80 V board)", { supplies: { vdd: "80 V" }, components: { rg1: "680k", rg2: "39k", rd: "1k", rs: "1k" } }, /\|VDS\| within VDS\(max\)/],
    ["VGS over VGS(max) (gate held at 25 V)", { topology: "fixed-gate", components: { vg: "25 V", rd: "240", rs: "10" }, supplies: { vdd: "30 V" } }, /\|VGS\| within VGS\(max\)/],
    ["ID over ID(max) (no source resistor, gate at 5 V)", { topology: "fixed-gate", components: { vg: "5 V", rd: "10" } }, /ID within ID\(max\)/],
    ["dissipation and junction temperature over (hot board)", { device: { part: partJson, ambient: "140 degC" } }, /junction temperature within TJ\(max\)/],
  ];
  for (const [what, change, check] of failing)
    it(`fails with exit 1 when ${what}`, async () => {
      const r = await run([write(`fail-${what.slice(0, 3)}.json`, { ...stageJson, ...change }), "--json"]);
      expect(r.code).toBe(1);
      expect(r.err).toMatch(check);
      const failed = JSON.parse(r.out).metrics.checks.filter((c: { passed: boolean }) => !c.passed).map((c: { name: string }) => c.name);
      expect(failed.some((n: string) => check.test(n))).toBe(true);
    });

  it("refuses body \"rail\" for a part (body tied to source inside the package)", () => {
    expect(() => parseDesign({ ...stageJson, body: "rail" }, "s.json")).toThrow(/s\.json: body: .*tied to its source inside the package/);
  });

  it("keeps the ratings in every analysis of the stage, also from the library", () => {
    const stage = parseDesign(stageJson, "s.json");
    const a = analyzeStage(stage);
    expect(a.metrics.checks.filter((c) => c.name.startsWith("QN-60")).length).toBe(5);
  });

  it("checks each part of a two-transistor stage under its own label (mirror, diode load)", () => {
    // A discrete 1:1 mirror from two of the invented parts: 12 V, RREF 1 kΩ, output held at 6 V.
    const mirror = parseDesign({ topology: "current-mirror", device: { part: partJson }, devices: { reference: { part: partJson } }, components: { rref: "1k", vout: "6 V" }, supplies: { vdd: "12 V" } }, "m.json");
    const names = analyzeStage(mirror).metrics.checks.map((c) => c.name);
    expect(names).toContain("M1 QN-60 (invented): ID within ID(max)");
    expect(names).toContain("M2 QN-60 (invented): |VDS| within VDS(max)");
    // RREF of 10 Ω forces about (12 − VGS)/10 ≈ 0.9 A through M1: over its 300 mA rating.
    const hard = parseDesign({ topology: "current-mirror", device: { part: partJson }, devices: { reference: { part: partJson } }, components: { rref: "10", vout: "6 V" }, supplies: { vdd: "12 V" } }, "m.json");
    const m1 = analyzeStage(hard).metrics.checks.find((c) => c.name === "M1 QN-60 (invented): ID within ID(max)")!;
    expect(m1.passed).toBe(false);
    expect(m1.value).toBeGreaterThan(0.3);
    const pPart = { ...partJson, name: "QP-60 (invented)", polarity: "pmos" };
    const dl = parseDesign({ topology: "diode-load", device: { part: partJson }, devices: { load: { part: pPart } }, components: { vg: "2.3 V" }, supplies: { vdd: "12 V" } }, "d.json");
    const dlNames = analyzeStage(dl).metrics.checks.map((c) => c.name);
    expect(dlNames).toContain("driver QN-60 (invented): |VGS| within VGS(max)");
    expect(dlNames).toContain("load QP-60 (invented): junction temperature within TJ(max)");
  });

  it("designs a stage from a specification around the part: its size fixed, its ratings checked on the chosen values", async () => {
    const spec = { id: "10 mA", drain: { vd: "8.5 V" }, source: { vrs: "4 V" }, gate: { current: "50 uA" }, series: "E96" };
    const file = write("spec.json", { name: "QN-60 line stage (invented)", topology: "four-resistor", device: { part: partJson, ambient: "40 degC" }, specification: spec, supplies: { vdd: "12 V" } });
    const r = await run([file, "--json"]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.chosen.device).toEqual({ w: 1e-6, l: 1e-6 });
    expect(j.deviation.id.relative).toBeLessThan(0.02);
    const names = j.operatingPoint.metrics.checks.map((c: { name: string }) => c.name);
    expect(names).toContain("QN-60 (invented): junction temperature within TJ(max)");
    expect(() => parseDesignFile({ topology: "four-resistor", device: { part: partJson }, specification: { ...spec, sizing: { vov: "0.3 V", l: "1 um" } }, supplies: { vdd: "12 V" } }, "s.json")).toThrow(/s\.json: specification\.sizing: .*size is fixed by the part/);
  });
});

describe("junction temperature through the case and a heat sink (device.rthCA)", () => {
  // The invented part with RθJC stated and no RθJA (a package meant for a heat sink); values invented.
  const { rthJA: _free, ...sinkRatings } = partJson.ratings;
  const sinkPart = { ...partJson, name: "QN-60H (invented)", ratings: { ...sinkRatings, rthJC: "50 K/W" } };
  const stageJson = { name: "QN-60H line stage (invented)", topology: "four-resistor", device: { part: sinkPart, ambient: "40 degC" }, components: { rg1: "68k", rg2: "39k", rd: "240", rs: "120" }, supplies: { vdd: "12 V" } };
  const tjCheck = (a: ReturnType<typeof analyzeStage>) => a.metrics.checks.find((c) => c.name === "QN-60H (invented): junction temperature within TJ(max)");

  it("with RθJC only: no TJ check, a caution naming the field that would give one", () => {
    const rec = new Derivation("no sink");
    const a = analyzeStage(parseDesign(stageJson, "s.json"), rec);
    expect(tjCheck(a)).toBeUndefined();
    expect(rec.findings.some((f) => f.severity === "caution" && /RθJC but no RθJA.*rthCA/.test(f.text))).toBe(true);
  });

  it("with the heat sink's RθCA: TJ = TA + P·(RθJC + RθCA) checked against TJ(max), passing and failing", async () => {
    const rec = new Derivation("sink");
    const a = analyzeStage(parseDesign({ ...stageJson, device: { ...stageJson.device, rthCA: "100 K/W" } }, "s.json"), rec);
    const tj = tjCheck(a)!;
    // Hand: TJ = 313.15 K + P·(50 + 100) K/W with P = ID·VDS of the same analysis.
    expect(tj.value).toBeCloseTo(313.15 + a.power.transistor * 150, 9);
    expect(tj.max).toBeCloseTo(423.15, 9);
    expect(tj.passed).toBe(true);
    expect(rec.steps.some((s) => s.kind === "formula" && (s as { formula: string }).formula === "junctionTemperatureThroughCase")).toBe(true);
    expectReevaluates(rec.toJSON());
    // A hot enclosure with a poor heat sink: 130 °C + P·(50 + 1000) K/W is over 150 °C at this bias; exit 1 from the command.
    const hot = { ...stageJson, device: { ...stageJson.device, ambient: "130 degC", rthCA: "1000 K/W" } };
    const r = await captureCli(main, [write("hot-sink.json", hot), "--json"]);
    expect(r.code).toBe(1);
    expect(JSON.parse(r.out).failedChecks.join("\n")).toMatch(/QN-60H \(invented\): junction temperature within TJ\(max\)/);
  });

  it("refuses RθCA beside a card without RθJC, and a bad RθCA, naming the field; a specification takes it too", async () => {
    expect(() => parseDesign({ ...stageJson, device: { part: partJson, rthCA: "100 K/W" } }, "s.json")).toThrow(/s\.json: device\.rthCA: .*RθJC/);
    expect(() => parseDesign({ ...stageJson, device: { ...stageJson.device, rthCA: "-5 K/W" } }, "s.json")).toThrow(/device\.rthCA/);
    expect(() => parseDesign({ ...stageJson, device: { ...stageJson.device, rthCA: "5 V" } }, "s.json")).toThrow(/device\.rthCA/);
    const spec = { id: "10 mA", drain: { vd: "8.5 V" }, source: { vrs: "4 V" }, gate: { current: "50 uA" }, series: "E96" };
    const r = await captureCli(main, [write("spec-sink.json", { name: "QN-60H line stage (invented)", topology: "four-resistor", device: { part: sinkPart, ambient: "40 degC", rthCA: "100 K/W" }, specification: spec, supplies: { vdd: "12 V" } }), "--json"]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    const tj = j.operatingPoint.metrics.checks.find((c: { name: string }) => c.name === "QN-60H (invented): junction temperature within TJ(max)");
    expect(tj.value).toBeCloseTo(313.15 + j.operatingPoint.power.transistor * 150, 9);
  });
});
