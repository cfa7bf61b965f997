import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  Derivation,
  amperesPerVoltSquared,
  device,
  deviceFormulas,
  drainCurrent,
  meters,
  perVolt,
  smallSignal,
  sqrtVolts,
  volts,
  type DeviceCard,
  type Formula,
} from "../lib/index.js";

// Invented cards for unit tests (not a real process).
const nCard: DeviceCard = { name: "ss-n", polarity: "nmos", kp: amperesPerVoltSquared(120e-6), vt0: volts(0.6), lambda: perVolt(0.04), gamma: sqrtVolts(0.45), phi: volts(0.7) };
const pCard: DeviceCard = { name: "ss-p", polarity: "pmos", kp: amperesPerVoltSquared(45e-6), vt0: volts(-0.7), lambda: perVolt(0.06), gamma: sqrtVolts(0.5), phi: volts(0.75) };
const n = device(nCard, meters(20e-6), meters(1e-6));
const p = device(pCard, meters(40e-6), meters(2e-6));
const bias = (vgs: number, vds: number, vsb = 0) => ({ vgs: volts(vgs), vds: volts(vds), vsb: volts(vsb) });

/** Central difference of the hot-path current; an independent check on the analytic derivatives. */
function numeric(f: (x: number) => number, x: number, h = 1e-6): number {
  return (f(x + h) - f(x - h)) / (2 * h);
}

const byId = new Map<string, Formula>(Object.values(deviceFormulas).map((f) => [f.id, f as Formula]));

describe("small-signal parameters", () => {
  it("gives the same gm from k·VOV·(1+λVDS), √(2k·ID·(1+λVDS)) and 2·ID/VOV in saturation (square law)", () => {
    fc.assert(
      fc.property(fc.double({ min: 0.02, max: 2, noNaN: true }), fc.double({ min: 1e-3, max: 3, noNaN: true }), fc.double({ min: 0, max: 2, noNaN: true }), (vov, extra, vsb) => {
        const ss = smallSignal(n, bias(ss0Vt(vsb) + vov, vov + extra, vsb));
        expect(ss.op.region).toBe("saturation");
        const { k, vov: v, vdsDevice: vds } = ss.op;
        const id = ss.op.id;
        const a = deviceFormulas.transconductanceSat.fn(k, v, nCard.lambda!, vds);
        const b = deviceFormulas.transconductanceFromCurrent.fn(k, id, nCard.lambda!, vds);
        const c = deviceFormulas.transconductanceFromOverdrive.fn(id, v);
        expect(Math.abs(a - ss.gm) / ss.gm).toBeLessThan(1e-12);
        expect(Math.abs(b - a) / a).toBeLessThan(1e-9);
        expect(Math.abs(c - a) / a).toBeLessThan(1e-9);
      }),
      { seed: 7, numRuns: 200 },
    );
  });

  it("matches numeric derivatives of ID in triode and saturation, NMOS and PMOS, with body bias", () => {
    const points: Array<[typeof n, number, number, number]> = [
      [n, 1.5, 0.3, 0.5], // triode
      [n, 1.5, 2.0, 1.0], // saturation
      [n, 0.9, 0.05, 0], // deep triode
      [p, -1.6, -0.2, -0.8], // triode, reverse body bias
      [p, -1.6, -2.5, -0.4], // saturation
    ];
    for (const [d, vgs, vds, vsb] of points) {
      const ss = smallSignal(d, bias(vgs, vds, vsb));
      const s = d.card.polarity === "nmos" ? 1 : -1;
      // Conductances are magnitudes in the device's polarity: ∂(s·ID)/∂(s·V).
      const gm = numeric((x) => s * drainCurrent(d, s * x, vds, vsb), s * vgs);
      const gds = numeric((x) => s * drainCurrent(d, vgs, s * x, vsb), s * vds);
      const gmb = -numeric((x) => s * drainCurrent(d, vgs, vds, s * x), s * vsb); // gmb = ∂ID/∂VBS = −∂ID/∂VSB
      expect(Math.abs(ss.gm - gm) / gm).toBeLessThan(1e-6);
      expect(Math.abs(ss.gds - gds) / gds).toBeLessThan(1e-6);
      expect(Math.abs(ss.gmb - gmb) / gmb).toBeLessThan(1e-6);
      expect(ss.ro).toBeCloseTo(1 / ss.gds, 6);
      expect(ss.intrinsicGain).toBeCloseTo(ss.gm * ss.ro, 6);
      expect(ss.gmOverId).toBeCloseTo(ss.gm / Math.abs(ss.op.id), 9);
    }
  });

  it("has Ron = 1/(k·VOV) equal to 1/gds as VDS → 0 (square law)", () => {
    const ss = smallSignal(n, bias(1.4, 0));
    expect(ss.op.region).toBe("triode");
    const k = 120e-6 * 20;
    expect(ss.ron).toBeCloseTo(1 / (k * 0.8), 9);
    expect(ss.gds).toBeCloseTo(k * 0.8, 15);
    expect(ss.gm).toBe(0);
    expect(ss.intrinsicGain).toBe(0);
    expect(ss.gmOverId).toBeUndefined();
  });

  it("uses Infinity only where the model has no output conductance, and never NaN", () => {
    const ideal = device({ ...nCard, lambda: perVolt(0) }, meters(20e-6), meters(1e-6));
    const sat = smallSignal(ideal, bias(1.2, 2));
    expect(sat.gds).toBe(0);
    expect(sat.ro).toBe(Infinity);
    expect(sat.intrinsicGain).toBe(Infinity);
    expect(sat.gmOverId).toBeCloseTo(2 / 0.6, 12);
    const off = smallSignal(n, bias(0.3, 2));
    expect(off.op.region).toBe("cutoff");
    expect([off.gm, off.gmb, off.gds, off.intrinsicGain]).toEqual([0, 0, 0, 0]);
    expect(off.ro).toBe(Infinity);
    expect(off.ron).toBe(Infinity);
    expect(off.gmOverId).toBeUndefined();
    expect(off.inversion).toBeUndefined();
    fc.assert(
      fc.property(fc.double({ min: -3, max: 3, noNaN: true }), fc.double({ min: -3, max: 3, noNaN: true }), fc.double({ min: -0.5, max: 3, noNaN: true }), (vgs, vds, vsb) => {
        for (const d of [n, p, ideal]) {
          const ss = smallSignal(d, bias(vgs, vds, vsb));
          for (const v of [ss.gm, ss.gmb, ss.gds, ss.ro, ss.intrinsicGain, ss.ron, ss.op.id]) expect(Number.isNaN(v)).toBe(false);
          expect(ss.gm).toBeGreaterThanOrEqual(0);
          expect(ss.gds).toBeGreaterThanOrEqual(0);
          expect(ss.gmb).toBeGreaterThanOrEqual(0);
        }
      }),
      { seed: 11, numRuns: 300 },
    );
  });

  it("drops (1+λVDS) from triode gm and gds in the textbook mode", () => {
    const spiceForm = smallSignal(n, bias(1.6, 0.4));
    const textbook = smallSignal(n, bias(1.6, 0.4), { clm: "saturation-only" });
    const k = 120e-6 * 20;
    expect(textbook.gm).toBeCloseTo(k * 0.4, 15);
    expect(textbook.gds).toBeCloseTo(k * (1.0 - 0.4), 15);
    expect(spiceForm.gm).toBeCloseTo(k * 0.4 * (1 + 0.04 * 0.4), 15);
  });

  it("records each formula with the arguments it used (every step re-evaluates to its result)", () => {
    const rec = new Derivation("ss");
    smallSignal(p, bias(-1.6, -2.5, -0.4), {}, rec);
    smallSignal(n, bias(1.0, 0.2, -0.2), {}, rec);
    const steps = rec.steps.filter((s) => s.kind === "formula");
    expect(steps.length).toBeGreaterThan(10);
    for (const s of steps) {
      if (s.kind !== "formula") continue;
      const f = byId.get(s.formula)!;
      expect(f, s.formula).toBeDefined();
      expect(s.inputs.map((i) => i.name)).toEqual([...f.vars]);
      expect(f.fn(...s.inputs.map((i) => i.value))).toBe(s.result.value);
    }
  });
});

/** |Vt| of the NMOS test card at vsb (reverse bias), for aiming points at saturation. */
function ss0Vt(vsb: number): number {
  return 0.6 + 0.45 * (Math.sqrt(0.7 + vsb) - Math.sqrt(0.7));
}

describe("inversion level at the bias point (Enz & Vittoz usage: weak < 0.1 < moderate < 10 < strong)", () => {
  it("warns in weak inversion, cautions in moderate, stays silent in strong", () => {
    const find = (vov: number) => {
      const rec = new Derivation("inv");
      const ss = smallSignal(n, bias(0.6 + vov, 2), {}, rec);
      return { level: ss.inversion?.level, ic: ss.inversion?.ic, findings: rec.findings };
    };
    const weak = find(0.005);
    expect(weak.level).toBe("weak");
    expect(weak.findings.map((f) => f.severity)).toEqual(["warning"]);
    expect(weak.findings[0]!.text).toMatch(/IC = [0-9.e-]+ < 0\.1/);
    const moderate = find(0.08);
    expect(moderate.level).toBe("moderate");
    expect(moderate.findings.map((f) => f.severity)).toEqual(["caution"]);
    const strong = find(0.4);
    expect(strong.level).toBe("strong");
    expect(strong.findings).toEqual([]);
  });
  it("gives IC = VOV²/(4·n·UT²) in saturation (algebra of the square law and the EKV specific current)", () => {
    const ss = smallSignal(n, bias(0.6 + 0.1, 2));
    const ut = (1.380649e-23 * 300.15) / 1.602176634e-19;
    expect(ss.inversion!.ic).toBeCloseTo(0.01 / (4 * 1.3 * ut * ut), 9);
  });
});
