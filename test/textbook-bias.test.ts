/**
 * Worked bias examples from a named textbook. The problem data and answers are
 * recalled from memory (the book was not at hand); each recalled answer is
 * checked to be self-consistent with the square law before it is used, and the
 * example numbers are as recalled.
 *
 * Source: A. S. Sedra & K. C. Smith, Microelectronic Circuits, 5th ed., Oxford
 * University Press, 2004, chapter 4 (MOS field-effect transistors).
 */
import { describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import type { Stage } from "../lib/bias/topology.js";
import type { DeviceCard } from "../lib/device/card.js";
import { Derivation, type FormulaStep } from "../lib/record/derivation.js";

const nmos = (kp: number, vt0: number): DeviceCard => ({ name: "textbook NMOS", polarity: "nmos", kp: kp as DeviceCard["kp"], vt0: vt0 as DeviceCard["vt0"] });
const formulaSteps = (rec: Derivation) => rec.steps.filter((s): s is FormulaStep => s.kind === "formula");

describe("Sedra & Smith, Microelectronic Circuits, 5th ed. (2004), chapter 4 — from memory", () => {
  it("Example 4.2 (from memory): gate grounded, ±2.5 V, RD = 5 kΩ, RS = 3.25 kΩ gives ID = 0.4 mA, VD = 0.5 V, VS = −1.2 V", () => {
    // Vt = 0.7 V, µnCox = 100 µA/V², W/L = 32 µm / 1 µm, λ = 0.
    const stage: Stage = {
      topology: "fixed-gate",
      device: { card: nmos(100e-6, 0.7), w: 32e-6 as Stage["device"]["w"], l: 1e-6 as Stage["device"]["l"] },
      components: { vg: 0, rd: 5e3, rs: 3.25e3 },
      supplies: { vdd: 2.5, vss: -2.5 } as Stage["supplies"],
    };
    const a = analyzeStage(stage);
    expect(a.region).toBe("saturation");
    expect(a.currents.drainMagnitude).toBeCloseTo(0.4e-3, 12);
    expect(a.nodes.drain).toBeCloseTo(0.5, 9);
    expect(a.nodes.source).toBeCloseTo(-1.2, 9);
    expect(a.op.vov).toBeCloseTo(0.5, 9);
    expect(a.solver.method).toBe("closed-form");
  });

  it("Example 4.3 (from memory): drain tied to gate, R = 25 kΩ from 3 V gives ID = 80 µA and VD = VGS = 1.0 V", () => {
    // Vt = 0.6 V, µnCox = 200 µA/V², W/L = 4 µm / 0.8 µm, λ = 0. The gate-drain tie is modelled as RF
    // (1 MΩ, our choice): it carries no DC current, so its value does not enter.
    const stage: Stage = {
      topology: "drain-feedback",
      device: { card: nmos(200e-6, 0.6), w: 4e-6 as Stage["device"]["w"], l: 0.8e-6 as Stage["device"]["l"] },
      components: { rf: 1e6, rd: 25e3 },
      supplies: { vdd: 3 } as Stage["supplies"],
    };
    const rec = new Derivation("Sedra & Smith 5th ed. Example 4.3");
    const a = analyzeStage(stage, rec);
    expect(a.region).toBe("saturation");
    expect(a.currents.drainMagnitude).toBeCloseTo(80e-6, 12);
    expect(a.nodes.drain).toBeCloseTo(1.0, 9);
    expect(a.nodes.gate).toBe(a.nodes.drain);
  });

  it("Example 4.4 (from memory): gate at VDD = 5 V and VD = 0.1 V puts the device in triode with ID = 0.395 mA", () => {
    // Vt = 1 V, k'n·W/L = 1 mA/V²; the book finds RD = 4.9 V / 0.395 mA ≈ 12.4 kΩ and rDS ≈ 253 Ω.
    const rd = 4.9 / 0.395e-3;
    const stage: Stage = {
      topology: "fixed-gate",
      device: { card: nmos(1e-3, 1), w: 1e-6 as Stage["device"]["w"], l: 1e-6 as Stage["device"]["l"] },
      components: { vg: 5, rd },
      supplies: { vdd: 5 } as Stage["supplies"],
    };
    const rec = new Derivation("Sedra & Smith 5th ed. Example 4.4");
    const a = analyzeStage(stage, rec);
    expect(a.region).toBe("triode");
    expect(a.nodes.drain).toBeCloseTo(0.1, 9);
    expect(a.currents.drainMagnitude).toBeCloseTo(0.395e-3, 12);
    expect(a.nodes.drain! / a.currents.drainMagnitude!).toBeCloseTo(253.2, 1);
    // The record shows the saturation assumption failing and the triode re-solve.
    const titles = rec.steps.map((s) => s.title);
    expect(titles).toContain("Assumption fails");
    expect(formulaSteps(rec).some((s) => s.formula === "triodeDrainSource")).toBe(true);
  });

  it("Example 4.5 (from memory): RG1 = RG2 = 10 MΩ, RD = RS = 6 kΩ, VDD = 10 V gives VG = 5 V, ID = 0.5 mA, VS = 3 V, VD = 7 V; root ID = 0.89 mA rejected", () => {
    // Vt = 1 V, k'n·W/L = 1 mA/V², λ = 0.
    const stage: Stage = {
      topology: "four-resistor",
      device: { card: nmos(1e-3, 1), w: 1e-6 as Stage["device"]["w"], l: 1e-6 as Stage["device"]["l"] },
      components: { rg1: 10e6, rg2: 10e6, rd: 6e3, rs: 6e3 },
      supplies: { vdd: 10 } as Stage["supplies"],
    };
    const rec = new Derivation("Sedra & Smith 5th ed. Example 4.5");
    const a = analyzeStage(stage, rec);
    expect(a.region).toBe("saturation");
    expect(a.nodes.gate).toBeCloseTo(5, 12);
    expect(a.currents.drainMagnitude).toBeCloseTo(0.5e-3, 12);
    expect(a.nodes.source).toBeCloseTo(3, 9);
    expect(a.nodes.drain).toBeCloseTo(7, 9);
    // Both roots of the quadratic are on the record; the rejected one is VOV' = −4/3 V, i.e. ID' = 0.89 mA.
    const steps = formulaSteps(rec);
    const kept = steps.find((s) => s.formula === "degeneratedOverdrive")!;
    const rejected = steps.find((s) => s.formula === "degeneratedOverdriveRejected")!;
    expect(kept.result.value).toBeCloseTo(1, 12);
    expect(rejected.result.value).toBeCloseTo(-4 / 3, 12);
    expect(0.5e-3 * rejected.result.value ** 2).toBeCloseTo(0.889e-3, 6);
    expect(rec.steps.some((s) => s.kind === "note" && s.title === "Root rejected")).toBe(true);
  });

  it("Example 4.7 (from memory): PMOS, VDD = 5 V, divider 2 MΩ / 3 MΩ, RD = 6 kΩ gives ID = 0.5 mA and VD = 3 V", () => {
    // Vt = −1 V, k'p·W/L = 1 mA/V², λ = 0; source at VDD (RS = 0).
    const stage: Stage = {
      topology: "four-resistor",
      device: { card: { name: "textbook PMOS", polarity: "pmos", kp: 1e-3 as DeviceCard["kp"], vt0: -1 as DeviceCard["vt0"] }, w: 1e-6 as Stage["device"]["w"], l: 1e-6 as Stage["device"]["l"] },
      components: { rg1: 2e6, rg2: 3e6, rd: 6e3, rs: 0 },
      supplies: { vdd: 5 } as Stage["supplies"],
    };
    const a = analyzeStage(stage);
    expect(a.region).toBe("saturation");
    expect(a.nodes.gate).toBeCloseTo(3, 12);
    expect(a.currents.drainMagnitude).toBeCloseTo(0.5e-3, 12);
    expect(a.op.id).toBeCloseTo(-0.5e-3, 12); // SPICE sign: current into a PMOS drain is negative
    expect(a.nodes.drain).toBeCloseTo(3, 9);
  });
});
