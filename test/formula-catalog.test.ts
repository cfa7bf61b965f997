import { describe, expect, it } from "vitest";
import { composition, loadCatalogs, mergeSymbols, refuseRestatements } from "../lib/formulas/generate.js";
import * as e from "../lib/formulas/ekv.formulas.js";
import { wrightOmega } from "../lib/numeric/wright-omega.js";
import { Derivation, type FormulaStep } from "../lib/record/derivation.js";
import { stepTex, substitutedText } from "../lib/record/substitute.js";

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

describe("compositions: a model's hot path generated from its catalog", () => {
  const symbols = {};
  const formulas = {
    vov: { title: "overdrive", result: "VOV", expr: "VGS - Vt" },
    id: { title: "current", result: "ID", expr: "k / 2 * VOV^2" },
    off: { title: "no current", result: "ID", expr: "0 * k" },
  };
  const cat = { file: "c.catalog.ts", symbols, formulas };
  it("inlines the steps in order into one plain-number function, with a choice and an early return", () => {
    const text = composition(cat, "f", { title: "t", inputs: ["k", "Vt", "VGS"], steps: ["vov", { returnWhen: "VOV < -10", value: 0, why: "far off" }, { when: "VOV > 0", then: "id", otherwise: "off" }] });
    expect(text).toContain("export function f(k: number, Vt: number, VGS: number): number {");
    expect(text).toContain("const VOV = (VGS - Vt); // vov");
    expect(text).toContain("if (VOV < (-10)) return 0; // far off");
    expect(text).toMatch(/const ID = VOV > 0 \? .* : .*; \/\/ id \/ off/);
    expect(text).toContain("return ID;");
  });
  it("refuses a step that reads a symbol no input or earlier step gives, a result defined twice, an unread input", () => {
    expect(() => composition(cat, "f", { title: "t", inputs: ["k", "VGS"], steps: ["vov", "id"] })).toThrow(/Vt is neither an input nor the result of an earlier step/);
    expect(() => composition(cat, "f", { title: "t", inputs: ["k", "Vt", "VGS", "VOV"], steps: ["vov"] })).toThrow(/VOV is already defined/);
    expect(() => composition(cat, "f", { title: "t", inputs: ["k", "Vt", "VGS", "W"], steps: ["vov", "id"] })).toThrow(/inputs W are never read/);
    expect(() => composition(cat, "f", { title: "t", inputs: ["k", "Vt", "VGS"], steps: ["vov", { when: "VOV", then: "id", otherwise: "off" }] })).toThrow(/one comparison/);
  });
  it("the generated EKV channel current equals its formulas called one by one (invented card values, 2 000 biases)", () => {
    let seed = 7;
    const rand = () => ((seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32);
    for (let k = 0; k < 2000; k++) {
      const [kp, W, L, Vt0, gamma, phi, lambda, theta, thetaB, Ecrit, sigma, cit] = [1e-4 * (0.5 + rand()), 10e-6, (0.2 + 10 * rand()) * 1e-6, 0.3 + 0.6 * rand(), rand(), 0.5 + 0.6 * rand(), 0.1 * rand(), 0.5 * rand(), 0.2 * rand(), 1e6 + 3e7 * rand(), 0.05 * rand(), 0.4 * rand()];
      const [UT, VGS, VDS, VSB] = [0.02 + 0.015 * rand(), -0.3 + 3.6 * rand(), 3.3 * rand(), 2 * rand()];
      const f = e as unknown as Record<string, { fn: (...a: number[]) => number }>;
      const VGp = f.ekvEffectiveGate!.fn(VGS, VSB, Vt0, sigma, VDS, phi, gamma);
      const VP = VGp > 0 ? f.ekvPinchOffVoltage!.fn(VGp, phi, gamma) : f.ekvPinchOffFloor!.fn(phi);
      const n = f.ekvSlopeFactor!.fn(gamma, VP, phi, UT);
      const Um = f.ekvNormalisingVoltage!.fn(UT, cit, n);
      const qF = f.ekvForwardCharge!.fn(VP, VSB, Um);
      const IC = f.ekvForwardCurrent!.fn(qF);
      const VDSS = f.ekvSaturationVoltage!.fn(f.ekvLongChannelSaturationVoltage!.fn(Um, IC), Ecrit, L, Um);
      const Vip = f.ekvLimitedDrainVoltage!.fn(VDSS, Um, VDS);
      const qR = f.ekvReverseCharge!.fn(VP, VSB, VDS, Vip, Um);
      const IRn = f.ekvReverseCurrent!.fn(qR);
      const beta = f.ekvGainFactor!.fn(kp, W, f.ekvEquivalentLength!.fn(L, VDS, Vip, Ecrit), theta, n, Um, qF, qR, thetaB, VSB);
      const id = IC === 0 ? 0 : f.ekvDrainCurrent!.fn(f.ekvSpecificCurrent!.fn(n, beta, Um), IC, IRn, lambda, VDS);
      expect(e.ekvChannelCurrent(kp, W, L, Vt0, gamma, phi, lambda, theta, thetaB, Ecrit, sigma, cit, UT, VGS, VDS, VSB)).toBe(id);
      expect(e.ekvInversionCoefficient(Vt0, gamma, phi, sigma, cit, UT, VGS, VDS, VSB)).toBe(IC);
    }
  });
});

describe("the Wright ω function (lib/numeric/wright-omega.ts), which solves the EKV charge–voltage relation", () => {
  // accuracy, edges and special values: test/wright-omega.test.ts
  it("is typeset as ω in the formula and in its substituted line, and printed by name in plain text", () => {
    expect(e.ekvForwardCharge.tex).toContain("\\omega\\left(");
    expect(e.ekvForwardCharge.tex).not.toContain("wrightOmega");
    const rec = new Derivation("EKV charge" as never);
    const VP = 0.4;
    const qF = rec.calc(e.ekvForwardCharge, [VP as never, 0 as never, 0.025 as never]);
    expect(2 * qF + Math.log(qF)).toBeCloseTo(VP / 0.025, 12);
    const step = rec.steps.find((st): st is FormulaStep => st.kind === "formula")!;
    expect(stepTex(step).substituted).toMatch(/\\omega\\left\(.*400\\,\\mathrm\{m\}\\mathrm\{V\}/);
    expect(substitutedText(step)).toMatch(/^wrightOmega\(/);
  });
  it("gives q of 2q + ln q = v through q = ω(v + ln 2)/2, as the EKV charge formulas state it", () => {
    for (const v of [-30, -5, -1, 0, 0.7, 3, 12, 80]) {
      const q = wrightOmega(v + Math.LN2) / 2;
      expect(2 * q + Math.log(q)).toBeCloseTo(v, 12);
    }
  });
});
