/**
 * Worked examples from a named textbook. The numbers are recalled from memory
 * and marked so: Sedra & Smith, Microelectronic Circuits, 5th edition (Oxford
 * University Press, 2004), chapter 4, Examples 4.2, 4.3 and 4.4. The device
 * is the book's ideal long-channel square-law NMOS (λ = 0, no body effect).
 */
import { describe, expect, it } from "vitest";
import { amperes, amperesPerVoltSquared, aspectRatioFor, device, gateVoltageFor, meters, operatingPoint, smallSignal, volts, type DeviceCard } from "../lib/index.js";

describe("Sedra & Smith, Microelectronic Circuits, 5th ed. (values from memory)", () => {
  it("Example 4.2: ID = 0.4 mA in W/L = 32 µm/1 µm, µnCox = 100 µA/V², Vt = 0.7 V needs VOV = 0.5 V, VGS = 1.2 V", () => {
    const card: DeviceCard = { name: "S&S 4.2", polarity: "nmos", kp: amperesPerVoltSquared(100e-6), vt0: volts(0.7), provenance: "Sedra & Smith 5th ed. Example 4.2, from memory" };
    const m = device(card, meters(32e-6), meters(1e-6));
    const g = gateVoltageFor(m, amperes(0.4e-3));
    expect(g.vov).toBeCloseTo(0.5, 12);
    expect(g.vgs).toBeCloseTo(1.2, 12);
    // The book's circuit: VDD = +2.5 V, VSS = −2.5 V, VD = +0.5 V, so VS = −1.2 V and VDS = 1.7 V ≥ VOV: saturation.
    const op = operatingPoint(m, { vgs: volts(1.2), vds: volts(0.5 - -1.2) });
    expect(op.region).toBe("saturation");
    expect(op.id).toBeCloseTo(0.4e-3, 15);
    // The book's resistors, RD = (2.5 − 0.5)/0.4 mA = 5 kΩ and RS = (−1.2 + 2.5)/0.4 mA = 3.25 kΩ, from our VGS.
    expect((2.5 - 0.5) / op.id).toBeCloseTo(5e3, 6);
    expect((-g.vgs + 2.5) / op.id).toBeCloseTo(3.25e3, 6);
    expect(aspectRatioFor(card, amperes(0.4e-3), volts(0.5))).toBeCloseTo(32, 12);
  });

  it("Example 4.3: diode-connected, W/L = 4 µm/0.8 µm, µnCox = 200 µA/V², Vt = 0.6 V, 80 µA gives VGS = VDS = 1 V, R = 25 kΩ from 3 V", () => {
    const card: DeviceCard = { name: "S&S 4.3", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.6), provenance: "Sedra & Smith 5th ed. Example 4.3, from memory" };
    const m = device(card, meters(4e-6), meters(0.8e-6));
    const g = gateVoltageFor(m, amperes(80e-6), { vds: volts(1) });
    expect(g.vov).toBeCloseTo(0.4, 12);
    expect(g.vgs).toBeCloseTo(1.0, 12);
    const op = operatingPoint(m, { vgs: g.vgs, vds: g.vgs });
    expect(op.region).toBe("saturation"); // VDS = VGS > VOV always holds for a diode connection
    expect((3 - 1) / op.id).toBeCloseTo(25e3, 6);
  });

  it("Example 4.4: k'n·W/L = 1 mA/V², Vt = 1 V, VGS = 5 V, VD = 0.1 V: triode, ID = 0.395 mA, rDS = 253 Ω, RD = 12.4 kΩ", () => {
    const card: DeviceCard = { name: "S&S 4.4", polarity: "nmos", kp: amperesPerVoltSquared(1e-3), vt0: volts(1), provenance: "Sedra & Smith 5th ed. Example 4.4, from memory" };
    const m = device(card, meters(1e-6), meters(1e-6)); // W/L = 1 so k = k'n·W/L = 1 mA/V²
    const ss = smallSignal(m, { vgs: volts(5), vds: volts(0.1) });
    expect(ss.op.region).toBe("triode");
    expect(ss.op.id).toBeCloseTo(0.395e-3, 15);
    expect(0.1 / ss.op.id).toBeCloseTo(253.2, 1);
    expect((5 - 0.1) / ss.op.id).toBeCloseTo(12.4e3, -2);
    // Deep-triode estimate 1/(k·VOV) = 250 Ω, within 1.3 % of VDS/ID at VDS = 0.1 V (common practice: VDS ≪ 2·VOV).
    expect(ss.ron).toBeCloseTo(250, 9);
  });
});
