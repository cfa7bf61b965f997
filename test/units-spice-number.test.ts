import { describe, expect, it } from "vitest";
import { readSpiceNumber, spiceScaleFactors } from "../lib/units/spice-number.js";
import { runNgspice } from "./support/ngspice.js";

// Texts ngspice reads as numbers; the oracle is ngspice itself (Debian ngspice 39), reading each
// text as a resistor value and printing @rN[resistance].
const texts = ["4.7k", "4.7K", "1meg", "1MEG", "1Meg", "1M", "1m", "10u", "10U", "2.2n", "5p", "5P", "3f", "2G", "1T", "1mil", "1MIL", "1e3k", "2.5e-3MEG", "-1.5k", ".5u", "47", "1.0E4K"];

describe("SPICE numbers against ngspice", () => {
  it("reads every scale factor as ngspice does (ngspice 39 batch run)", () => {
    const circuit = ["V1 1 0 1", ...texts.map((t, i) => `R${i + 1} 1 0 ${t}`)].join("\n");
    // "quit 0": ngspice -b exits 1 ("no simulations run") when the only analysis is inside .control.
    const control = ["op", ...texts.map((_, i) => `print @r${i + 1}[resistance]`), "quit 0"].join("\n");
    const printed = runNgspice({ circuit, control });
    expect(printed).toHaveLength(texts.length);
    texts.forEach((t, i) => {
      const [name, value] = printed[i]!;
      expect(name).toBe(`@r${i + 1}[resistance]`);
      // ngspice prints 12 significant digits.
      expect(readSpiceNumber(t)).toBeCloseTo(value, -Math.floor(Math.log10(Math.abs(value))) + 10);
    });
  });

  it("gives exact decimal values for power-of-ten factors", () => {
    expect(readSpiceNumber("4.7k")).toBe(4700);
    expect(readSpiceNumber("10u")).toBe(1e-5);
    expect(readSpiceNumber("2.2n")).toBe(2.2e-9);
    expect(readSpiceNumber("200u")).toBe(2e-4);
  });

  it("has exactly the factors ngspice documents: T G MEG K MIL M U N P F (ngspice manual, scale factors)", () => {
    expect(Object.keys(spiceScaleFactors).sort()).toEqual(["f", "g", "k", "m", "meg", "mil", "n", "p", "t", "u"]);
  });

  it("rejects trailing letters that SPICE would silently drop, and non-numbers", () => {
    for (const t of ["10x", "1a", "1kk", "k", "", "1 k", "1.2.3", "e3"]) expect(readSpiceNumber(t)).toBeUndefined();
  });
});
