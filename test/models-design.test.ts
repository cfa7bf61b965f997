/**
 * Designing with the non-square-law models: inverse design by numeric inversion
 * (round trips through drainCurrent), the gm/ID method, and the gm and gm/ID
 * plot, whose EKV curve levels off at 1/(n·UT) in weak inversion. Cards invented.
 */
import { describe, expect, it } from "vitest";
import {
  aspectRatioFor,
  device,
  drainCurrent,
  gateVoltageFor,
  InputError,
  meters,
  sizeByGmOverId,
  smallSignal,
  thermalVoltage,
  widthForCurrent,
  type DeviceCard,
} from "../lib/index.js";
import { transconductancePlot } from "../lib/plot/transconductance.js";
import { outputCharacteristics } from "../lib/plot/output-characteristics.js";

const base = { name: "invented-n", polarity: "nmos", kp: 150e-6, vt0: 0.6, lambda: 0.04, gamma: 0.5, phi: 0.75 };
const ekvCard = { ...base, model: "ekv", theta: 0.2, thetaB: 0.05, ecrit: 4e6, sigma: 0.01 } as unknown as DeviceCard;
const mobCard = { ...base, model: "square-law-mobility", theta: 0.2, ecrit: 4e6 } as unknown as DeviceCard;
const pmos = (c: DeviceCard): DeviceCard => ({ ...c, name: "invented-p", polarity: "pmos", vt0: -c.vt0 as never });
const at = (c: DeviceCard) => device(c, meters(20e-6), meters(0.5e-6));

describe("inverse design with the models", () => {
  for (const card of [ekvCard, mobCard, pmos(ekvCard), pmos(mobCard)]) {
    const s = card.polarity === "nmos" ? 1 : -1;
    it(`${card.model} ${card.polarity}: gateVoltageFor gives a VGS whose current is the target (weak to strong inversion)`, () => {
      const dev = at(card);
      for (const id of card.model === "ekv" ? [1e-9, 1e-7, 1e-5, 1e-3] : [1e-6, 1e-4, 1e-3]) {
        const g = gateVoltageFor(dev, id as never, { vds: (s * 2.5) as never, vsb: (s * 0.3) as never });
        expect(Math.abs(drainCurrent(dev, g.vgs, s * 2.5, s * 0.3)) / id - 1).toBeLessThan(1e-9);
      }
    });
    it(`${card.model} ${card.polarity}: widthForCurrent and sizeByGmOverId round-trip through the model`, () => {
      const dev = at(card);
      const w = widthForCurrent(dev, 200e-6 as never, (s * 1.4) as never, { vds: (s * 2) as never });
      expect(Math.abs(drainCurrent({ ...dev, w }, s * 1.4, s * 2, 0)) / 200e-6 - 1).toBeLessThan(1e-12);
      const target = card.model === "ekv" ? 15 : 6;
      const z = sizeByGmOverId(dev, 50e-6 as never, target as never, { vds: (s * 2) as never });
      const sized = { ...dev, w: z.w };
      const ss = smallSignal(sized, { vgs: z.vgs, vds: (s * 2) as never });
      expect(Math.abs(ss.op.channelCurrent) / 50e-6 - 1).toBeLessThan(1e-9);
      expect(ss.gmOverId! / target - 1).toBeLessThan(1e-6);
    });
  }
  it("refuses W/L sizing by the square law's closed form on an EKV card, naming what to use", () => {
    expect(() => aspectRatioFor(ekvCard, 1e-4 as never, 0.2 as never)).toThrow(InputError);
    expect(() => aspectRatioFor(ekvCard, 1e-4 as never, 0.2 as never)).toThrow(/widthForCurrent/);
  });
  it("says when a target needs more VDS than the device has (triode), in numbers", () => {
    expect(() => gateVoltageFor(at(ekvCard), 1e-3 as never, { vds: 0.2 as never })).toThrow(/VDsat = .* exceeds the VDS = 0\.2 V/);
    expect(() => gateVoltageFor(at(ekvCard), 1 as never, { vds: 0.2 as never })).toThrow(/no gate voltage up to/);
  });
});

describe("gm and gm/ID plot", () => {
  const series = (card: DeviceCard) => {
    const p = transconductancePlot(at(card), { vovMax: 1.5, vds: 2, points: 241 });
    const eff = p.figure.data.find((t) => (t.meta as { role?: string })?.role === "gm-over-id")!;
    return { x: eff.x as number[], y: eff.y as number[], summary: p.summary };
  };
  it("EKV: gm/ID levels off at 1/(n·UT) in weak inversion instead of rising past it (Enz, Krummenacher & Vittoz 1995 weak-inversion limit)", () => {
    // γ = 0.5, 2φF = 0.75: n = 1 + γ/(2√(VP + 2φF)) lies between 1.2 and 1.6 over the weak-inversion end of the sweep.
    const { x, y, summary } = series({ ...ekvCard, sigma: undefined, lambda: 0 } as unknown as DeviceCard);
    const ut = thermalVoltage(300.15 as never);
    expect(Math.min(...x)).toBeLessThan(0);
    const peak = Math.max(...y);
    expect(peak).toBeLessThan(1 / (1.2 * ut));
    expect(peak).toBeGreaterThan(1 / (1.6 * ut));
    // The low end is the plateau: within 15 % of the peak, not a square-law 2/VOV blow-up.
    expect(y[0]!).toBeGreaterThan(0.85 * peak);
    // Non-increasing to within 0.5 %: n = 1 + γ/(2√(VP + 2φF + 4UT)) drifts with VP, which leaves a shallow bump on the plateau.
    for (let i = 1; i < y.length; i++) expect(y[i]!).toBeLessThanOrEqual(y[i - 1]! * 1.005);
    expect(summary).toMatch(/levels off/);
  });
  it("square law: gm/ID = 2/VOV rises past 1/(n·UT) at low overdrive (the contrast the EKV plot removes)", () => {
    const { y } = series(base as unknown as DeviceCard);
    expect(Math.max(...y)).toBeGreaterThan(1 / (1.5 * thermalVoltage(300.15 as never)));
  });
});

describe("output characteristics with a model's own saturation edge", () => {
  it("EKV: the dashed edge sits at the model's VDsat, below VOV once velocity saturation acts", () => {
    const dev = at(ekvCard);
    const p = outputCharacteristics(dev, { gateDrives: [1, 1.8, 2.6], vdsMax: 3.3 });
    const edge = p.figure.data.find((t) => (t.meta as { role?: string })?.role === "boundary")!;
    const xs = edge.x as number[];
    const last = xs[xs.length - 1]! * (p.axes.x.divisor ?? 1);
    const op = smallSignal(dev, { vgs: 2.6 as never, vds: 3.3 as never }).op;
    expect(last).toBeCloseTo(op.vdsat, 4); // plotted values carry 6 significant digits
    expect(op.vdsat).toBeLessThan(op.vov);
    expect(p.summary).toMatch(/VDsat/);
  });
});
