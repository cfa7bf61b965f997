import { describe, expect, it } from "vitest";
import { Derivation, InputError, amperes, amperesPerVoltSquared, celsius, inversion, inversionLevelOf, kelvin, operatingPoint, device, meters, volts } from "../lib/index.js";

const k = amperesPerVoltSquared(1e-3);
const ut27 = (1.380649e-23 * 300.15) / 1.602176634e-19; // kT/q at 27 °C, CODATA 2018 exact constants

describe("EKV inversion coefficient (Enz, Krummenacher & Vittoz 1995; levels as Enz & Vittoz use them)", () => {
  it("is IF/(2·n·k·UT²) with n = 1.3 (from memory) at 27 °C by default", () => {
    const inv = inversion(amperes(1e-6), k);
    expect(inv.ic).toBeCloseTo(1e-6 / (2 * 1.3 * 1e-3 * ut27 * ut27), 12);
    expect(inv.ut).toBeCloseTo(0.025865, 6);
    expect(inversion(amperes(1e-6), k, { slopeFactor: 1.5, temperature: celsius(85) }).ic).toBeCloseTo(
      1e-6 / (2 * 1.5 * 1e-3 * ((1.380649e-23 * 358.15) / 1.602176634e-19) ** 2),
      12,
    );
  });
  it("places the boundaries at IC = 0.1 and 10 (moderate inversion includes both)", () => {
    expect(inversionLevelOf(0.0999)).toBe("weak");
    expect(inversionLevelOf(0.1)).toBe("moderate");
    expect(inversionLevelOf(10)).toBe("moderate");
    expect(inversionLevelOf(10.01)).toBe("strong");
  });
  it("records a warning with the gm/ID ceiling 1/(n·UT) in weak inversion", () => {
    const rec = new Derivation("weak");
    const specific = 2 * 1.3 * 1e-3 * ut27 * ut27;
    inversion(amperes(0.01 * specific), k, {}, rec);
    expect(rec.findings).toHaveLength(1);
    expect(rec.findings[0]!.severity).toBe("warning");
    expect(rec.findings[0]!.text).toContain(`${+(1 / (1.3 * ut27)).toPrecision(3)} S/A`);
    expect(rec.assumptions.join(" ")).toMatch(/n = 1\.3 \(from memory/);
  });
  it("is recorded by operatingPoint when a derivation is given, and not otherwise", () => {
    const m = device({ name: "inv", polarity: "nmos", kp: amperesPerVoltSquared(100e-6), vt0: volts(0.5) }, meters(10e-6), meters(1e-6));
    const rec = new Derivation("op");
    operatingPoint(m, { vgs: volts(0.52), vds: volts(1) }, {}, rec);
    expect(rec.findings.map((f) => f.severity)).toEqual(["caution"]);
    expect(rec.steps.some((s) => s.kind === "formula" && s.formula === "inversionCoefficient")).toBe(true);
  });
  it("rejects bad inputs, naming them", () => {
    expect(() => inversion(amperes(NaN), k)).toThrow(InputError);
    expect(() => inversion(amperes(-1e-6), k)).toThrow(/inversion\.forward: got -0\.000001/);
    expect(() => inversion(amperes(1e-6), amperesPerVoltSquared(0))).toThrow(/inversion\.k: got 0/);
    expect(() => inversion(amperes(1e-6), k, { slopeFactor: 0.8 })).toThrow(/options\.slopeFactor: got 0\.8, expected a slope factor n ≥ 1/);
    expect(() => inversion(amperes(1e-6), k, { temperature: kelvin(-3) })).toThrow(/options\.temperature: got -3/);
  });
});
