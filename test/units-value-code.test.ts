import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { readValueCode } from "../lib/units/value-code.js";

describe("IEC 60062 letter and digit code", () => {
  // Examples of resistance codes as listed from IEC 60062 in the Wikipedia article "RKM code"
  // (the standard's own text was not consulted).
  it.each([
    ["R47", 0.47],
    ["4R7", 4.7],
    ["470R", 470],
    ["4K7", 4700],
    ["47K3", 47300],
    ["4M7", 4.7e6],
  ] as const)("%s = %d Ω (IEC 60062 examples)", (code, ohms) => {
    expect(readValueCode(code)).toEqual({ value: ohms, dim: "resistance", letter: code.replace(/[0-9]/g, "") });
  });

  it("reads the other resistance letters: L milli, G giga, T tera (IEC 60062:2016, as summarised in secondary references)", () => {
    expect(readValueCode("6L8")?.value).toBe(6.8e-3);
    expect(readValueCode("2G2")?.value).toBe(2.2e9);
    expect(readValueCode("1T0")?.value).toBe(1e12);
  });

  it("reads lower-case k and r as K and R (common practice on schematics)", () => {
    expect(readValueCode("4k7")).toEqual({ value: 4700, dim: "resistance", letter: "k" });
    expect(readValueCode("2r2")?.value).toBe(2.2);
  });

  it("reads the capacitance letters p, n, µ (or u), m, F (IEC 60062)", () => {
    expect(readValueCode("4p7")).toEqual({ value: 4.7e-12, dim: "capacitance", letter: "p" });
    expect(readValueCode("4n7")?.value).toBe(4.7e-9);
    expect(readValueCode("2\u00b52")?.value).toBe(2.2e-6);
    expect(readValueCode("2\u03bc2")?.value).toBe(2.2e-6);
    expect(readValueCode("2u2")?.value).toBe(2.2e-6);
    expect(readValueCode("3m3")?.value).toBe(3.3e-3);
    expect(readValueCode("1F5")?.value).toBe(1.5);
    expect(readValueCode("n47")?.value).toBe(0.47e-9);
  });

  it("keeps M (mega-ohm) and m (milli-farad) apart", () => {
    expect(readValueCode("1M5")).toEqual({ value: 1.5e6, dim: "resistance", letter: "M" });
    expect(readValueCode("1m5")).toEqual({ value: 1.5e-3, dim: "capacitance", letter: "m" });
  });

  it("leaves codes ending in a SPICE scale letter to the SPICE reader (SPICE reads 4M as 4 milli)", () => {
    for (const t of ["47K", "4M", "4F", "10p", "4k"]) expect(readValueCode(t)).toBeUndefined();
  });

  it("is not fooled by plain numbers, units or exponents", () => {
    for (const t of ["4.7", "1e5", "1E5", "R", "k", "4k7k", "4.7k7", "4 k7", "", "kR", "4kΩ"]) expect(readValueCode(t)).toBeUndefined();
  });

  it("matches the decimal reading for any digits around the letter (property)", () => {
    fc.assert(
      fc.property(fc.stringMatching(/^[0-9]{1,3}$/), fc.stringMatching(/^[0-9]{1,3}$/), fc.constantFrom(["R", 0], ["K", 3], ["M", 6], ["n", -9], ["p", -12]), (a, b, [letter, k]) => {
        expect(readValueCode(`${a}${letter}${b}`)?.value).toBe(Number(`${a}.${b}e${k}`));
      }),
    );
  });
});
