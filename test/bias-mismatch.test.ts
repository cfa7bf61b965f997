/**
 * Mismatch by Pelgrom's law (Pelgrom, Duinmaijer & Welbers, IEEE JSSC 24(5),
 * 1433–1440, 1989): closed forms against the Monte Carlo core, the gate area
 * for a target offset, the typed errors, and the seeded, streaming sampler.
 * Cards and circuits are invented.
 */
import { describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { gateAreaForOffset, maxKeptBytes, mirrorError, mismatchMonteCarlo, pairOffset, pelgrom } from "../lib/bias/mismatch.js";
import type { Stage } from "../lib/bias/topology.js";
import type { DeviceCard } from "../lib/device/card.js";
import { InputError } from "../lib/errors.js";
import { amperesPerVoltSquared, meters, perVolt, quantity, voltMeters, volts } from "../lib/quantity.js";

const siemensPerAmpere = (x: number) => quantity(x, "inverseVoltageEfficiency");
import { Derivation } from "../lib/record/derivation.js";
import { expectReevaluates } from "./support/reevaluate.js";

// Invented cards: AVt 5 mV·µm and Aβ 1 %·µm (NMOS), 6 mV·µm and 1.5 %·µm (PMOS).
const n: DeviceCard = { name: "demo-n (invented)", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.5), lambda: perVolt(0.05), gamma: 0.4 as DeviceCard["gamma"] & number, phi: volts(0.7), avt: voltMeters(5e-9), abeta: meters(1e-8) };
const p: DeviceCard = { name: "demo-p (invented)", polarity: "pmos", kp: amperesPerVoltSquared(80e-6), vt0: volts(-0.55), lambda: perVolt(0.08), avt: voltMeters(6e-9), abeta: meters(1.5e-8) };
const dev = (card: DeviceCard, w: number, l: number) => ({ card, w: meters(w), l: meters(l) });

const fiveT = (input: DeviceCard, load: DeviceCard): Stage => ({
  topology: "diff-pair-mirror-load",
  device: dev(input, 4e-6, 1e-6),
  devices: { load: dev(load, 2e-6, 2e-6), tail: dev(input, 10e-6, 1e-6) },
  components: input.polarity === "nmos" ? { vcm: 1.6, vtail: 0.9 } : { vcm: 1.4, vtail: 2.4 },
  supplies: { vdd: volts(3.3) },
});

describe("Pelgrom's law", () => {
  it("σ(ΔVt) = AVt/√(WL): 5 mV·µm on a 4 µm × 1 µm pair is 2.5 mV (hand calculation)", () => {
    const rec = new Derivation("pelgrom");
    const s = pelgrom(dev(n, 4e-6, 1e-6), "device", rec);
    // √(4 µm²) = 2 µm; 5 mV·µm / 2 µm = 2.5 mV; 1 %·µm / 2 µm = 0.5 %.
    expect(s.sigmaVt).toBeCloseTo(2.5e-3, 12);
    expect(s.sigmaBeta).toBeCloseTo(0.005, 12);
    expectReevaluates(rec);
  });

  it("AVt missing when mismatch is asked for is an InputError naming the field", () => {
    const bare = { ...n, avt: undefined };
    expect(() => pelgrom(dev(bare, 4e-6, 1e-6), "device")).toThrow(InputError);
    expect(() => pelgrom(dev(bare, 4e-6, 1e-6), "device")).toThrow(/avt/);
    const a = analyzeStage(fiveT(bare, p));
    expect(() => pairOffset(fiveT(bare, p), a)).toThrow(/Pelgrom threshold coefficient avt/);
  });

  it("a negative AVt on the card is refused where the card is checked", () => {
    expect(() => analyzeStage({ ...fiveT(n, p), device: dev({ ...n, avt: voltMeters(-1e-9) }, 4e-6, 1e-6) })).toThrow(/avt/);
  });
});

describe("input-referred offset: closed form against Monte Carlo (10⁵ samples, within 3 %)", () => {
  for (const [inp, ld] of [
    [n, p],
    [p, n],
  ] as const)
    it(`five-transistor amplifier, ${inp.polarity} input`, () => {
      const st = fiveT(inp, ld);
      const a = analyzeStage(st);
      expect(a.region).toBe("saturation");
      const rec = new Derivation("offset");
      const closed = pairOffset(st, a, rec);
      expectReevaluates(rec);
      const mc = mismatchMonteCarlo(st as never, a, { samples: 100_000, seed: 11 });
      const off = mc.figures[0]!;
      expect(Math.abs(off.sigma / closed.sigma - 1)).toBeLessThan(0.03);
      expect(Math.abs(off.mean)).toBeLessThan(4 * (off.sigma / Math.sqrt(1e5)) + 0.02 * off.sigma);
      // The load's ΔVt share is (gm3/gm1)²·σ3² of the total: the ranking must agree with the closed form's largest share.
      const top = off.sensitivity[0]!.variable;
      const biggest = Object.entries(closed.shares).sort((x, y) => y[1] - x[1])[0]![0];
      const expectDevice = biggest.startsWith("input") ? /^M[12] / : /^M[34] /;
      expect(top).toMatch(expectDevice);
    });

  it("resistive pair with an ideal tail: only the input pair contributes", () => {
    const st: Stage = { topology: "diff-pair", device: dev(n, 8e-6, 2e-6), components: { rd: 20e3, vcm: 1.2, itail: 100e-6 }, supplies: { vdd: volts(3.3) } };
    const a = analyzeStage(st);
    const closed = pairOffset(st, a);
    expect(closed.shares.loadVt).toBe(0);
    const mc = mismatchMonteCarlo(st as never, a, { samples: 100_000, seed: 5 });
    expect(Math.abs(mc.figures[0]!.sigma / closed.sigma - 1)).toBeLessThan(0.03);
  });
});

describe("mirror current error", () => {
  it("closed form σ(ΔI/I) = √(σβ² + (gm/ID·σVt)²) against Monte Carlo of the cascode mirror's lower pair", () => {
    const st: Stage = { topology: "cascode-mirror", device: dev(n, 10e-6, 2e-6), devices: { cascode: dev(n, 10e-6, 1e-6) }, components: { iref: 50e-6, vout: 2 }, supplies: { vdd: volts(3.3) } };
    const a = analyzeStage(st);
    const m1 = a.devices!.M1!;
    const gmId = siemensPerAmpere(m1.smallSignal.gm / Math.abs(m1.op.channelCurrent));
    const closed = mirrorError(st.device, gmId);
    const mc = mismatchMonteCarlo(st as never, a, { samples: 100_000, seed: 3, limits: { maxCurrentError: 0.01, outputVoltage: 2 } });
    expect(Math.abs(mc.figures[0]!.sigma / closed - 1)).toBeLessThan(0.03);
    // Yield of |error| ≤ 1 %: the Gaussian fraction within ±0.01/σ.
    const zc = 0.01 / closed;
    const erf = (x: number) => {
      // Abramowitz & Stegun 7.1.26 (accuracy 1.5e-7).
      const t = 1 / (1 + 0.3275911 * Math.abs(x));
      const y = 1 - ((((1.061405429 * t - 1.453152027) * t + 1.421413741) * t - 0.284496736) * t + 0.254829592) * t * Math.exp(-x * x);
      return Math.sign(x) * y;
    };
    expect(mc.checks[0]!.yield).toBeCloseTo(erf(zc / Math.SQRT2), 2);
    expect(mc.checks[1]!.yield).toBe(1);
  });
});

describe("gate area for a target offset", () => {
  it("sizing for σ = 1 mV then Pelgrom on that area returns 1 mV (round trip)", () => {
    const gmId = siemensPerAmpere(10);
    const area = gateAreaForOffset(n, gmId, volts(1e-3));
    // Hand calculation: (5 mV·µm)² + (1 %·µm / 10 V⁻¹)² = 25e-18 + 1e-18 V²m²; over (1 mV)² → 26 µm².
    expect(area / 26e-12).toBeCloseTo(1, 12);
    const side = Math.sqrt(area);
    const s = pelgrom(dev(n, side, side), "device");
    expect(Math.hypot(s.sigmaVt, s.sigmaBeta / gmId)).toBeCloseTo(1e-3, 12);
  });
});

describe("Monte Carlo core", () => {
  const st = fiveT(n, p);
  const a = analyzeStage(st);
  it("is seeded: the same seed gives the same statistics, another seed does not", () => {
    const x = mismatchMonteCarlo(st as never, a, { samples: 2000, seed: 42 });
    const y = mismatchMonteCarlo(st as never, a, { samples: 2000, seed: 42 });
    const z = mismatchMonteCarlo(st as never, a, { samples: 2000, seed: 43 });
    expect(y.figures[0]!.sigma).toBe(x.figures[0]!.sigma);
    expect(z.figures[0]!.sigma).not.toBe(x.figures[0]!.sigma);
  });
  it("global variation moves the tail current and the common-mode range, and the offset only through channel-length modulation", () => {
    const g = mismatchMonteCarlo(st as never, a, { samples: 20_000, seed: 8, nmos: { sigmaVt: 0.02, sigmaK: 0.05 }, pmos: { sigmaVt: 0.02, sigmaK: 0.05 }, limits: { commonModeMin: 1.2, commonModeMax: 2.2 } });
    const tail = g.figures[1]!;
    expect(tail.sensitivity[0]!.variable).toMatch(/NMOS global|M5/);
    // A global shift moves the load diode's VGS, so M1's drain (on the diode) but not M2's (the held output):
    // an offset through channel-length modulation only, 200 times smaller in share with λ 500 times smaller (what remains is at the level of the shares' sampling noise and the square law's second-order terms).
    const globalShare = (r: typeof g) => r.figures[0]!.sensitivity.filter((s) => /global/.test(s.variable)).reduce((x, s) => x + s.share, 0);
    expect(g.figures[0]!.sensitivity[0]!.variable).not.toMatch(/global/);
    expect(globalShare(g)).toBeGreaterThan(0.01);
    const flat = fiveT({ ...n, lambda: perVolt(1e-4) }, { ...p, lambda: perVolt(1.6e-4) });
    const gFlat = mismatchMonteCarlo(flat as never, analyzeStage(flat), { samples: 20_000, seed: 8, nmos: { sigmaVt: 0.02, sigmaK: 0.05 }, pmos: { sigmaVt: 0.02, sigmaK: 0.05 } });
    expect(globalShare(gFlat)).toBeLessThan(globalShare(g) / 50);
    for (const c of g.checks) expect(c.yield).toBeGreaterThanOrEqual(0);
    expect(g.checks.length).toBe(3);
  });
  it("a corner shift of +50 mV on the NMOS threshold moves the lowest input common mode of an ideal-tail pair by exactly +50 mV (same seed)", () => {
    const ideal: Stage = { topology: "diff-pair", device: dev(n, 8e-6, 2e-6), components: { rd: 20e3, vcm: 1.2, itail: 100e-6 }, supplies: { vdd: volts(3.3) } };
    const ai = analyzeStage(ideal);
    const base = mismatchMonteCarlo(ideal as never, ai, { samples: 5000, seed: 2 });
    const slow = mismatchMonteCarlo(ideal as never, ai, { samples: 5000, seed: 2, nmos: { cornerVt: 0.05 } });
    // VIC,min = VSS + Vt1 + √(ISS/k1) with an ideal tail: the threshold shift adds one to one; the offset is unchanged.
    expect(slow.figures[2]!.mean - base.figures[2]!.mean).toBeCloseTo(0.05, 9);
    expect(slow.figures[0]!.sigma).toBeCloseTo(base.figures[0]!.sigma, 12);
  });
  it("sample counts: bad counts and kept samples beyond memory are InputErrors naming the range", () => {
    expect(() => mismatchMonteCarlo(st as never, a, { samples: 1 })).toThrow(/samples from 2 to/);
    expect(() => mismatchMonteCarlo(st as never, a, { samples: 1.5 })).toThrow(InputError);
    expect(() => mismatchMonteCarlo(st as never, a, { samples: 1e9 })).toThrow(/samples from 2 to/);
    const tooMany = Math.floor(maxKeptBytes / 32) + 1;
    expect(() => mismatchMonteCarlo(st as never, a, { samples: tooMany, keep: true })).toThrow(/beyond memory/);
    const k = mismatchMonteCarlo(st as never, a, { samples: 1000, seed: 1, keep: true });
    expect(k.kept!["input-referred offset"]!.length).toBe(1000);
  });
});

describe("Monte Carlo through the device model layer", () => {
  // Invented mobility and EKV cards: the sampler evaluates each device with its own model, so the
  // offset σ must still match the closed form built on the solved gm/ID (a linearisation valid for any model).
  const ekvN: DeviceCard = { ...n, model: "ekv", theta: perVolt(0.2) };
  const ekvP: DeviceCard = { ...p, model: "ekv", theta: perVolt(0.3) };
  const mobN: DeviceCard = { ...n, model: "square-law-mobility", theta: perVolt(0.3) };
  const mobP: DeviceCard = { ...p, model: "square-law-mobility", theta: perVolt(0.4) };
  for (const [label, inp, ld] of [
    ["EKV", ekvN, ekvP],
    ["mobility", mobN, mobP],
    ["EKV, PMOS input", ekvP, ekvN],
  ] as const)
    it(`${label} cards: offset σ within 3 % of the closed form at 10⁵ samples, zero mismatch gives zero offset`, () => {
      const st = fiveT(inp, ld);
      const a = analyzeStage(st);
      expect(a.op.model).toBe(inp.model);
      const closed = pairOffset(st, a);
      const mc = mismatchMonteCarlo(st as never, a, { samples: 100_000, seed: 21 });
      expect(Math.abs(mc.figures[0]!.sigma / closed.sigma - 1)).toBeLessThan(0.03);
      // Without any variation the sampler must return the solved point: offset 0, the solved tail current.
      const quiet = (c: DeviceCard): DeviceCard => ({ ...c, avt: voltMeters(0), abeta: meters(0) });
      const still: Stage = { ...st, device: { ...st.device, card: quiet(inp) }, devices: { load: { ...st.devices!.load!, card: quiet(ld) }, tail: { ...st.devices!.tail!, card: quiet(inp) } } };
      const as = analyzeStage(still);
      const z = mismatchMonteCarlo(still as never, as, { samples: 10, seed: 1 });
      expect(Math.abs(z.figures[0]!.mean)).toBeLessThan(1e-9);
      expect(z.figures[1]!.mean / Math.abs(as.devices!.M5!.op.channelCurrent)).toBeCloseTo(1, 9);
    });

  it("a global k′ shift on an EKV tail moves the tail current by that factor exactly (the current factor scales the model's current)", () => {
    const st = fiveT(ekvN, ekvP);
    const a = analyzeStage(st);
    const base = mismatchMonteCarlo(st as never, a, { samples: 2000, seed: 4 });
    const fast = mismatchMonteCarlo(st as never, a, { samples: 2000, seed: 4, nmos: { cornerK: 0.1 } });
    expect(fast.figures[1]!.mean / base.figures[1]!.mean).toBeCloseTo(1.1, 9);
  });
});
