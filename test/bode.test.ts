/**
 * Bode plot: the hand transfer function drawn, its corners marked where |H| is
 * 3 dB below midband, and ngspice 39 Level 1's response (the exported deck)
 * overlaid and close to it in the midband and at the corners.
 */
import { describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { analyzeFrequency, handResponse } from "../lib/bias/frequency.js";
import { simulateFrequency } from "../lib/bias/frequency-sim.js";
import type { Stage } from "../lib/bias/topology.js";
import { bodePlot } from "../lib/plot/bode.js";
import { amperesPerVoltSquared, farads, hertz, meters, ohms, perVolt, volts } from "../lib/quantity.js";

// Invented: a PMOS common source on a 25 nm oxide, driven from 2 kΩ into 47 kΩ ∥ 22 pF.
const stage: Stage = {
  topology: "four-resistor",
  name: "sensor buffer (invented)",
  device: {
    card: { name: "test-p", polarity: "pmos", kp: amperesPerVoltSquared(40e-6), vt0: volts(-0.8), lambda: perVolt(0.03), capacitance: { tox: meters(25e-9), cgso: 3e-10 as never, cgdo: 3e-10 as never, cj: 4e-4 as never, cjsw: 3e-10 as never, diffusionLength: meters(2e-6) }, provenance: "invented for the tests" },
    w: meters(60e-6),
    l: meters(1e-6),
  },
  components: { rg1: ohms(330e3), rg2: ohms(820e3), rd: ohms(8.2e3), rs: ohms(2.2e3) },
  supplies: { vdd: volts(9) },
};

describe("Bode plot", () => {
  const dc = analyzeStage(stage as never);
  const fa = analyzeFrequency(stage, dc, { source: { resistance: ohms(2e3) }, load: { resistance: ohms(47e3), capacitance: farads(22e-12) }, targets: { lowCorner: hertz(50) }, series: "E6" });
  it("marks the corners 3 dB below midband on the hand curve", () => {
    const h = handResponse(fa, [fa.low!.corner, fa.high.corner, Math.sqrt(fa.low!.corner * fa.high.corner)]);
    expect(h.magnitude[0]! / Math.abs(fa.midbandGain)).toBeCloseTo(Math.SQRT1_2, 6);
    expect(h.magnitude[1]! / Math.abs(fa.midbandGain)).toBeCloseTo(Math.SQRT1_2, 6);
    expect(h.magnitude[2]! / Math.abs(fa.midbandGain)).toBeGreaterThan(0.99);
    // inverting stage: midband phase ±180°
    expect(Math.abs(Math.abs(h.phaseDeg[2]!) - 180)).toBeLessThan(5);
    const p = bodePlot(fa);
    expect(p.kind).toBe("bode");
    expect(p.figure.data.filter((t) => t.meta?.role === "corner").length).toBeGreaterThanOrEqual(2);
    expect(p.figure.layout.xaxis.type).toBe("log");
  });
  it("overlays ngspice 39 Level 1's response, which agrees with the hand curve within 0.5 dB in the midband and 1 dB at the corners", () => {
    const sim = simulateFrequency(stage, dc, fa);
    const p = bodePlot(fa, { simulated: sim });
    expect(p.figure.data.some((t) => t.meta?.role === "magnitude" && t.meta.source !== "hand")).toBe(true);
    const at = (f: number) => {
      let k = 0;
      for (let i = 1; i < sim.frequency.length; i++) if (Math.abs(Math.log(sim.frequency[i]! / f)) < Math.abs(Math.log(sim.frequency[k]! / f))) k = i;
      return k;
    };
    for (const [f, tol] of [[Math.sqrt(fa.low!.corner * fa.high.corner), 0.5], [fa.low!.corner, 1], [fa.high.corner, 1]] as const) {
      const k = at(f);
      const hand = handResponse(fa, [sim.frequency[k]!]).magnitude[0]!;
      expect(Math.abs(20 * Math.log10(sim.magnitude[k]! / hand))).toBeLessThan(tol);
    }
  });
});
