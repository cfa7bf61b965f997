import { describe, expect, it } from "vitest";
import { device, drainCurrent, operatingPoint, Derivation, type DeviceCard, amperesPerVoltSquared, volts, meters, perVolt } from "../lib/index.js";

// Invented card for unit tests (not a real process).
const card: DeviceCard = { name: "test-n", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.5), lambda: perVolt(0.05) };
const m = device(card, meters(10e-6), meters(1e-6));

describe("drain current", () => {
  it("is ½·k·VOV² at the triode/saturation edge and continuous there (common practice)", () => {
    const k = 200e-6 * 10;
    const vov = 0.3;
    const edge = drainCurrent(m, 0.8, vov);
    expect(edge).toBeCloseTo(0.5 * k * vov * vov * (1 + 0.05 * vov), 15);
    const below = drainCurrent(m, 0.8, vov - 1e-9);
    expect(Math.abs(edge - below) / edge).toBeLessThan(1e-7);
  });
  it("agrees between the hot path and the recorded operating point", () => {
    const rec = new Derivation("t");
    const op = operatingPoint(m, { vgs: volts(1.1), vds: volts(0.2) }, {}, rec);
    expect(op.region).toBe("triode");
    expect(op.id).toBe(drainCurrent(m, 1.1, 0.2));
    const last = rec.steps.filter((s) => s.kind === "formula").at(-1);
    expect(last?.kind === "formula" && last.result.value).toBe(op.id);
  });
});
