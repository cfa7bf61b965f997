import { describe, expect, it } from "vitest";
import { keptCases, keptFailures, maxCases, toleranceAnalysis } from "../lib/bias/tolerance.js";
import { analyzeStage } from "../lib/bias/analyze.js";
import { cardAtTemperature } from "../lib/device/temperature.js";
import { InputError } from "../lib/errors.js";
import { celsius, type Kelvin, type Meters, type Ohms, type Volts } from "../lib/quantity.js";
import { Derivation } from "../lib/record/derivation.js";
import type { DeviceCard } from "../lib/device/card.js";
import type { Stage } from "../lib/bias/topology.js";

// Invented card and stages.
const card = { name: "tol-n (invented)", polarity: "nmos", kp: 200e-6, vt0: 0.6 } as DeviceCard;
const dev = { card, w: 10e-6 as Meters, l: 1e-6 as Meters };
const fixedGate: Stage = { topology: "fixed-gate", device: dev, components: { vg: 1.5, rd: 2000 }, supplies: { vdd: 5 as Volts } };
const fourR: Stage = { topology: "four-resistor", device: dev, components: { rg1: 30000, rg2: 22000, rd: 1800, rs: 1200 }, supplies: { vdd: 5 as Volts } };

describe("toleranceAnalysis: worst-case corners", () => {
  it("fixed gate, no source resistor: ID spread from Vt and k' matches the square law by hand", () => {
    // ID = (k'·W/L/2)·(VG − Vt)²: k' ±10 %, Vt ±50 mV →
    // max 1.1·1 mA/V²·(0.95 V)² = 0.99275 mA, min 0.9·1 mA/V²·(0.85 V)² = 0.65025 mA, nominal 0.81 mA.
    // VD = 5 − ID·RD with RD ±5 %: min 5 − 0.99275 mA·2.1 kΩ = 2.915225 V, max 5 − 0.65025 mA·1.9 kΩ = 3.764525 V.
    const rec = new Derivation("fixed-gate tolerance");
    const r = toleranceAnalysis(fixedGate, { resistors: 0.05, process: { vt0: 0.05 as Volts, kp: 0.1 } }, rec);
    expect(r.method).toBe("corners");
    expect(r.cases).toHaveLength(8); // rd, Vt, k' at both ends
    expect(r.id.nominal).toBeCloseTo(0.81e-3, 15);
    expect(r.id.max).toBeCloseTo(0.99275e-3, 15);
    expect(r.id.min).toBeCloseTo(0.65025e-3, 15);
    expect(r.id.maxAt).toMatch(/Vt− k'\+/);
    expect(r.vd.min).toBeCloseTo(2.915225, 12);
    expect(r.vd.max).toBeCloseTo(3.764525, 12);
    expect(r.allInSaturation).toBe(true);
    expect(rec.checks.at(-1)!.passed).toBe(true);
    expect(rec.steps.some((s) => s.kind === "note" && /8 cases: rd ±5 %, Vt ±50 mV, k' ±10 %/.test(s.text))).toBe(true);
  });

  it("PMOS mirror of the same stage gives the same spread (Vt+ means a larger |Vt|)", () => {
    const pCard = { ...card, name: "tol-p (invented)", polarity: "pmos", vt0: -0.6 } as DeviceCard;
    const p: Stage = { topology: "fixed-gate", device: { ...dev, card: pCard }, components: { vg: 0, rd: 2000 }, supplies: { vdd: 1.5 as Volts, vss: -3.5 as Volts } };
    const r = toleranceAnalysis(p, { resistors: 0.05, process: { vt0: 0.05 as Volts, kp: 0.1 } });
    expect(r.id.max).toBeCloseTo(0.99275e-3, 15);
    expect(r.id.min).toBeCloseTo(0.65025e-3, 15);
    expect(r.id.maxAt).toMatch(/Vt− k'\+/);
  });

  it("uses the series' IEC 60063 band when no resistor tolerance is stated, and the card's own spread", () => {
    const withSpread = { ...fourR, device: { ...dev, card: { ...card, spread: { vt0: 0.1, kp: 0.2 } } as DeviceCard } };
    const r = toleranceAnalysis(withSpread, { series: "E96" });
    expect(r.parameters.map((p) => [p.name, p.band])).toEqual([["rg1", 0.01], ["rg2", 0.01], ["rd", 0.01], ["rs", 0.01], ["Vt", 0.1], ["k'", 0.2]]);
    expect(r.cases).toHaveLength(64);
    const r24 = toleranceAnalysis(fourR);
    expect(r24.parameters.every((p) => p.band === 0.05)).toBe(true); // E24's 5 % when nothing is stated
  });

  it("corners bound the stage: every interior point lies within them (four-resistor, monotone in each part)", () => {
    const spec = { resistors: 0.05, process: { vt0: 0.05 as Volts, kp: 0.1 } };
    const corners = toleranceAnalysis(fourR, spec);
    const mc = toleranceAnalysis(fourR, { ...spec, monteCarlo: { samples: 300, seed: 42 } });
    expect(mc.method).toBe("monte-carlo");
    expect(mc.cases).toHaveLength(300);
    expect(mc.id.min).toBeGreaterThanOrEqual(corners.id.min);
    expect(mc.id.max).toBeLessThanOrEqual(corners.id.max);
    expect(mc.vd.min).toBeGreaterThanOrEqual(corners.vd.min);
    expect(mc.vd.max).toBeLessThanOrEqual(corners.vd.max);
    // The sample spreads out: it is not stuck at the nominal point.
    expect(mc.id.max - mc.id.min).toBeGreaterThan(0.5 * (corners.id.max - corners.id.min));
  });

  it("temperature corners go through cardAtTemperature", () => {
    const hot = celsius(85);
    const cold = celsius(-40);
    const r = toleranceAnalysis(fixedGate, { resistors: 0, temperatures: [cold, hot] });
    expect(r.cases).toHaveLength(2); // a zero band is no parameter: one case per temperature
    const hotCase = r.cases.find((c) => c.temperature === hot)!;
    const expected = analyzeStage({ ...fixedGate, device: { ...dev, card: cardAtTemperature(card, hot) } });
    expect(hotCase.id).toBeCloseTo(expected.currents.drainMagnitude!, 15);
    expect(r.id.maxAt).toMatch(/-40 °C/); // mobility falls with temperature: at VOV = 0.9 V the current falls too
  });
});

describe("toleranceAnalysis: failures and generic solve", () => {
  it("reports cases that leave saturation, with a failed check", () => {
    // A drain resistor large enough that the high-current corners push the device into triode.
    const tight: Stage = { ...fixedGate, components: { vg: 1.5, rd: 4500 } };
    const rec = new Derivation("tight");
    const r = toleranceAnalysis(tight, { resistors: 0.1, process: { vt0: 0.1 as Volts, kp: 0.2 } }, rec);
    expect(r.allInSaturation).toBe(false);
    expect(r.failures.length).toBeGreaterThan(0);
    expect(r.failures.every((f) => f.region === "triode")).toBe(true);
    expect(r.saturationMargin.min).toBeLessThan(0);
    expect(rec.checks.at(-1)!.passed).toBe(false);
    expect(rec.findings.some((f) => f.severity === "warning" && /leave saturation/.test(f.text))).toBe(true);
  });

  it("moves every transistor of a stage together: a 1:1 mirror (λ = 0) copies its reference in every corner", () => {
    const mirror: Stage = {
      topology: "current-mirror",
      device: dev,
      devices: { reference: dev },
      components: { rref: 4100, rload: 2350 },
      supplies: { vdd: 5 as Volts },
    };
    const seen: Array<[number, number]> = [];
    const r = toleranceAnalysis(mirror, {
      resistors: 0.05,
      process: { vt0: 0.05 as Volts, kp: 0.1 },
      temperatures: [celsius(0), celsius(70)],
      solve: (st) => {
        const a = analyzeStage(st);
        seen.push([a.currents.drainMagnitude!, a.currents.reference!]);
        return a;
      },
    });
    expect(r.cases).toHaveLength(2 ** 4 * 2);
    expect(r.id.max).toBeGreaterThan(r.id.min * 1.05); // the corners do move the current
    for (const [out, ref] of seen) expect(out).toBeCloseTo(ref, 15);
  });

  it("is generic over the solve function", () => {
    let calls = 0;
    const r = toleranceAnalysis(fourR, {
      resistors: 0.01,
      solve: (st) => {
        calls++;
        return analyzeStage(st);
      },
    });
    expect(calls).toBe(r.cases.length + 1);
  });

  it("Monte Carlo is reproducible from its seed", () => {
    const a = toleranceAnalysis(fourR, { monteCarlo: { samples: 20, seed: 1, distribution: "normal" }, process: { vt0: 0.05 as Volts } });
    const b = toleranceAnalysis(fourR, { monteCarlo: { samples: 20, seed: 1, distribution: "normal" }, process: { vt0: 0.05 as Volts } });
    const c = toleranceAnalysis(fourR, { monteCarlo: { samples: 20, seed: 2, distribution: "normal" }, process: { vt0: 0.05 as Volts } });
    expect(a.cases.map((x) => x.id)).toEqual(b.cases.map((x) => x.id));
    expect(a.cases.map((x) => x.id)).not.toEqual(c.cases.map((x) => x.id));
  });

  it("rejects bad input with typed errors", () => {
    expect(() => toleranceAnalysis(fourR, { resistors: 1.5 })).toThrow(/tolerance.resistors: got 1.5/);
    expect(() => toleranceAnalysis(fourR, { resistors: { rd: -0.1 } })).toThrow(/tolerance.resistors.rd/);
    expect(() => toleranceAnalysis(fourR, { process: { vt0: -0.1 as Volts } })).toThrow(InputError);
    expect(() => toleranceAnalysis(fourR, { temperatures: [-5 as Kelvin] })).toThrow(/temperatures\[0\]/);
    expect(() => toleranceAnalysis(fourR, { monteCarlo: { samples: 0, seed: 1 } })).toThrow(/samples/);
    expect(() => toleranceAnalysis(fourR, { monteCarlo: { samples: 5, seed: 1.5 } })).toThrow(/seed/);
    expect(() => toleranceAnalysis({ ...fourR, components: { ...fourR.components, rd: -5 as Ohms } })).toThrow();
  });
});

describe("toleranceAnalysis: streamed, bounded (issue 7 items 11 and 15)", () => {
  const spec = { resistors: 0.05, process: { vt0: 0.05 as Volts, kp: 0.1 } };
  it("keeps a bounded sample of cases while aggregating every one, and the spread equals the full run's", () => {
    const mc = toleranceAnalysis(fourR, { ...spec, monteCarlo: { samples: 2500, seed: 7 } });
    expect(mc.caseCount).toBe(2500);
    expect(mc.cases).toHaveLength(keptCases);
    // The same draws, solved by hand and aggregated in full, give the same extremes.
    let min = mc.nominal.id!;
    let max = min;
    const first = toleranceAnalysis(fourR, { ...spec, monteCarlo: { samples: keptCases, seed: 7 } });
    for (const c of first.cases) [min, max] = [Math.min(min, c.id!), Math.max(max, c.id!)];
    expect(mc.id.min).toBeLessThanOrEqual(min);
    expect(mc.id.max).toBeGreaterThanOrEqual(max);
    expect(first.cases.map((c) => c.id)).toEqual(mc.cases.map((c) => c.id));
  });
  it("counts every failure but keeps only the first keptFailures", () => {
    // VG = 0.62 V against Vt 0.6 ± 0.05 V: about a quarter of the draws are cut off.
    const marginal: Stage = { ...fixedGate, components: { vg: 0.62, rd: 2000 } };
    const r = toleranceAnalysis(marginal, { ...spec, monteCarlo: { samples: 1000, seed: 3 } });
    expect(r.failureCount).toBeGreaterThan(keptFailures);
    expect(r.failures).toHaveLength(keptFailures);
    expect(r.allInSaturation).toBe(false);
    const rec = new Derivation("t");
    toleranceAnalysis(marginal, { ...spec, monteCarlo: { samples: 1000, seed: 3 } }, rec);
    expect(rec.findings.some((f) => f.text.startsWith(`${r.failureCount} of 1000 cases`))).toBe(true);
  });
  it("refuses more than maxCases in all, samples × temperatures, before solving any", () => {
    const temps = Array.from({ length: 50 }, (_, i) => (250 + i) as Kelvin);
    const run = () => toleranceAnalysis(fourR, { ...spec, temperatures: temps, monteCarlo: { samples: 50_000, seed: 1 } });
    expect(run).toThrow(InputError);
    expect(run).toThrow(new RegExp(`tolerance\\.monteCarlo: got 2500000, expected at most ${maxCases} cases in all \\(50000 samples × 50 temperatures`));
  });
  it("validates the seed as an integer in [0, 2³²): 0 and 2³² no longer alias", () => {
    for (const seed of [2 ** 32, -1, 1.5, NaN])
      expect(() => toleranceAnalysis(fourR, { ...spec, monteCarlo: { samples: 2, seed } })).toThrow(/tolerance\.monteCarlo\.seed: got .*, expected an integer seed from 0 to 4294967295/);
    const a = toleranceAnalysis(fourR, { ...spec, monteCarlo: { samples: 5, seed: 0 } });
    const b = toleranceAnalysis(fourR, { ...spec, monteCarlo: { samples: 5, seed: 2 ** 32 - 1 } });
    expect(a.cases.map((c) => c.id)).not.toEqual(b.cases.map((c) => c.id));
  });
});
