/** Property tests of the square-law model (fast-check, seeded). */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { amperesPerVoltSquared, device, drainCurrent, meters, perVolt, smallSignal, sqrtVolts, volts, type ClmMode, type Device, type DeviceCard } from "../lib/index.js";

/** Random invented NMOS card and its PMOS twin (same parameters, mirrored threshold sign). */
const twins = fc
  .record({
    vt0: fc.double({ min: -0.5, max: 1.2, noNaN: true }),
    kp: fc.double({ min: 1e-6, max: 1e-3, noNaN: true }),
    lambda: fc.double({ min: 0, max: 0.2, noNaN: true }),
    gamma: fc.double({ min: 0, max: 1, noNaN: true }),
    phi: fc.double({ min: 0.4, max: 1, noNaN: true }),
    w: fc.double({ min: 0.2e-6, max: 1e-3, noNaN: true }),
    l: fc.double({ min: 0.1e-6, max: 20e-6, noNaN: true }),
  })
  .map((r) => {
    const common = { kp: amperesPerVoltSquared(r.kp), lambda: perVolt(r.lambda), gamma: sqrtVolts(r.gamma), phi: volts(r.phi) };
    const nCard: DeviceCard = { name: "twin-n", polarity: "nmos", vt0: volts(r.vt0), ...common };
    const pCard: DeviceCard = { name: "twin-p", polarity: "pmos", vt0: volts(-r.vt0), ...common };
    return { n: device(nCard, meters(r.w), meters(r.l)), p: device(pCard, meters(r.w), meters(r.l)) };
  });

const v = (min: number, max: number) => fc.double({ min, max, noNaN: true });
const clm = fc.constantFrom<ClmMode>("continuous", "saturation-only");
const runs = { seed: 42, numRuns: 400 };

describe("square-law model properties", () => {
  it("ID is non-decreasing in VGS (NMOS, VDS ≥ 0) and |ID| in |VGS| (PMOS)", () => {
    fc.assert(
      fc.property(twins, v(-2, 4), v(0, 2), v(0, 4), v(0, 3), clm, ({ n, p }, vgs, dv, vds, vsb, mode) => {
        expect(drainCurrent(n, vgs + dv, vds, vsb, mode)).toBeGreaterThanOrEqual(drainCurrent(n, vgs, vds, vsb, mode));
        expect(-drainCurrent(p, -(vgs + dv), -vds, -vsb, mode)).toBeGreaterThanOrEqual(-drainCurrent(p, -vgs, -vds, -vsb, mode));
      }),
      runs,
    );
  });
  it("ID is non-decreasing in VDS for VDS ≥ 0, across the triode/saturation edge, in both CLM modes", () => {
    fc.assert(
      fc.property(twins, v(-2, 4), v(0, 4), v(0, 2), v(0, 3), clm, ({ n }, vgs, vds, dv, vsb, mode) => {
        expect(drainCurrent(n, vgs, vds + dv, vsb, mode)).toBeGreaterThanOrEqual(drainCurrent(n, vgs, vds, vsb, mode));
      }),
      runs,
    );
  });
  it("a PMOS with mirrored voltages carries −ID of its NMOS twin, with the same gm, gds and gmb", () => {
    fc.assert(
      fc.property(twins, v(-3, 4), v(-4, 4), v(-0.3, 3), ({ n, p }: { n: Device; p: Device }, vgs, vds, vsb) => {
        const idN = drainCurrent(n, vgs, vds, vsb);
        expect(drainCurrent(p, -vgs, -vds, -vsb) + idN).toBe(0);
        const a = smallSignal(n, { vgs: volts(vgs), vds: volts(vds), vsb: volts(vsb) });
        const b = smallSignal(p, { vgs: volts(-vgs), vds: volts(-vds), vsb: volts(-vsb) });
        expect([b.op.region, b.gm, b.gds, b.gmb]).toEqual([a.op.region, a.gm, a.gds, a.gmb]);
      }),
      runs,
    );
  });
  it("drain and source are interchangeable: ID(VGS, VDS, VSB) = −ID(VGD, VSD, VDB) (symmetric Level 1 device)", () => {
    fc.assert(
      fc.property(twins, v(-2, 4), v(-3, 3), v(0, 2), ({ n }, vgs, vds, vsb) => {
        const forward = drainCurrent(n, vgs, vds, vsb);
        const swapped = drainCurrent(n, vgs - vds, -vds, vsb + vds);
        expect(Math.abs(forward + swapped)).toBeLessThanOrEqual(1e-12 * Math.abs(forward) + 1e-20) // 1e-20 A: rounding of VGS − VDS, far below any current of interest;
      }),
      runs,
    );
  });
});
