/**
 * fast-check generators shared by the ngspice comparisons: seeded numbers on a
 * linear or log scale, and random invented Level 1 cards of realistic size.
 */
import fc from "fast-check";
import type { DeviceCard, Polarity } from "../../lib/device/card.js";

export const unit = fc.noBias(fc.integer({ min: 0, max: 1 << 30 })).map((i) => i / (1 << 30));
export const uniform = (lo: number, hi: number) => unit.map((x) => lo + x * (hi - lo));
export const logUniform = (lo: number, hi: number) => uniform(Math.log(lo), Math.log(hi)).map(Math.exp);
/** `arb`, or 0 with probability pZero (λ = 0, γ = 0, no source resistor…). */
export const maybeZero = (arb: fc.Arbitrary<number>, pZero: number) => fc.tuple(unit, arb).map(([u, v]) => (u < pZero ? 0 : v));

/** A random invented card: KP, |VTO| 0.3–1.2 V, λ and γ zero in 30 % of draws, PHI 0.55–0.9 V. */
export const cardArb = (polarity: Polarity, name = `rand-${polarity}`): fc.Arbitrary<DeviceCard> =>
  fc
    .record({
      kp: polarity === "nmos" ? logUniform(50e-6, 300e-6) : logUniform(20e-6, 120e-6),
      vt: uniform(0.3, 1.2),
      lambda: maybeZero(uniform(0.005, 0.15), 0.3),
      gamma: maybeZero(uniform(0.1, 0.8), 0.3),
      phi: uniform(0.55, 0.9),
    })
    .map((r) => ({ name, polarity, kp: r.kp, vt0: polarity === "nmos" ? r.vt : -r.vt, lambda: r.lambda, gamma: r.gamma, phi: r.phi }) as DeviceCard);
