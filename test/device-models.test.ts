/**
 * The three device models through the shared model layer: parameter vectors,
 * polarity, source/drain symmetry, continuity (fast-check, seeded) and the
 * EKV limits against its published equations. Cards are invented for the tests.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  cardFromVector,
  conductances,
  device,
  drainCurrent,
  ekv,
  ekvFormulas,
  meters,
  mobilitySaturationVoltage,
  models,
  modelIds,
  parameterVector,
  spiceCurrent,
  squareLaw,
  squareLawMobility,
  thermalVoltage,
  type DeviceCard,
  type DeviceModel,
  type ModelId,
} from "../lib/index.js";
import { InputError } from "../lib/errors.js";

const base = { name: "invented-n", polarity: "nmos", kp: 180e-6, vt0: 0.55, gamma: 0.55, phi: 0.8, lambda: 0.04 } as const;
const cards: Record<ModelId, DeviceCard> = {
  "square-law": base as unknown as DeviceCard,
  "square-law-mobility": { ...base, model: "square-law-mobility", theta: 0.25, ecrit: 3e6 } as unknown as DeviceCard,
  ekv: { ...base, model: "ekv", theta: 0.2, thetaB: 0.05, ecrit: 3e6, sigma: 0.02, cit: 0.15 } as unknown as DeviceCard,
};
const mirror = (c: DeviceCard): DeviceCard => ({ ...c, name: "invented-p", polarity: "pmos", vt0: -c.vt0 as never });
const at = (c: DeviceCard, w = 10e-6, l = 0.5e-6) => device(c, meters(w), meters(l));
const v = (min: number, max: number) => fc.double({ min, max, noNaN: true });
const runs = { seed: 8, numRuns: 300 };
const ut = thermalVoltage(300.15 as never);

describe("model registry and parameter vectors", () => {
  it("has one model per card discriminator, and a card without one is the square law", () => {
    expect(Object.keys(models).sort()).toEqual([...modelIds].sort());
    const dev = at(cards["square-law"]);
    expect(parameterVector(dev).length).toBe(squareLaw.size);
  });
  for (const id of modelIds) {
    it(`${id}: the vector form and drainCurrent agree, NMOS and PMOS, and the vector round-trips to the card`, () => {
      const model: DeviceModel = models[id];
      for (const c of [cards[id], mirror(cards[id])]) {
        const dev = at(c);
        const p = parameterVector(dev);
        const s = c.polarity === "nmos" ? 1 : -1;
        for (const [vgs, vds, vsb] of [[1.2, 1.5, 0], [0.4, 0.05, 0.6], [2.5, 0.3, 1.2], [1.5, -0.4, 0.2], [0.1, 1, 0]] as const) {
          const a = drainCurrent(dev, s * vgs, s * vds, s * vsb);
          expect(spiceCurrent(model, p, s, s * vgs, s * vds, s * vsb)).toBe(a);
        }
        const back = cardFromVector(model, p, c);
        for (const q of model.parameters) {
          const want = (c as unknown as Record<string, number | undefined>)[q.name] ?? q.absent;
          if (Number.isFinite(want)) expect((back as unknown as Record<string, number>)[q.name]).toBeCloseTo(want, 15);
        }
      }
    });
    it(`${id}: every parameter has bounds that hold its initial guess`, () => {
      for (const q of models[id].parameters) {
        expect(q.min).toBeLessThan(q.max);
        expect(q.initial).toBeGreaterThanOrEqual(q.min);
        expect(q.initial).toBeLessThanOrEqual(q.max);
      }
      expect(models[id].parameters.filter((q) => q.geometryScaled).map((q) => q.name)).toEqual(["kp"]);
    });
  }
  it("refuses a model name it does not know and a field the card's model does not use, naming the field", () => {
    expect(() => at({ ...base, model: "bsim" } as unknown as DeviceCard)).toThrow(/device\.card "invented-n"\.model/);
    expect(() => at({ ...base, theta: 0.1 } as unknown as DeviceCard)).toThrow(InputError);
    expect(() => at({ ...base, theta: 0.1 } as unknown as DeviceCard)).toThrow(/\.theta/);
    expect(() => at({ ...base, model: "square-law-mobility", sigma: 0.1 } as unknown as DeviceCard)).toThrow(/\.sigma/);
    expect(() => at({ ...base, model: "ekv", ecrit: -1 } as unknown as DeviceCard)).toThrow(/\.ecrit/);
    expect(() => at({ ...base, model: "ekv", thetaB: 1.5 } as unknown as DeviceCard)).toThrow(/\.thetaB/);
    expect(() => at({ ...base, model: "ekv", cit: -0.1 } as unknown as DeviceCard)).toThrow(/\.cit/);
    expect(() => at({ ...base, model: "square-law-mobility", cit: 0.1 } as unknown as DeviceCard)).toThrow(/\.cit/);
  });
});

describe("every model: polarity and source/drain symmetry", () => {
  for (const id of modelIds) {
    it(`${id}: a PMOS mirrors its NMOS twin, and swapping drain and source reverses the current`, () => {
      const n = at(cards[id]);
      const p = at(mirror(cards[id]));
      fc.assert(
        fc.property(v(-0.5, 3.3), v(-3.3, 3.3), v(-0.3, 3), (vgs, vds, vsb) => {
          const i = drainCurrent(n, vgs, vds, vsb);
          expect(drainCurrent(p, -vgs, -vds, -vsb)).toBe(-i);
          // The drain terminal as source: VGS' = VGS − VDS, VDS' = −VDS, VSB' = VSB + VDS.
          const j = drainCurrent(n, vgs - vds, -vds, vsb + vds);
          expect(Math.abs(i + j)).toBeLessThanOrEqual(1e-12 * Math.abs(i) + 1e-20);
        }),
        runs,
      );
    });
  }
});

describe("square law with mobility degradation and velocity saturation", () => {
  it("reduces to the square law when θ = 0 and there is no velocity saturation", () => {
    const plain = at(cards["square-law"]);
    const mob = at({ ...base, model: "square-law-mobility" } as unknown as DeviceCard);
    for (const [vgs, vds, vsb] of [[1.2, 1.5, 0], [0.9, 0.1, 0.5], [2, 3, 1]] as const)
      expect(drainCurrent(mob, vgs, vds, vsb)).toBeCloseTo(drainCurrent(plain, vgs, vds, vsb), 18);
  });
  it("is continuous in ID and gds at VDsat, and VDsat is where the triode current peaks", () => {
    const withClm = parameterVector(at(cards["square-law-mobility"]));
    const noClm = parameterVector(at({ ...cards["square-law-mobility"], lambda: 0 } as DeviceCard));
    for (const vov of [0.2, 0.8, 2]) {
      const vgs = 0.55 + vov;
      const edge = mobilitySaturationVoltage(vov, 3e6, 0.5e-6);
      expect(edge).toBeGreaterThan(0);
      expect(edge).toBeLessThan(vov);
      // Without λ the current peaks at VDsat: the shortfall just below it is quadratic (zero slope), a tenth of the step giving a hundredth.
      const i0 = (vd: number) => squareLawMobility.current(noClm, vgs, vd, 0);
      const drop = (dv: number) => i0(edge) - i0(edge - dv);
      expect(drop(1e-3)).toBeGreaterThan(0);
      expect(drop(1e-3) / drop(1e-4)).toBeCloseTo(100, 0);
      const i = (vd: number) => squareLawMobility.current(withClm, vgs, vd, 0);
      expect(Math.abs(i(edge + 1e-9) - i(edge - 1e-9))).toBeLessThan(1e-7 * i(edge));
      // One-sided slopes over 0.1 µV either side of the edge meet (gds is continuous).
      const below = (i(edge) - i(edge - 1e-7)) / 1e-7;
      const above = (i(edge + 1e-7) - i(edge)) / 1e-7;
      expect(Math.abs(below - above)).toBeLessThan(1e-3 * above);
    }
  });
});

/** An EKV card with no short-channel terms, so its published long-channel limits apply exactly. */
const longEkv = (gamma: number) =>
  at({ name: "invented-ekv", polarity: "nmos", model: "ekv", kp: 100e-6, vt0: 0.5, gamma, phi: 0.7, lambda: 0, theta: 0, ecrit: 1e12, sigma: 0 } as unknown as DeviceCard, 10e-6, 10e-6);

describe("EKV against its published equations (Enz, Krummenacher & Vittoz 1995; charge–voltage relation of Enz & Vittoz 2006)", () => {
  const g = new Float64Array(3);
  const chargeAt = (vov: number) => ekvFormulas.ekvForwardCharge.fn(vov as never, 0 as never, ut);
  it("gm·n·UT/ID = 2/(1 + √(1 + 4·IC)) in saturation, so the weak and strong asymptotes of gm/ID cross at IC = 1", () => {
    // γ = 0: n = 1 and VP = VGS − Vt0 exactly. The relation follows from 2q + ln q = v and i = q² + q
    // (Enz & Vittoz, Charge-Based MOS Transistor Modeling, Wiley, 2006, from memory).
    const p = parameterVector(longEkv(0));
    for (const vov of [-0.2, -0.08, 0, 0.05, 0.15, 0.4, 1]) {
      const vgs = 0.5 + vov;
      const id = ekv.current(p, vgs, 3, 0);
      conductances(ekv, p, vgs, 3, 0, g);
      const ic = ekvFormulas.ekvForwardCurrent.fn(chargeAt(vov));
      const want = 2 / (1 + Math.sqrt(1 + 4 * ic));
      expect((g[0]! * ut) / id).toBeCloseTo(want, 5);
    }
  });
  it("strong inversion: ID → β/2·VOV² short by the charge-sheet term, ID = β/2·(VOV − UT·(ln q − 1))² − β·UT²/2, and gm/ID = 1/(UT·(q + 1)) → 2/VOV (γ = 0)", () => {
    // The surface potential keeps rising by UT·ln q above pinch-off (charge-sheet model, Enz & Vittoz 2006, from memory):
    // the square law's β/2·VOV² is the limit, approached as UT·ln q/VOV → 0 (12 % short at 0.5 V, 7 % at 2 V).
    const p = parameterVector(longEkv(0));
    const beta = 100e-6;
    let gap = Infinity;
    for (const vov of [0.5, 1, 2]) {
      const id = ekv.current(p, 0.5 + vov, 3.3, 0);
      conductances(ekv, p, 0.5 + vov, 3.3, 0, g);
      const q = chargeAt(vov);
      expect(Math.abs(id / ((beta / 2) * (vov - ut * (Math.log(q) - 1)) ** 2 - (beta * ut * ut) / 2) - 1)).toBeLessThan(1e-3);
      const short = 1 - id / ((beta / 2) * vov * vov);
      expect(short).toBeGreaterThan(0);
      expect(short).toBeLessThan(gap);
      gap = short;
      // gm/ID = 1/(UT·(q + 1)) from di/dv = q; within 3 % of the square law's 2/VOV here
      expect(Math.abs((g[0]! / id) * ut * (q + 1) - 1)).toBeLessThan(1e-3);
      expect(Math.abs((g[0]! / id) * (vov / 2) - 1)).toBeLessThan(0.03);
    }
  });
  it("weak inversion: gm/ID → 1/(n·UT) and the slope is n·UT·ln10 per decade, n = 1 + γ/(2√(VP + 2φF))", () => {
    const gamma = 0.6;
    const p = parameterVector(longEkv(gamma));
    for (const vgs of [0.05, 0.15, 0.25]) {
      const vp = ekvFormulas.ekvPinchOffVoltage.fn(ekvFormulas.ekvEffectiveGate.fn(vgs as never, 0 as never, 0.5 as never, 0 as never, 0 as never, 0.7 as never, gamma as never), 0.7 as never, gamma as never);
      expect(vp).toBeGreaterThan(-0.7);
      const n = 1 + gamma / (2 * Math.sqrt(vp + 0.7));
      const id = ekv.current(p, vgs, 1, 0);
      conductances(ekv, p, vgs, 1, 0, g);
      // Within 3 %: IS carries the EKV 2.6 slope factor (with +4·UT under the root), whose variation adds to the exponential's.
      expect(Math.abs((g[0]! / id) * n * ut - 1)).toBeLessThan(0.03);
      const decade = ekv.current(p, vgs + n * ut * Math.LN10, 1, 0) / id;
      expect(Math.abs(Math.log10(decade) - 1)).toBeLessThan(0.03);
    }
  });
  it("with interface traps, gm/ID → 1/((n + Cit/Cox)·UT) in weak inversion while the strong-inversion current stays as without them (within 1 %)", () => {
    const cit = 0.25;
    const card = { name: "invented-ekv-cit", polarity: "nmos", model: "ekv", kp: 100e-6, vt0: 0.5, gamma: 0.6, phi: 0.7, lambda: 0, theta: 0, ecrit: 1e12, sigma: 0, cit } as unknown as DeviceCard;
    const p = parameterVector(at(card, 10e-6, 10e-6));
    const p1 = parameterVector(longEkv(0.6));
    for (const vgs of [0.0, 0.1]) {
      const vp = ekvFormulas.ekvPinchOffVoltage.fn(ekvFormulas.ekvEffectiveGate.fn(vgs as never, 0 as never, 0.5 as never, 0 as never, 0 as never, 0.7 as never, 0.6 as never), 0.7 as never, 0.6 as never);
      const n = 1 + 0.6 / (2 * Math.sqrt(vp + 0.7));
      conductances(ekv, p, vgs, 1, 0, g);
      expect(Math.abs((g[0]! / ekv.current(p, vgs, 1, 0)) * (n + cit) * ut - 1)).toBeLessThan(0.03);
    }
    // far above threshold the traps' term cancels but in the charge-sheet term Um·ln q: within 1 % of the current without it
    for (const vov of [1, 2]) expect(Math.abs(ekv.current(p, 0.5 + vov, 3.3, 0) / ekv.current(p1, 0.5 + vov, 3.3, 0) - 1)).toBeLessThan(1e-2);
  });
  it("gm/ID levels off at 1/(n·UT) in weak inversion and never rises past it", () => {
    const p = parameterVector(longEkv(0.6));
    let peak = 0;
    for (let vgs = -0.3; vgs <= 2; vgs += 0.01) {
      conductances(ekv, p, vgs, 2, 0, g);
      peak = Math.max(peak, g[0]! / ekv.current(p, vgs, 2, 0));
    }
    const nDeep = 1 + 0.6 / (2 * Math.sqrt(0.7 - 0.5 + 0.1)); // n near VP ≈ −0.5 V, bounded below by 1 + γ/(2√(2φF))
    expect(peak).toBeLessThan(1 / ut);
    expect(peak).toBeGreaterThan(1 / (nDeep * ut) * 0.8);
  });
});

describe("EKV continuity in ID, gm, gds and gm/ID across all regions (fast-check)", () => {
  it("has no step in ID or its conductances anywhere, including VDS = 0, the VDSS' edge and VG' = 0", () => {
    const dev = at(cards.ekv, 10e-6, 0.28e-6);
    const p = parameterVector(dev);
    const a = new Float64Array(3);
    const b = new Float64Array(3);
    const d = 1e-4;
    const special = fc.oneof(v(-1, 3.3), fc.constantFrom(0, 1e-9, -1e-9));
    fc.assert(
      fc.property(v(-1, 3.3), special, v(0, 3), (vgs, vds, vsb) => {
        const i0 = ekv.current(p, vgs, vds, vsb);
        const i1 = ekv.current(p, vgs + d, vds + d, vsb + d);
        conductances(ekv, p, vgs, vds, vsb, a);
        conductances(ekv, p, vgs + d, vds + d, vsb + d, b);
        const scale = Math.abs(a[0]!) + Math.abs(a[1]!) + Math.abs(a[2]!);
        // A first-order Taylor step from one point must land on the next to second order.
        expect(Math.abs(i1 - i0 - (a[0]! + a[1]! - a[2]!) * d)).toBeLessThanOrEqual(0.05 * scale * d + 1e-18);
        expect(Math.abs(b[0]! - a[0]!) + Math.abs(b[1]! - a[1]!) + Math.abs(b[2]! - a[2]!)).toBeLessThanOrEqual(0.05 * scale + 1e-15);
        if (i0 > 1e-15 && vds > 0.1) expect(Math.abs(b[0]! / i1 - a[0]! / i0)).toBeLessThan(0.02 * (a[0]! / i0) + 1e-9);
      }),
      runs,
    );
  });
});
