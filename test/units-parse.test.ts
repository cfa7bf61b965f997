import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { parseAny, parseQuantity, formatQuantity } from "../lib/units/index.js";
import { InputError } from "../lib/errors.js";
import { dimensions, type Dimension } from "../lib/quantity.js";

/** The thrown error, so its fields can be checked; fails the test when nothing is thrown. */
function thrown(f: () => unknown): InputError {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    return e as InputError;
  }
  throw new Error("expected an InputError, nothing was thrown");
}

// SI prefixes and the coherent SI units are from the SI Brochure (BIPM, 9th ed., 2019);
// the expected values are the doubles nearest the decimal values, so toBe is exact.
describe("parseQuantity: accepted spellings, exact SI values", () => {
  const accepted: Array<[string, Dimension, number]> = [
    ["4.7 kΩ", "resistance", 4700],
    ["4.7 k\u2126", "resistance", 4700], // OHM SIGN U+2126
    ["4.7 kohm", "resistance", 4700],
    ["4.7kΩ", "resistance", 4700],
    ["4.7 kOhm", "resistance", 4700],
    ["4.7 kohms", "resistance", 4700],
    ["1 MΩ", "resistance", 1e6],
    ["220 mΩ", "resistance", 0.22],
    ["20 \u00b5A", "current", 2e-5], // MICRO SIGN
    ["20 \u03bcA", "current", 2e-5], // GREEK SMALL LETTER MU
    ["20uA", "current", 2e-5],
    ["-1.5 mA", "current", -1.5e-3],
    ["200 uA/V^2", "transconductanceParameter", 2e-4],
    ["200 µA/V²", "transconductanceParameter", 2e-4],
    ["0.02 /V", "inverseVoltage", 0.02],
    ["0.02 1/V", "inverseVoltage", 0.02],
    ["0.02 V^-1", "inverseVoltage", 0.02],
    ["0.02 V⁻¹", "inverseVoltage", 0.02],
    ["0.4 V^0.5", "sqrtVoltage", 0.4],
    ["0.4 sqrt(V)", "sqrtVoltage", 0.4],
    ["0.4 √V", "sqrtVoltage", 0.4],
    ["0.4 V^(1/2)", "sqrtVoltage", 0.4],
    ["300 K", "temperature", 300],
    ["1 um", "length", 1e-6],
    ["180 nm", "length", 1.8e-7],
    ["-2 mV/K", "voltagePerKelvin", -2e-3],
    ["2 mS", "conductance", 2e-3],
    ["5 mA/V", "conductance", 5e-3],
    ["400 cm^2/(V s)", "mobility", 0.04],
    ["400 cm²/(V·s)", "mobility", 0.04],
    ["8.6 fF/um^2", "capacitancePerArea", 8.6e-3],
    ["15 S/A", "inverseVoltageEfficiency", 15],
    ["15 /V", "inverseVoltageEfficiency", 15],
    ["100 nF", "capacitance", 1e-7],
    ["250 mW", "power", 0.25],
    ["10 ns", "time", 1e-8],
    ["1.23×10⁻⁷ V⁻¹", "inverseVoltage", 1.23e-7],
    ["1.5 x 10^3 ohm", "resistance", 1500],
    ["0.5", "dimensionless", 0.5],
    ["  3.3 V  ", "voltage", 3.3],
    ["3.3V", "voltage", 3.3],
    ["1.2e-3 V", "voltage", 1.2e-3],
  ];
  for (const [text, dim, si] of accepted) it(`${JSON.stringify(text)} → ${si} (${dimensions[dim].unit || "no unit"})`, () => expect(parseQuantity(text, dim, "test")).toBe(si));

  it("reads °C with the exact 273.15 K offset (SI Brochure, 9th ed., 2.3.1)", () => {
    expect(parseQuantity("27 degC", "temperature")).toBe(27 + 273.15);
    expect(parseQuantity("27 °C", "temperature")).toBe(27 + 273.15);
    expect(parseQuantity("27 \u2103", "temperature")).toBe(27 + 273.15);
    expect(parseQuantity("-40 degC", "temperature")).toBeCloseTo(233.15, 12);
    // −40 °F = −40 °C (from the definitions of both scales).
    expect(parseQuantity("-40 degF", "temperature")).toBeCloseTo(233.15, 10);
  });

  it("takes a temperature coefficient per °C as per kelvin (a difference, no offset)", () => {
    expect(parseQuantity("-2 mV/degC", "voltagePerKelvin")).toBeCloseTo(-2e-3, 15);
  });

  it("takes a number as already in SI", () => {
    expect(parseQuantity(0.25, "dimensionless")).toBe(0.25);
    expect(parseQuantity(1e-6, "current")).toBe(1e-6);
  });
});

describe("ratios written with %, ‰ or ppm (common practice)", () => {
  it("read as plain ratios, in dimensionless inputs only", () => {
    expect(parseQuantity("20 %", "dimensionless")).toBe(0.2);
    expect(parseQuantity("5%", "dimensionless")).toBe(0.05);
    expect(parseQuantity("2 ‰", "dimensionless")).toBe(0.002);
    expect(parseQuantity("50 ppm", "dimensionless")).toBe(5e-5);
    expect(parseAny("20 %")).toEqual({ value: 0.2, dim: "dimensionless" });
    expect(parseQuantity("20 %", "fraction")).toBe(0.2);
    expect(parseQuantity("0.2", "fraction")).toBe(0.2);
    expect(() => parseQuantity("20 %", "voltage", "VT0_SPREAD")).toThrow(/VT0_SPREAD: got "20 %", expected a voltage in V/);
  });
});

describe("SPICE scale factors (ngspice manual, 'scale factors'; values checked against ngspice in units-spice-number.test.ts)", () => {
  const accepted: Array<[string, Dimension, number]> = [
    ["4.7k", "resistance", 4700],
    ["4.7K", "resistance", 4700],
    ["1meg", "resistance", 1e6],
    ["1MEG", "resistance", 1e6],
    ["1Meg", "resistance", 1e6],
    ["1M", "resistance", 1e-3], // SPICE: M is milli, whatever the case
    ["1m", "voltage", 1e-3],
    ["10u", "current", 1e-5],
    ["2.2n", "capacitance", 2.2e-9],
    ["5p", "capacitance", 5e-12],
    ["3f", "capacitance", 3e-15],
    ["2G", "resistance", 2e9],
    ["1T", "resistance", 1e12],
    ["1mil", "length", 25.4e-6],
    // With a unit after the factor, as in a deck ("1megohm"), or a SPICE factor mathjs does not know ("10UA").
    ["1megohm", "resistance", 1e6],
    ["1MEGOHM", "resistance", 1e6],
    ["10UA", "current", 1e-5],
    ["4.7Kohm", "resistance", 4700],
  ];
  for (const [text, dim, si] of accepted) it(`${JSON.stringify(text)} → ${si}`, () => expect(parseQuantity(text, dim, "test")).toBe(si));

  it("reads SI prefixes, case-sensitive, once a unit is written: 1 MΩ is mega, 1 mA milli", () => {
    expect(parseQuantity("1Mohm", "resistance")).toBe(1e6);
    expect(parseQuantity("1mA", "current")).toBe(1e-3);
    expect(parseQuantity("1 m", "length")).toBe(1); // a metre, with a space and a unit
    // A deliberate difference from SPICE: ngspice reads "1MA" as 1e-3 (see units-spice-number.test.ts),
    // but once a unit is written the text is SI notation, where M is mega.
    expect(parseQuantity("1MA", "current")).toBe(1e6);
    expect(parseQuantity("1MΩ", "resistance")).toBe(1e6);
  });
});

describe("IEC 60062 value codes through parseQuantity", () => {
  it("reads the letter as the decimal point and the multiplier", () => {
    expect(parseQuantity("4k7", "resistance")).toBe(4700);
    expect(parseQuantity("2R2", "resistance")).toBe(2.2);
    expect(parseQuantity("1M5", "resistance")).toBe(1.5e6);
    expect(parseQuantity("R47", "resistance")).toBe(0.47);
    expect(parseQuantity("4n7", "capacitance")).toBe(4.7e-9);
  });
  it("rejects a resistance code where a capacitance is expected, and the reverse", () => {
    const e = thrown(() => parseQuantity("4k7", "capacitance", "C1"));
    expect(e.code).toBe("wrong-dimension");
    expect(e.message).toContain("C1");
    expect(e.message).toContain('"4k7"');
    expect(e.message).toContain("capacitance in F");
    expect(thrown(() => parseQuantity("4n7", "resistance")).code).toBe("wrong-dimension");
  });
});

describe("parseAny finds the dimension from the unit", () => {
  it.each([
    ["3.3 V", "voltage", 3.3],
    ["20 uA", "current", 2e-5],
    ["4.7 kΩ", "resistance", 4700],
    ["200 uA/V^2", "transconductanceParameter", 2e-4],
    ["0.02 /V", "inverseVoltage", 0.02],
    ["15 S/A", "inverseVoltageEfficiency", 15],
    ["0.4 sqrt(V)", "sqrtVoltage", 0.4],
    ["27 degC", "temperature", 300.15],
    ["1 um", "length", 1e-6],
    ["4k7", "resistance", 4700],
    ["4n7", "capacitance", 4.7e-9],
    ["0.5", "dimensionless", 0.5],
    ["4.7k", "dimensionless", 4700],
  ] as const)("%s → %s %d", (text, dim, value) => {
    const q = parseAny(text, "test");
    expect(q.dim).toBe(dim);
    expect(q.value).toBeCloseTo(value, 12);
  });
  it("names a unit of no known dimension", () => {
    const e = thrown(() => parseAny("3 J", "E1"));
    expect(e.code).toBe("wrong-dimension");
    expect(e.message).toMatch(/E1: .*"3 J".*kg m\^2/);
  });
});

describe("errors: typed, naming the text, the dimensions and the origin; never NaN", () => {
  it("wrong dimension names the text, what was found, what was expected with its SI unit, and where", () => {
    const e = thrown(() => parseQuantity("3 V", "current", "bias.idrain"));
    expect(e.code).toBe("wrong-dimension");
    expect(e.origin).toBe("bias.idrain");
    expect(e.value).toBe("3 V");
    expect(e.message).toBe('bias.idrain: got "3 V", expected a current in A, but it is a voltage (V)');
  });
  it("wrong dimension for a unit of no pinchoff dimension, with a hint for C as coulomb", () => {
    const e = thrown(() => parseQuantity("27 C", "temperature", "ambient"));
    expect(e.code).toBe("wrong-dimension");
    expect(e.message).toContain("coulomb");
  });
  it.each(["abc", "4.7 furlongs", "4.7 kohm + 3", "2 3 V", "2i V", "V", "4.7 k", "1.2.3 V", "4k7 ohm", "3 V)", "x10^3 V", "10x"])("%j is unparseable", (text) => {
    const e = thrown(() => parseQuantity(text, "voltage", "field"));
    expect(e.code).toBe("unparseable");
    expect(e.message).toContain("field");
    expect(e.message).toContain(JSON.stringify(text));
  });
  it("a space before a lone SPICE factor gets a hint", () => {
    expect(thrown(() => parseQuantity("4.7 k", "resistance")).message).toContain('"4.7k"');
  });
  it.each(["", "   "])("empty text %j is an InputError", (text) => {
    expect(thrown(() => parseQuantity(text, "voltage", "vdd")).code).toBe("unparseable");
  });
  it.each(["NaN", "Infinity", "-inf", "1e999 ohm", "1e999", "1e400 kohm"])("non-finite text %j is an InputError", (text) => {
    const e = thrown(() => parseQuantity(text, "resistance", "R2"));
    expect(e.code).toBe("invalid-value");
    expect(e.message).toContain("finite");
  });
  it("an IEC code too long to be finite is an InputError", () => {
    expect(thrown(() => parseQuantity(`1${"0".repeat(400)}R0`, "resistance", "R3")).code).toBe("invalid-value");
  });
  it.each([Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY])("non-finite number %d is an InputError", (v) => {
    expect(thrown(() => parseQuantity(v, "dimensionless", "gain")).code).toBe("invalid-value");
    expect(thrown(() => parseAny(v, "gain")).code).toBe("invalid-value");
  });
  it("rejects values that are neither text nor number, and unknown dimensions", () => {
    expect(thrown(() => parseQuantity(null as unknown as string, "voltage", "vdd")).message).toContain("vdd");
    expect(thrown(() => parseQuantity("3 V", "volts" as Dimension, "vdd")).message).toContain("voltage");
  });
});

describe("properties (fast-check)", () => {
  const prefixes: Array<[string, number]> = [
    ["f", -15],
    ["p", -12],
    ["n", -9],
    ["u", -6],
    ["µ", -6],
    ["m", -3],
    ["", 0],
    ["k", 3],
    ["M", 6],
    ["G", 9],
  ];
  it("mantissa with any SI prefix gives the double nearest mantissa·10^exp (SI Brochure prefixes)", () => {
    fc.assert(
      fc.property(fc.integer({ min: -99999, max: 99999 }), fc.integer({ min: 0, max: 4 }), fc.constantFrom(...prefixes), fc.constantFrom("A", "V", "ohm", "F", "S"), (digits, decimals, [p, k], unit) => {
        const mant = (digits / 10 ** decimals).toFixed(decimals);
        const dim: Dimension = ({ A: "current", V: "voltage", ohm: "resistance", F: "capacitance", S: "conductance" } as const)[unit as "A"];
        expect(parseQuantity(`${mant} ${p}${unit}`, dim)).toBe(Number(`${mant}e${k}`));
      }),
      { numRuns: 300 },
    );
  });
  it("never returns a non-finite number for any text: it returns a finite value or throws an InputError", () => {
    fc.assert(
      fc.property(fc.string({ maxLength: 12 }), fc.constantFrom(...(Object.keys(dimensions) as Dimension[])), (text, dim) => {
        let v: number | undefined;
        try {
          v = parseQuantity(text, dim, "fuzz");
        } catch (e) {
          expect(e).toBeInstanceOf(InputError);
          return;
        }
        expect(Number.isFinite(v)).toBe(true);
      }),
      { numRuns: 400 },
    );
  });
  it("reads back what format.ts prints, to the printed digits", () => {
    const dims = Object.keys(dimensions) as Dimension[];
    fc.assert(
      fc.property(fc.double({ min: 1e-13, max: 1e13, noNaN: true }), fc.constantFrom(...dims), fc.boolean(), (v, dim, negative) => {
        const value = negative ? -v : v;
        const text = formatQuantity(value, dim, { digits: 6 });
        const back = parseQuantity(text, dim, "round trip");
        expect(Math.abs(back - value)).toBeLessThanOrEqual(Math.abs(value) * 5e-6);
      }),
      { numRuns: 400 },
    );
  });
});
