import { describe, expect, it } from "vitest";
import { checkDissipation } from "../lib/bias/dissipation.js";
import { InputError } from "../lib/errors.js";
import { Derivation } from "../lib/record/derivation.js";
import type { Amperes, Ohms, Volts, Watts } from "../lib/quantity.js";

const W = (x: number) => x as Watts;

describe("checkDissipation", () => {
  // Invented example: 1 kΩ drain resistor carrying 12 mA dissipates 144 mW (Joule's law, P = I²R).
  const parts = {
    resistors: [
      { name: "rd", resistance: 1000 as Ohms, current: 0.012 as Amperes },
      { name: "rs", resistance: 220 as Ohms, current: 0.012 as Amperes },
    ],
    transistor: { vds: 4 as Volts, id: 0.012 as Amperes },
  };

  it("passes at full rating and fails at 50 % derating, with the margin in watts", () => {
    const full = checkDissipation(parts, { resistor: { rating: W(0.25) } });
    expect(full.items[0]!.power).toBeCloseTo(0.144, 12);
    expect(full.items[1]!.power).toBeCloseTo(0.03168, 12);
    expect(full.passed).toBe(true);
    expect(full.items[2]!.checked).toBe(false); // no transistor limit given

    const rec = new Derivation("dissipation");
    const derated = checkDissipation(parts, { resistor: { rating: W(0.25), derating: 0.5 }, transistor: { rating: W(0.04) } }, rec);
    expect(derated.passed).toBe(false);
    expect(derated.failures.map((f) => f.name)).toEqual(["rd", "transistor"]);
    expect(derated.items[0]!.allowed).toBeCloseTo(0.125, 15);
    expect(derated.items[0]!.margin).toBeCloseTo(0.125 - 0.144, 12);
    expect(derated.items[0]!.utilisation).toBeCloseTo(1.152, 12);
    expect(derated.items[2]!.power).toBeCloseTo(0.048, 12);
    expect(derated.items[2]!.margin).toBeCloseTo(-0.008, 12);
    expect(derated.total).toBeCloseTo(0.144 + 0.03168 + 0.048, 12);
    expect(rec.checks.filter((c) => !c.passed)).toHaveLength(2);
    expect(rec.findings.some((f) => f.severity === "warning" && /rd dissipates 144 mW, 19 mW over its allowed 125 mW/.test(f.text))).toBe(true);
    expect(rec.steps.filter((s) => s.kind === "formula" && s.formula === "resistorPower")).toHaveLength(2);
  });

  it("per-part ratings override the default", () => {
    const r = checkDissipation(parts, { resistor: { rating: W(0.125) }, resistors: { rd: { rating: W(0.5), derating: 0.5 } } });
    expect(r.items[0]!.allowed).toBeCloseTo(0.25, 15);
    expect(r.passed).toBe(true);
  });

  it("rejects bad ratings and loads with typed errors", () => {
    expect(() => checkDissipation(parts, { resistor: { rating: W(-1) } })).toThrow(/limits.resistor.rating: got -1/);
    expect(() => checkDissipation(parts, { resistor: { rating: W(0.25), derating: 1.5 } })).toThrow(InputError);
    expect(() => checkDissipation(parts, { resistor: { rating: W(0.25), derating: 0 } })).toThrow(/derating/);
    expect(() => checkDissipation({ resistors: [{ name: "r1", resistance: NaN as Ohms, current: 0 as Amperes }] }, {})).toThrow(/resistor r1.resistance: got NaN/);
    expect(() => checkDissipation(null as never, {})).toThrow(InputError);
  });
});
