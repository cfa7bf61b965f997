import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  Derivation,
  InfeasibleError,
  InputError,
  amperes,
  amperesPerVoltSquared,
  aspectRatioFor,
  device,
  drainCurrent,
  gateVoltageFor,
  meters,
  overdriveFor,
  perVolt,
  siemens,
  sizeForTransconductance,
  smallSignal,
  sqrtVolts,
  volts,
  type Device,
  type DeviceCard,
} from "../lib/index.js";

// Invented cards for unit tests (not a real process).
const nCard: DeviceCard = { name: "inv-n", polarity: "nmos", kp: amperesPerVoltSquared(150e-6), vt0: volts(0.55), lambda: perVolt(0.03), gamma: sqrtVolts(0.4), phi: volts(0.7) };
const pCard: DeviceCard = { name: "inv-p", polarity: "pmos", kp: amperesPerVoltSquared(50e-6), vt0: volts(-0.65), lambda: perVolt(0.05), gamma: sqrtVolts(0.55), phi: volts(0.75) };
const n = device(nCard, meters(10e-6), meters(1e-6));
const p = device(pCard, meters(30e-6), meters(1e-6));

describe("inverse design inverts the forward model (property tests, fast-check)", () => {
  it("VGS for a target ID reproduces that ID, NMOS and PMOS, with body effect and λ at VDS", () => {
    fc.assert(
      fc.property(
        fc.constantFrom(n, p),
        fc.double({ min: 1e-6, max: 5e-3, noNaN: true }),
        fc.double({ min: 0, max: 2.5, noNaN: true }),
        fc.double({ min: 0.5, max: 1, noNaN: true }),
        (d: Device, id, vsbMag, vdsScale) => {
          const s = d.card.polarity === "nmos" ? 1 : -1;
          const vov = overdriveFor(d, amperes(id));
          const vds = s * (vov + 0.01 + 4 * vdsScale);
          const g = gateVoltageFor(d, amperes(id), { vds: volts(vds), vsb: volts(s * vsbMag) });
          expect(Math.sign(g.vgs)).toBe(s);
          const back = drainCurrent(d, g.vgs, vds, s * vsbMag);
          expect(Math.abs(back - s * id) / id).toBeLessThan(1e-12);
          expect(smallSignal(d, { vgs: g.vgs, vds: volts(vds), vsb: volts(s * vsbMag) }).op.region).toBe("saturation");
        },
      ),
      { seed: 3, numRuns: 300 },
    );
  });
  it("W/L for a target ID at a chosen VOV, and ID and W/L for a target gm, give those values back", () => {
    fc.assert(
      fc.property(
        fc.constantFrom(nCard, pCard),
        fc.double({ min: 1e-6, max: 5e-3, noNaN: true }),
        fc.double({ min: 0.05, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 3, noNaN: true }),
        (card: DeviceCard, target, vov, extra) => {
          const s = card.polarity === "nmos" ? 1 : -1;
          const vds = volts(s * (vov + extra));
          const wl = aspectRatioFor(card, amperes(target), volts(vov), { vds });
          const d = device(card, meters(wl * 1e-6), meters(1e-6));
          const vgs = s * (Math.abs(card.vt0) + vov);
          expect(Math.abs(drainCurrent(d, vgs, vds) - s * target) / target).toBeLessThan(1e-12);
          const sized = sizeForTransconductance(card, siemens(target * 10), volts(vov), { vds });
          const d2 = device(card, meters(sized.wl * 1e-6), meters(1e-6));
          const ss = smallSignal(d2, { vgs: volts(vgs), vds });
          expect(Math.abs(ss.gm - target * 10) / (target * 10)).toBeLessThan(1e-12);
          expect(Math.abs(Math.abs(ss.op.id) - sized.id) / sized.id).toBeLessThan(1e-12);
        },
      ),
      { seed: 5, numRuns: 300 },
    );
  });
});

describe("inverse design, worked by hand (square law)", () => {
  it("VOV = √(2·ID/k) without λ: 200 µA in k = 1.5 mA/V² needs 0.5164 V", () => {
    // k = 150 µA/V² · 10 = 1.5 mA/V²; √(2·200e-6/1.5e-3) = 0.516398 V.
    expect(overdriveFor(n, amperes(200e-6))).toBeCloseTo(0.516398, 6);
  });
  it("signs a PMOS gate voltage negative and raises |VGS| under reverse body bias", () => {
    const flat = gateVoltageFor(p, amperes(100e-6));
    const biased = gateVoltageFor(p, amperes(100e-6), { vsb: volts(-1) });
    expect(flat.vgs).toBeLessThan(0);
    expect(flat.vt).toBe(-0.65);
    expect(biased.vgs).toBeLessThan(flat.vgs);
    // |Vt| = 0.65 + 0.55·(√1.75 − √0.75) = 0.902 V
    expect(biased.vt).toBeCloseTo(-(0.65 + 0.55 * (Math.sqrt(1.75) - Math.sqrt(0.75))), 12);
  });
  it("records the steps it used", () => {
    const rec = new Derivation("inv");
    gateVoltageFor(n, amperes(100e-6), { vds: volts(1), vsb: volts(0.5), maxGateDrive: volts(3) }, rec);
    expect(rec.steps.map((s) => (s.kind === "formula" ? s.formula : s.title))).toEqual(["deviceGain", "overdriveForCurrent", "bodyEffectThreshold", "gateSourceVoltage"]);
    expect(rec.checks.map((c) => c.passed)).toEqual([true, true]);
  });
});

describe("infeasible targets explained in numbers", () => {
  it("refuses a current whose overdrive exceeds the VDS available (triode)", () => {
    // 2 mA in k = 1.5 mA/V² needs VOV ≈ 1.63 V with λ; only 0.5 V of VDS.
    const e = (() => {
      try {
        overdriveFor(n, amperes(2e-3), { vds: volts(0.5) });
      } catch (x) {
        return x;
      }
    })();
    expect(e).toBeInstanceOf(InfeasibleError);
    expect(String((e as Error).message)).toMatch(/VOV = 1\.6\d+ V, but only VDS = 0\.5 V.*triode.*W\/L ≥ \d/);
  });
  it("refuses a gate voltage above the gate-drive limit", () => {
    expect(() => gateVoltageFor(p, amperes(1e-3), { maxGateDrive: volts(1.5) })).toThrow(InfeasibleError);
    expect(() => gateVoltageFor(p, amperes(1e-3), { maxGateDrive: volts(1.5) })).toThrow(/VSG = \|Vt\| \+ VOV = 0\.65 V \+ [0-9.]+ V = [0-9.]+ V, above the gate-drive limit 1\.5 V/);
  });
  it("refuses a chosen VOV above VDS when sizing", () => {
    expect(() => aspectRatioFor(nCard, amperes(1e-4), volts(0.6), { vds: volts(0.4) })).toThrow(InfeasibleError);
    expect(() => sizeForTransconductance(pCard, siemens(1e-3), volts(0.6), { vds: volts(-0.4) })).toThrow(/short by 0\.2 V/);
  });
});

describe("bad inputs get InputError naming value, range and origin", () => {
  const cases: Array<[string, () => unknown, RegExp]> = [
    ["NaN current", () => overdriveFor(n, amperes(NaN)), /overdriveFor\.id: got NaN, expected a drain-current magnitude > 0/],
    ["zero current", () => gateVoltageFor(n, amperes(0)), /overdriveFor\.id: got 0/],
    ["negative current", () => aspectRatioFor(nCard, amperes(-1e-3), volts(0.2)), /aspectRatioFor\.id: got -0\.001.*for a PMOS give \|ID\|/],
    // @ts-expect-error a hand-built { card, w, l } is not a Device; checked at run time too
    ["negative W/L (W < 0)", () => overdriveFor({ card: nCard, w: meters(-1e-6), l: meters(1e-6) }, amperes(1e-4)), /overdriveFor\.dev\.w: got -0\.000001, expected a channel width W > 0/],
    // @ts-expect-error a hand-built { card, w, l } is not a Device; checked at run time too
    ["zero L", () => gateVoltageFor({ card: nCard, w: meters(1e-6), l: meters(0) }, amperes(1e-4)), /gateVoltageFor\.dev\.l: got 0, expected a channel length L > 0/],
    ["negative k'", () => aspectRatioFor({ ...nCard, kp: amperesPerVoltSquared(-1e-4) }, amperes(1e-4), volts(0.2)), /aspectRatioFor\.card "inv-n"\.kp: got -0\.0001, expected a process transconductance/],
    ["zero VOV", () => sizeForTransconductance(nCard, siemens(1e-3), volts(0)), /sizeForTransconductance\.vov: got 0, expected an overdrive VOV > 0/],
    ["negative gm", () => sizeForTransconductance(nCard, siemens(-1e-3), volts(0.2)), /sizeForTransconductance\.gm: got -0\.001/],
    ["PMOS with positive VDS", () => overdriveFor(p, amperes(1e-4), { vds: volts(1) }), /overdriveFor\.opts\.vds: got 1, expected VDS ≤ 0 V for a PMOS/],
    ["NaN VSB", () => gateVoltageFor(n, amperes(1e-4), { vsb: volts(NaN) }), /gateVoltageFor\.opts\.vsb: got NaN/],
    ["zero gate-drive limit", () => gateVoltageFor(n, amperes(1e-4), { maxGateDrive: volts(0) }), /maxGateDrive: got 0/],
    ["NaN W/L ratio in a device", () => device(nCard, meters(NaN), meters(1e-6)), /device\.w: got NaN/],
  ];
  for (const [what, run, message] of cases)
    it(what, () => {
      expect(run).toThrow(InputError);
      expect(run).toThrow(message);
    });
  it("accepts a valid target: W/L = 2·75 µA/(150 µA/V²·(0.1 V)²) = 100 without λ (square law, by hand)", () => {
    expect(aspectRatioFor(nCard, amperes(75e-6), volts(0.1))).toBeCloseTo(100, 9);
  });
});
