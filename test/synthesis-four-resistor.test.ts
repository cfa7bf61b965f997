import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { synthesizeFourResistor } from "../lib/bias/synthesis.js";
import { toleranceAnalysis } from "../lib/bias/tolerance.js";
import { stageCircuit } from "../lib/bias/analyze.js";
import { isStandard } from "../lib/bias/eseries.js";
import { InfeasibleError, InputError } from "../lib/errors.js";
import { Derivation } from "../lib/record/derivation.js";
import type { DeviceCard } from "../lib/device/card.js";
import { amperesPerVoltSquared, perVolt, sqrtVolts, type Amperes, type Meters, type Volts, type Watts } from "../lib/quantity.js";
import { runNgspice } from "./support/ngspice.js";
import { designShape, type FlatCase } from "./support/design-shape.js";

// Cards invented for the tests.
const nCard = { name: "test-n (invented)", polarity: "nmos", kp: 200e-6, vt0: 0.6 } as DeviceCard;
const pCard = { name: "test-p (invented)", polarity: "pmos", kp: 80e-6, vt0: -0.7, lambda: 0.03, gamma: 0.4, phi: 0.7 } as DeviceCard;
const V = (x: number) => x as Volts;
const A = (x: number) => x as Amperes;
const m = (x: number) => x as Meters;

const base: FlatCase = { topology: "four-resistor", card: nCard, supplies: { vdd: V(5) }, id: A(1e-3), sizing: { vov: V(0.3), l: m(1e-6) } };

describe("four-resistor synthesis: ideal values", () => {
  it("matches a hand calculation with the square law (λ = 0, γ = 0; invented example)", () => {
    // By hand: VRS = 5/4 = 1.25 V → RS = 1.25 V / 1 mA = 1250 Ω; VG = 1.25 + 0.6 + 0.3 = 2.15 V;
    // VD = (5 + 2.15 − 0.6)/2 = 3.275 V → RD = 1.725 V / 1 mA = 1725 Ω; Idiv = 0.1 mA →
    // RG1 = 2.85 V / 0.1 mA = 28.5 kΩ, RG2 = 2.15 V / 0.1 mA = 21.5 kΩ; W/L = 2·1 mA/(200 µA/V²·0.09 V²) = 111.1.
    const rec = new Derivation("hand check");
    const r = synthesizeFourResistor(designShape({ ...base, series: "exact" }), rec);
    const c = r.ideal.components;
    expect(c.rs).toBeCloseTo(1250, 9);
    expect(c.rd).toBeCloseTo(1725, 9);
    expect(c.rg1).toBeCloseTo(28500, 7);
    expect(c.rg2).toBeCloseTo(21500, 7);
    expect(r.ideal.vg).toBeCloseTo(2.15, 12);
    expect(r.ideal.vd).toBeCloseTo(3.275, 12);
    expect(r.ideal.wl).toBeCloseTo(2e-3 / (200e-6 * 0.09), 9);
    expect(r.ideal.w).toBeCloseTo((2e-3 / (200e-6 * 0.09)) * 1e-6, 15);
    // Exact values re-solve to the specification.
    expect(r.deviation.id.relative).toBeCloseTo(0, 10);
    expect(r.deviation.output.error).toBeCloseTo(0, 9);
    // The record carries the design formulas and marks the defaults as common practice.
    const formulas = r && rec.steps.flatMap((s) => (s.kind === "formula" ? [s.formula] : []));
    for (const f of ["sourceDropFromFraction", "sourceResistorForDrop", "aspectRatioForCurrent", "gateNodeForDrive", "midSwingDrain", "drainResistorForNode", "dividerCurrentFromRatio", "dividerToDrainRail", "dividerToSourceRail"])
      expect(formulas).toContain(f);
    expect(rec.assumptions.filter((a) => /common practice/.test(a))).toHaveLength(3);
    expect(rec.findings.some((f) => /verify by simulation/.test(f.text))).toBe(true); // the caution travels with the re-solve
  });

  it("gate divider from an input resistance: RG1 ∥ RG2 = Rin and the divider gives VG", () => {
    const r = synthesizeFourResistor(designShape({ ...base, series: "exact", gate: { rin: 100e3 as never } }));
    const { rg1, rg2 } = r.ideal.components;
    expect((rg1 * rg2) / (rg1 + rg2)).toBeCloseTo(100e3, 6);
    expect((5 * rg2) / (rg1 + rg2)).toBeCloseTo(r.ideal.vg, 12);
  });

  it("W/L given: the overdrive follows from ID (square law)", () => {
    const r = synthesizeFourResistor(designShape({ ...base, series: "exact", sizing: { w: m(50e-6), l: m(1e-6) } }));
    expect(r.ideal.vov).toBeCloseTo(Math.sqrt((2 * 1e-3) / (200e-6 * 50)), 12);
    expect(r.deviation.id.relative).toBeCloseTo(0, 10);
  });
});

describe("four-resistor synthesis: standard values", () => {
  it("chooses E24 values as a set, better than rounding each, and re-solves them", () => {
    const rec = new Derivation("E24");
    const r = synthesizeFourResistor(designShape(base), rec);
    for (const v of Object.values(r.stage.components)) expect(isStandard(v, "E24")).toBe(true);
    expect(r.snap!.score).toBeLessThan(r.snap!.nearestScore);
    expect(r.snap!.combinationsTried).toBe(16);
    expect(r.deviation.inSaturation).toBe(true);
    // The reported deviation is what the analysis of the chosen stage gives.
    expect(r.deviation.id.achieved).toBe(r.analysis.currents.drainMagnitude);
    expect(Math.abs(r.deviation.id.relative)).toBeLessThan(0.05);
    expect(rec.checks.some((c) => /^Saturation margin VDS − VOV/.test(c.title) && c.passed)).toBe(true); // recorded by the re-solve
  });

  it("PMOS with body at the rail and a gain target: E96 values, cross-checked with ngspice Level 1", () => {
    const spec: FlatCase = { ...base, card: pCard, id: A(0.5e-3), sizing: { vov: V(0.4), l: m(1e-6) }, body: "rail", drain: { gain: 8 }, series: "E96" };
    const exact = synthesizeFourResistor(designShape({ ...spec, series: "exact" }));
    expect(exact.deviation.gain!.relative).toBeCloseTo(0, 9); // the gain inverse matches the analysis' degenerated/bypassed forms
    const r = synthesizeFourResistor(designShape(spec));
    expect(Math.abs(r.deviation.gain!.relative)).toBeLessThan(0.02);
    // Oracle: ngspice (Debian package, SPICE Level 1) on the chosen stage's own deck.
    const c = stageCircuit(r.stage);
    const out = new Map(runNgspice({ circuit: c.lines.join("\n"), control: `op\nprint v(${c.nodes.drain})\nprint i(${c.drainAmmeter})\nquit 0` }));
    expect(out.get(`v(${c.nodes.drain})`)!).toBeCloseTo(r.analysis.nodes.drain!, 6);
    expect(Math.abs(out.get(`i(${c.drainAmmeter.toLowerCase()})`)!)).toBeCloseTo(r.analysis.currents.drainMagnitude!, 9);
  });

  it("checks dissipation of the chosen design when limits are given", () => {
    const r = synthesizeFourResistor(designShape({ ...base, id: A(20e-3), dissipation: { resistor: { rating: 0.25 as Watts, derating: 0.5 }, transistor: { rating: 0.5 as Watts } } }));
    const rd = r.dissipation!.items.find((i) => i.name === "rd")!;
    expect(rd.power).toBeCloseTo(r.analysis.currents.rd! ** 2 * r.stage.components.rd, 12);
    expect(rd.power).toBeCloseTo(r.analysis.power.components.rd!, 9); // agrees with the analysis' own power figure
    expect(rd.passed).toBe(rd.power <= 0.125);
    expect(r.dissipation!.passed).toBe(r.dissipation!.items.every((i) => i.passed));
  });
});

// Random specifications that are mostly feasible (the rest raise InfeasibleError and are skipped).
const specArb = fc.record({
  pmos: fc.boolean(),
  vdd: fc.double({ min: 3, max: 15, noNaN: true }),
  vss: fc.constantFrom(0, -2.5),
  id: fc.double({ min: 1e-5, max: 1e-2, noNaN: true }),
  vov: fc.double({ min: 0.1, max: 0.6, noNaN: true }),
  vt: fc.double({ min: 0.3, max: 1.0, noNaN: true }),
  kp: fc.double({ min: 2e-5, max: 5e-4, noNaN: true }),
  lambda: fc.constantFrom(0, 0.01, 0.05),
  gamma: fc.constantFrom(0, 0.4),
  body: fc.constantFrom("source" as const, "rail" as const),
  fraction: fc.double({ min: 0.15, max: 0.35, noNaN: true }),
  gain: fc.option(fc.double({ min: 1, max: 6, noNaN: true }), { nil: undefined }),
  bypassed: fc.boolean(),
});
type SpecDraw = typeof specArb extends fc.Arbitrary<infer T> ? T : never;
const toSpec = (g: SpecDraw, series: FlatCase["series"]): FlatCase => ({
  topology: "four-resistor",
  card: { name: "random (invented)", polarity: g.pmos ? "pmos" : "nmos", kp: amperesPerVoltSquared(g.kp), vt0: V(g.pmos ? -g.vt : g.vt), lambda: perVolt(g.lambda), gamma: sqrtVolts(g.gamma), phi: V(0.7) },
  supplies: { vdd: V(g.vdd), vss: V(g.vss) },
  id: A(g.id),
  sizing: { vov: V(g.vov), l: m(1e-6) },
  body: g.body,
  source: { fraction: g.fraction },
  ...(g.gain !== undefined ? { drain: { gain: g.gain }, bypassed: g.bypassed } : {}),
  series,
});
const attempt = (spec: FlatCase) => {
  try {
    return synthesizeFourResistor(designShape(spec));
  } catch (e) {
    if (e instanceof InfeasibleError) return undefined;
    throw e;
  }
};

describe("four-resistor synthesis: properties", () => {
  it("with snapping disabled, analysis reproduces ID, VD and gain of the specification", () => {
    let solved = 0;
    fc.assert(
      fc.property(specArb, (g) => {
        const r = attempt(toSpec(g, "exact"));
        if (!r) return;
        solved++;
        expect(Math.abs(r.deviation.id.relative)).toBeLessThan(1e-9);
        expect(Math.abs(r.deviation.output.error)).toBeLessThan(1e-8);
        if (r.deviation.gain) expect(Math.abs(r.deviation.gain.relative)).toBeLessThan(1e-8);
        expect(r.deviation.inSaturation).toBe(true);
      }),
      { numRuns: 150, seed: 20261202 },
    );
    expect(solved).toBeGreaterThan(75);
  });

  it("with snapping, the deviation lies within the worst-case spread the values' own deviations explain", () => {
    // Every chosen resistor lies within ±d of its ideal value (d = the largest relative
    // deviation); in saturation ID and VD are monotone in each resistor, so the worst-case
    // corners of the ideal stage with ±d resistors bound what the chosen values can give.
    let solved = 0;
    fc.assert(
      fc.property(specArb, fc.constantFrom("E24" as const, "E96" as const, "E192" as const), (g, series) => {
        const r = attempt(toSpec(g, series));
        if (!r) return;
        const d = Math.max(...r.snap!.components.map((c) => Math.abs(c.deviation)));
        const t = toleranceAnalysis(r.idealStage, { resistors: d });
        if (!t.allInSaturation) return;
        solved++;
        const eps = 1e-9;
        expect(r.deviation.id.achieved).toBeGreaterThanOrEqual(t.id.min * (1 - eps));
        expect(r.deviation.id.achieved).toBeLessThanOrEqual(t.id.max * (1 + eps));
        expect(r.analysis.nodes.drain!).toBeGreaterThanOrEqual(t.vd.min - eps);
        expect(r.analysis.nodes.drain!).toBeLessThanOrEqual(t.vd.max + eps);
        expect(r.snap!.score).toBeLessThanOrEqual(r.snap!.nearestScore);
        // E192 values are at most one step (≈1.2 %) from the ideal.
        if (series === "E192") expect(d).toBeLessThan(0.013);
      }),
      { numRuns: 60, seed: 7 },
    );
    expect(solved).toBeGreaterThan(25);
  });
});

describe("four-resistor synthesis: infeasible and bad specifications", () => {
  it("explains infeasibility in numbers", () => {
    // VG = VRS + Vt + VOV = 1.25 + 0.6 + 3.5 = 5.35 V > VDD.
    expect(() => synthesizeFourResistor(designShape({ ...base, sizing: { vov: V(3.5), l: m(1e-6) } }))).toThrow(InfeasibleError);
    expect(() => synthesizeFourResistor(designShape({ ...base, sizing: { vov: V(3.5), l: m(1e-6) } }))).toThrow(/gate would have to sit at 5\.35 V .*beyond the VDD rail at 5 V/);
    expect(() => synthesizeFourResistor(designShape({ ...base, drain: { vd: V(1.4) } }))).toThrow(/below the triode edge VG − Vt = 1\.55 V.*triode/);
    expect(() => synthesizeFourResistor(designShape({ ...base, drain: { vd: V(5.5) } }))).toThrow(/RD would come out negative/);
    expect(() => synthesizeFourResistor(designShape({ ...base, card: { ...nCard, lambda: 0.1 } as DeviceCard, drain: { gain: 100 } }))).toThrow(/exceeds the device's intrinsic gain/);
    expect(() => synthesizeFourResistor(designShape({ ...base, drain: { gain: 40 } }))).toThrow(/triode/);
    expect(() => synthesizeFourResistor(designShape({ ...base, source: { vrs: V(6) } }))).toThrow(/leaves nothing of the 5 V rail span/);
  });

  it("rejects bad input with typed errors naming the field", () => {
    expect(() => synthesizeFourResistor(designShape({ ...base, id: A(-1) }))).toThrow(/four-resistor spec.id: got -1/);
    expect(() => synthesizeFourResistor(designShape({ ...base, id: A(Number.NaN) }))).toThrow(InputError);
    expect(() => synthesizeFourResistor(designShape({ ...base, supplies: { vdd: V(5), vss: V(6) } }))).toThrow(/supplies.vss/);
    expect(() => synthesizeFourResistor(designShape({ ...base, sizing: { l: m(1e-6) } as never }))).toThrow(/sizing with either vov/);
    expect(() => synthesizeFourResistor(designShape({ ...base, series: "E20" as never }))).toThrow(/four-resistor spec.series/);
    expect(() => synthesizeFourResistor(designShape({ ...base, source: { fraction: 1.2 } }))).toThrow(/source.fraction/);
    expect(() => synthesizeFourResistor(designShape({ ...base, drain: { gain: -3 } }))).toThrow(/drain.gain/);
    expect(() => synthesizeFourResistor(designShape({ ...base, gate: { ratio: 0 } }))).toThrow(/gate.ratio/);
  });
});
