import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { formatCelsius, formatNumber, formatQuantity, scaleFor, texQuantity } from "../lib/units/format.js";
import { InputError } from "../lib/errors.js";

// Prefixes and their powers: SI Brochure, 9th edition (2019), table 7.
describe("formatQuantity", () => {
  it.each([
    [2.2e-3, "current", "2.20 mA"],
    [0.0021999999, "current", "2.20 mA"],
    [4700, "resistance", "4.70 kΩ"],
    [-1.5, "voltage", "-1.50 V"],
    [820, "resistance", "820 Ω"],
    [12e-6, "transconductanceParameter", "12.0 µA/V²"],
    [0.02, "inverseVoltage", "0.0200 V⁻¹"],
    [300, "temperature", "300 K"],
    [0, "voltage", "0.00 V"],
    [1e6, "resistance", "1.00 MΩ"],
    [47e-12, "capacitance", "47.0 pF"],
    [2e-3, "voltagePerKelvin", "2.00 mV/K"],
    [10e-6, "length", "10.0 µm"],
    [0.4, "sqrtVoltage", "0.400 √V"],
    [15.2, "inverseVoltageEfficiency", "15.2 S/A"],
    // 3.45e-3 F/m² = 3.45 fF/µm² (1 fF/µm² = 1e-15 F / 1e-12 m²).
    [3.45e-3, "capacitancePerArea", "3.45 fF/µm²"],
    // 0.04 m²/(V·s) = 400 cm²/(V·s).
    [0.04, "mobility", "400 cm²/(V·s)"],
    [150, "dimensionless", "150"],
    [2e-5, "inverseVoltage", "2.00×10⁻⁵ V⁻¹"],
    [Infinity, "resistance", "∞ Ω"],
    [-Infinity, "voltage", "-∞ V"],
  ] as const)("%s in %s is %s", (v, dim, text) => {
    expect(formatQuantity(v, dim)).toBe(text);
  });

  it("carries rounding into the next prefix: 999.6 mA at 3 digits is 1.00 A", () => {
    expect(formatQuantity(0.9996, "current")).toBe("1.00 A");
    expect(formatQuantity(999.96e3, "resistance")).toBe("1.00 MΩ");
  });

  it("takes a digit count", () => {
    expect(formatQuantity(2.2e-3, "current", { digits: 5 })).toBe("2.2000 mA");
    expect(formatQuantity(4.7e3, "resistance", { digits: 1 })).toBe("5 kΩ");
  });

  it("adds Celsius on request, at the kelvin value's resolution", () => {
    expect(formatQuantity(300, "temperature", { celsius: true })).toBe("300 K (27 °C)");
    expect(formatQuantity(300.15, "temperature", { celsius: true, digits: 5 })).toBe("300.15 K (27.00 °C)");
    expect(formatCelsius(273.15, { digits: 5 })).toBe("0.00 °C");
  });

  it("uses powers of ten beyond the prefix range", () => {
    expect(formatQuantity(1e-21, "current")).toBe("1.00×10⁻³ aA");
  });

  it("refuses NaN and bad digit counts with typed errors naming the value", () => {
    expect(() => formatQuantity(NaN, "current", { origin: "ID" })).toThrow(InputError);
    expect(() => formatQuantity(NaN, "current", { origin: "ID" })).toThrow(/ID: got NaN, expected a number to display as current/);
    expect(() => formatQuantity(1, "current", { digits: 0 })).toThrow(/significant digits/);
  });

  it("round-trips: the shown digits parse back within half a unit of the last digit", () => {
    fc.assert(
      fc.property(fc.double({ min: 1e-17, max: 1e14, noNaN: true }), fc.integer({ min: 1, max: 8 }), (v, digits) => {
        const text = formatQuantity(v, "current", { digits });
        const m = /^([0-9.]+)(?:×10([⁻⁰¹²³⁴⁵⁶⁷⁸⁹]+))? ([afpnµmkMGT]?)A$/.exec(text);
        expect(m, text).not.toBeNull();
        const powers: Record<string, number> = { a: -18, f: -15, p: -12, n: -9, µ: -6, m: -3, "": 0, k: 3, M: 6, G: 9, T: 12 };
        const exp = m![2] ? Number([...m![2]].map((c) => "⁻⁰¹²³⁴⁵⁶⁷⁸⁹".indexOf(c)).map((i) => (i === 0 ? "-" : String(i - 1))).join("")) : 0;
        const back = Number(m![1]) * 10 ** (powers[m![3]!]! + exp);
        // "20 mA" at one digit: trailing zeros of a whole number only place the point.
        const shown = m![1]!;
        if (shown.includes(".")) expect(shown.replace(".", "").replace(/^0+/, "").length).toBe(digits);
        else expect(shown.replace(/0+$/, "").length).toBeLessThanOrEqual(digits);
        expect(Math.abs(back - v) / v).toBeLessThanOrEqual(0.5 * 10 ** (1 - digits) * 1.000001);
      }),
    );
  });
});

describe("fractions", () => {
  it("show in per cent", () => {
    expect(formatQuantity(0.05, "fraction")).toBe("5.00 %");
    expect(formatQuantity(0.469, "fraction")).toBe("46.9 %");
  });
});

describe("counts", () => {
  it("show whole counts whole and anything else with significant digits", () => {
    expect(formatQuantity(23, "count")).toBe("23");
    expect(formatQuantity(0, "count")).toBe("0");
    expect(formatQuantity(192, "count")).toBe("192");
    expect(formatQuantity(2.5, "count")).toBe("2.50");
  });
});

describe("formatNumber and texQuantity", () => {
  it("writes plain ratios", () => {
    expect(formatNumber(0.02)).toBe("0.0200");
    expect(formatNumber(12.345, { digits: 4 })).toBe("12.35");
  });
  it("writes TeX with a thin space and upright units", () => {
    expect(texQuantity(2.2e-3, "current")).toBe("2.20\\,\\mathrm{m}\\mathrm{A}");
    expect(texQuantity(4700, "resistance")).toBe("4.70\\,\\mathrm{k}\\Omega");
    expect(texQuantity(12e-6, "transconductanceParameter")).toBe("12.0\\,\\mu\\mathrm{A/V^{2}}");
    expect(texQuantity(2e-5, "inverseVoltage")).toBe("2.00\\times10^{-5}\\,\\mathrm{V^{-1}}");
    expect(texQuantity(Infinity, "resistance")).toBe("\\infty\\,\\Omega");
    expect(texQuantity(3, "dimensionless")).toBe("3.00");
  });
});

describe("scaleFor", () => {
  it("picks one prefix for a set of values (an axis)", () => {
    expect(scaleFor([0, 1.2e-3, 3.4e-3], "current")).toEqual({ divisor: 1e-3, unit: "mA", tex: "\\mathrm{m}\\mathrm{A}" });
    expect(scaleFor([0], "voltage").unit).toBe("V");
    expect(scaleFor([0.02], "inverseVoltage").unit).toBe("V⁻¹");
  });
});
