import { createHash } from "node:crypto";
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { canonicalJson, fingerprint, fingerprintText, shortFingerprint } from "../lib/record/fingerprint.js";
import { Derivation } from "../lib/record/derivation.js";
import { InputError } from "../lib/errors.js";

describe("canonical JSON", () => {
  it("sorts keys, writes shortest round-trip numbers, drops undefined", () => {
    expect(canonicalJson({ b: 0.1 + 0.2, a: [1e21, -0, 2.2e-3], c: undefined })).toBe('{"a":[1e+21,0,0.0022],"b":0.30000000000000004}');
    expect(canonicalJson({ x: Infinity, y: -Infinity })).toBe('{"x":"Infinity","y":"-Infinity"}');
  });
  it("refuses NaN with a typed error naming where it sits", () => {
    expect(() => canonicalJson({ a: [1, NaN] })).toThrow(InputError);
    expect(() => canonicalJson({ a: [1, NaN] })).toThrow(/value\.a\[1\]/);
  });
  it("parses back to the same numbers (round trip)", () => {
    fc.assert(
      fc.property(fc.array(fc.double({ noNaN: true, noDefaultInfinity: true })), (xs) => {
        const back = JSON.parse(canonicalJson(xs)) as number[];
        expect(back.map((x) => (Object.is(x, -0) ? 0 : x))).toEqual(xs.map((x) => (Object.is(x, -0) ? 0 : x)));
      }),
    );
  });
});

describe("fingerprint", () => {
  const make = (order: "ab" | "ba", origin?: string) => {
    const d = new Derivation("invented stage");
    if (order === "ab") d.input("VDD", 5, "voltage", origin).input("RD", 4700, "resistance");
    else d.input("RD", 4700, "resistance", "typed", "4.7k").input("VDD", 5, "voltage");
    return d;
  };
  it("is the SHA-256 of the documented canonical text (reproducible by hand)", () => {
    const d = make("ab");
    const text = 'pinchoff-inputs/1\n[{"dim":"resistance","name":"RD","value":4700},{"dim":"voltage","name":"VDD","value":5}]';
    expect(fingerprintText(d)).toBe(text);
    expect(fingerprint(d)).toBe(createHash("sha256").update(text).digest("hex"));
    expect(d.fingerprint()).toMatch(/^[0-9a-f]{64}$/);
    expect(shortFingerprint(d.fingerprint())).toHaveLength(12);
  });
  it("ignores input order, origin and typed text, but not values", () => {
    expect(make("ab").fingerprint()).toBe(make("ba").fingerprint());
    expect(make("ab", "file.json").fingerprint()).toBe(make("ab").fingerprint());
    const other = make("ab").input("RD", 4701, "resistance");
    expect(other.fingerprint()).not.toBe(make("ab").fingerprint());
    const redim = make("ab").input("RD", 4700, "conductance");
    expect(redim.fingerprint()).not.toBe(make("ab").fingerprint());
  });
  it("keeps a quantity given twice by different sources with different values (two cards' TOX), and updates one source's own entry", () => {
    const d = new Derivation("two cards (invented)").input("tox", 7e-9, "length", "card n").input("tox", 9e-9, "length", "card p").input("tox", 7e-9, "length", "card q");
    expect(d.inputs.map((i) => [i.name, i.value, i.origin])).toEqual([
      ["tox", 7e-9, "card n"],
      ["tox (2)", 9e-9, "card p"],
    ]);
    d.input("tox", 8e-9, "length", "card p");
    expect(d.inputs.find((i) => i.origin === "card p")).toMatchObject({ name: "tox (2)", value: 8e-9 });
    expect(d.inputs).toHaveLength(2);
    const one = new Derivation("one card").input("tox", 7e-9, "length", "card n");
    expect(d.fingerprint()).not.toBe(one.fingerprint());
  });
  it("is carried in toJSON with the schema version", () => {
    const d = make("ab");
    const j = d.toJSON();
    expect(j.schemaVersion).toBe(1);
    expect(j.fingerprint).toBe(d.fingerprint());
  });
  it("covers a whole design in order", () => {
    const a = make("ab").toJSON();
    const b = new Derivation("second").input("ID", 1e-3, "current").toJSON();
    expect(fingerprint([a, b])).not.toBe(fingerprint([b, a]));
    expect(fingerprint([a, b])).toBe(fingerprint([make("ba").toJSON(), b]));
  });
});
