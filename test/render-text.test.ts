import { describe, expect, it } from "vitest";
import { renderText, renderJson, textTable, toData } from "../lib/record/render.js";
import { Derivation } from "../lib/record/derivation.js";
import { InputError } from "../lib/errors.js";
import { fixtureDerivation } from "./support/derivation-fixture.js";

describe("text rendering", () => {
  const data = fixtureDerivation().toJSON();
  const text = renderText(data);

  it("aligns table columns", () => {
    const t = textTable(["a", "value"], [["VGS", "750 mV"], ["VDDIO", "3.30 V"]], "");
    expect(t.split("\n")).toEqual(["a      value", "-----  ------", "VGS    750 mV", "VDDIO  3.30 V"]);
    const checks = text.split("\n").filter((l) => /^ {2}(pass|FAIL) /.test(l));
    expect(checks).toHaveLength(3);
    const valueCol = (l: string) => l.search(/\d[\d.]* (mV|kΩ|∞)|∞ Ω/);
    expect(new Set(checks.map(valueCol)).size).toBe(1);
  });

  it("writes each formula as expression, substituted values and result", () => {
    expect(text).toMatch(/ {5}k = kp \* W \/ L\n {7}= \(120 µA\/V²\) \* \(20\.0 µm\) \/ \(1\.00 µm\)\n {7}= 2\.40 mA\/V²/);
  });

  it("keeps user text as typed (no markup to escape) and carries the fingerprint and cautions", () => {
    expect(text).toContain("<script>alert('x')</script> must stay text");
    expect(text).toContain(`inputs ${data.fingerprint!.slice(0, 12)} · 1 of 3 checks fail`);
    expect(text).toContain("Caution: Hand analysis");
  });

  it("says so when a record has no inputs (its fingerprint then covers nothing)", () => {
    expect(renderText(new Derivation("bare"))).toMatch(/inputs [0-9a-f]{12} \(no inputs recorded\)/);
  });
});

describe("JSON rendering", () => {
  it("is toJSON() with schema version and fingerprint, Infinity as a string", () => {
    const d = fixtureDerivation();
    const j = JSON.parse(renderJson(d)) as ReturnType<Derivation["toJSON"]>;
    expect(j.schemaVersion).toBe(1);
    expect(j.fingerprint).toBe(d.fingerprint());
    expect(j.checks[2]!.value).toBe("Infinity");
    expect(j.steps.length).toBe(d.steps.length);
  });
  it("adds the version and fingerprint to hand-made data", () => {
    const hand = { title: "t", inputs: [{ name: "x", value: 1, dim: "voltage" as const }], steps: [], checks: [], assumptions: [], sources: [], findings: [] };
    const t = toData(hand);
    expect(t.schemaVersion).toBe(1);
    expect(t.fingerprint).toMatch(/^[0-9a-f]{64}$/);
  });
  it("refuses a NaN in the record with a typed error", () => {
    const d = new Derivation("t");
    d.check("broken", NaN, "voltage", { min: 0 });
    expect(() => renderJson(d)).toThrow(InputError);
  });
});
