/**
 * Inputs once accepted without a word (issue 7 item 15): each is now a typed
 * error naming the field, or a finding in the analysis.
 */
import { describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { synthesize, type FourResistorSpec } from "../lib/bias/synthesis.js";
import type { Stage } from "../lib/bias/topology.js";
import type { DeviceCard } from "../lib/device/card.js";
import { InputError } from "../lib/errors.js";
import { amperes, amperesPerVoltSquared, meters, ohms, perVolt, volts, watts } from "../lib/quantity.js";
import { Derivation } from "../lib/record/derivation.js";

// Invented cards for tests (not a real process).
const ncard: DeviceCard = { name: "sv-n", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.5), lambda: perVolt(0.02) };
const pcard: DeviceCard = { ...ncard, name: "sv-p", polarity: "pmos", vt0: volts(-0.5) };
const fourR = (card: DeviceCard, over: Partial<Stage> = {}): Stage => ({
  topology: "four-resistor",
  name: "amp",
  device: { card, w: meters(20e-6), l: meters(1e-6) },
  components: { rg1: ohms(300e3), rg2: ohms(100e3), rd: ohms(4.7e3), rs: ohms(1e3) },
  supplies: { vdd: volts(9) },
  ...over,
});

describe("stage inputs that were accepted silently", () => {
  it("a negative or zero power limit is refused, naming the limit", () => {
    for (const [key, v] of [["maxDevicePower", -1], ["maxTotalPower", 0]] as const)
      expect(() => analyzeStage(fourR(ncard, { limits: { [key]: watts(v) } }))).toThrow(new RegExp(`stage "amp": limits\\.${key}: got ${v}, expected a (transistor|total) power limit > 0 in W`));
    expect(() => analyzeStage(fourR(ncard, { limits: { minSaturationMargin: volts(-0.1) } }))).toThrow(/limits\.minSaturationMargin: got -0\.1, expected a saturation margin ≥ 0/);
    expect(() => analyzeStage(fourR(ncard, { limits: { maxPower: 1 } as never }))).toThrow(/limits\.maxPower: got "maxPower", expected a limit name/);
  });
  it("devices given for a single-transistor topology is refused", () => {
    const extra = { devices: { reference: { card: ncard, w: meters(1e-6), l: meters(1e-6) } } };
    expect(() => analyzeStage(fourR(ncard, extra))).toThrow(InputError);
    expect(() => analyzeStage(fourR(ncard, extra))).toThrow(/stage "amp": devices: got \["reference"\], expected no devices: the four-resistor topology has one transistor/);
  });
  it("a depletion-mode card (PMOS with VTO > 0, NMOS with VTO < 0) is named in the findings", () => {
    const pDep = analyzeStage(fourR({ ...pcard, vt0: volts(0.4) }));
    expect(pDep.findings[0]).toMatch(/^Depletion-mode device: card "sv-p" has VTO = 0\.4 V \(VTO ≥ 0 for a PMOS\)/);
    const nDep = analyzeStage(fourR({ ...ncard, vt0: volts(-0.3) }));
    expect(nDep.findings[0]).toMatch(/Depletion-mode device: card "sv-n" has VTO = -0\.3 V \(VTO ≤ 0 for an NMOS\)/);
    expect(analyzeStage(fourR(ncard)).findings.some((f) => f.startsWith("Depletion"))).toBe(false);
  });
  it("the analysis findings carry the inversion-level caution the record carries (one wording)", () => {
    // A wide device at a small current: moderate inversion.
    const st = fourR(ncard, { device: { card: ncard, w: meters(2000e-6), l: meters(1e-6) }, components: { rg1: ohms(300e3), rg2: ohms(100e3), rd: ohms(47e3), rs: ohms(10e3) } });
    const rec = new Derivation("t");
    const a = analyzeStage(st, rec);
    const recorded = rec.findings.find((f) => f.text.startsWith("Moderate inversion"));
    expect(recorded).toBeDefined();
    expect(a.findings).toContain(recorded!.text);
  });
});

describe("synthesis specifications that were accepted silently", () => {
  const spec: FourResistorSpec = {
    topology: "four-resistor",
    device: { card: ncard },
    supplies: { vdd: volts(9) },
    specification: { id: amperes(1e-3), sizing: { vov: volts(0.3), l: meters(1e-6) } },
  };
  it("an unknown field is refused, naming it and listing the known ones", () => {
    expect(() => synthesize({ ...spec, gian: 5 } as never)).toThrow(/spec\.gian: got "gian", expected a field of a specification \(topology, name, device, specification, supplies/);
    expect(() => synthesize({ ...spec, specification: { ...spec.specification, gian: 5 } } as never)).toThrow(/spec\.specification\.gian: got "gian", expected a field of the four-resistor specification \(id, sizing,/);
    expect(() => synthesize({ ...spec, device: { card: ncard, w: meters(1e-6) } } as never)).toThrow(/spec\.device\.w: got "w", expected only card/);
    expect(() => synthesize({ ...spec, specification: { ...spec.specification, sizing: { vov: volts(0.3), l: meters(1e-6), m: 2 } } } as never)).toThrow(/sizing\.m: got "m", expected a sizing field/);
  });
  it("both sizing.vov and sizing.w is refused", () => {
    expect(() => synthesize({ ...spec, specification: { ...spec.specification, sizing: { vov: volts(0.3), w: meters(10e-6), l: meters(1e-6) } } } as never)).toThrow(/sizing: .*expected sizing with either vov .* or w .*, not both/);
  });
  it("a correct specification still designs", () => {
    expect(synthesize(spec).analysis.region).toBe("saturation");
  });
});
