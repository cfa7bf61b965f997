/**
 * Design from a specification of the resistive-load differential pair, the
 * cascode stage and the wide-swing cascode mirror: each design re-analysed
 * and checked against its specification (tail or drain current, gain, the
 * common-mode range it must cover, compliance), NMOS and PMOS, square-law
 * and EKV cards; the load resistor on the series; infeasible targets as
 * InfeasibleError naming the field; the same JSON through `pinchoff op`.
 * Cards, supplies and targets are invented.
 */
import { describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { isStandard } from "../lib/bias/eseries.js";
import { synthesize, type StageSpec } from "../lib/bias/synthesis.js";
import { designMirrorLoadPair } from "../lib/bias/synthesis/mirror-load-pair.js";
import type { CascodeMirrorFigures, CascodeStageFigures } from "../lib/bias/topologies/cascode.js";
import type { PairFigures } from "../lib/bias/topologies/diff-pair.js";
import type { DeviceCard } from "../lib/device/card.js";
import { InfeasibleError, InputError } from "../lib/errors.js";
import { main } from "../lib/cli/op.js";
import { amperes, amperesPerVoltSquared, meters, perVolt, ratio, volts } from "../lib/quantity.js";
import { Derivation } from "../lib/record/derivation.js";
import { captureCli, designFolder } from "./support/cli.js";

const n: DeviceCard = { name: "demo-n (invented)", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.5), lambda: perVolt(0.05), gamma: 0.4 as DeviceCard["gamma"] & number, phi: volts(0.7) };
const p: DeviceCard = { name: "demo-p (invented)", polarity: "pmos", kp: amperesPerVoltSquared(80e-6), vt0: volts(-0.55), lambda: perVolt(0.08) };
const ekvN: DeviceCard = { ...n, name: "demo-n EKV (invented)", model: "ekv", theta: perVolt(0.2) };
const supplies = { vdd: volts(3.3) };
/** An absolute voltage x above the source-side rail in the card's polarity (NMOS: from 0 V up; PMOS: from 3.3 V down). */
const at = (card: DeviceCard, x: number) => (card.polarity === "nmos" ? x : 3.3 - x);
const spec = (topology: string, card: DeviceCard, specification: Record<string, unknown>) => ({ topology, device: { card }, supplies, specification }) as unknown as StageSpec;

describe("resistive-load pair from a specification", () => {
  for (const card of [n, p, ekvN])
    for (const target of [{ gain: 5 }, { vd: "mid" }] as const)
      it(`${card.name}, ${"gain" in target ? "gain 5" : "output node"}: the re-solved pair meets the tail current, covers the range, the gain within the E24 step`, () => {
        const lo = Math.min(at(card, 1.2), at(card, 1.8));
        const hi = Math.max(at(card, 1.2), at(card, 1.8));
        const vd = at(card, 2.6);
        const rec = new Derivation("pair design");
        const d = synthesize(spec("diff-pair", card, { id: 100e-6, sizing: { vov: 0.2, l: 1e-6 }, commonMode: { min: lo, max: hi }, drain: "gain" in target ? target : { vd }, tail: { l: 1e-6 } }), rec);
        const a = analyzeStage(d.stage) as ReturnType<typeof analyzeStage> & { pair: PairFigures };
        expect(a.region).toBe("saturation");
        for (const dv of Object.values(a.devices!)) expect(dv.region).toBe("saturation");
        // The tail transistor is sized for 100 µA at the design point (λ taken at its VDS): within 1 %.
        expect(Math.abs(a.pair.tailCurrent / 100e-6 - 1)).toBeLessThan(0.01);
        expect(a.pair.commonModeRange.lower).toBeLessThanOrEqual(lo);
        expect(a.pair.commonModeRange.upper).toBeGreaterThanOrEqual(hi);
        expect(isStandard(d.stage.components.rd!, "E24")).toBe(true);
        // The chosen RD is within one E24 step of the ideal (the largest step, 1.3 → 1.5, is 15.4 %), and the gain or the drop across RD with it.
        expect(Math.abs(d.stage.components.rd! / d.ideal.components.rd! - 1)).toBeLessThan(0.16);
        if ("gain" in target) expect(Math.abs(Math.abs(a.pair.differentialGain) / 5 - 1)).toBeLessThan(0.16);
        else expect(Math.abs(a.nodes.d1! - vd)).toBeLessThan(0.16 * 0.7);
        expect(d.deviation.id.achieved).toBe(a.pair.tailCurrent);
        expect(rec.toJSON().steps.length).toBeGreaterThan(5);
      });

  it('with "exact" and an ideal tail the differential gain lands on the target (square law, hand check: |Adm| = gm·(RD ∥ ro))', () => {
    const d = synthesize(spec("diff-pair", n, { id: 200e-6, sizing: { vov: 0.25, l: 2e-6 }, commonMode: { min: 1.3, max: 1.7 }, drain: { gain: 8 }, series: "exact" }));
    const a = d.analysis as typeof d.analysis & { pair: PairFigures };
    expect(Math.abs(a.pair.differentialGain) / 8).toBeCloseTo(1, 2);
    expect(d.stage.components.itail).toBe(200e-6);
  });

  it("infeasible targets are InfeasibleErrors naming the field, in numbers", () => {
    // Hand numbers: gm = ITAIL/VOV = 0.5 mS, so a gain of 18 needs RD ≈ 36 kΩ, a 1.8 V drop: the drains at 1.5 V fall below VIC,max − Vt + margin = 1.8 V.
    const tooMuch = () => synthesize(spec("diff-pair", n, { id: 100e-6, sizing: { vov: 0.2, l: 1e-6 }, commonMode: { min: 1.2, max: 2.2 }, drain: { gain: 18 } }));
    expect(tooMuch).toThrow(InfeasibleError);
    expect(tooMuch).toThrow(/drain\.gain.*M1 would leave saturation/);
    const lowCm = () => synthesize(spec("diff-pair", n, { id: 100e-6, sizing: { vov: 0.3, l: 1e-6 }, commonMode: { min: 0.7, max: 1.5 }, tail: { l: 1e-6 } }));
    expect(lowCm).toThrow(/commonMode\.min.*tail cannot supply the pair/);
    expect(() => synthesize(spec("diff-pair", n, { id: 100e-6, sizing: { vov: 0.2, l: 1e-6 }, commonMode: { min: 1.8, max: 1.2 } }))).toThrow(InputError);
  });
});

describe("cascode stage from a specification", () => {
  for (const card of [n, p, ekvN])
    it(`${card.name}: gain 20 at 50 µA, every device saturated, the cascode bias on the design`, () => {
      const d = synthesize(spec("cascode-stage", card, { id: 50e-6, sizing: { vov: 0.2, l: 1e-6 }, cascode: { l: 1e-6 }, drain: { gain: 20 }, outputResistance: 1e6 }));
      const a = analyzeStage(d.stage) as ReturnType<typeof analyzeStage> & { cascode: CascodeStageFigures };
      expect(a.region).toBe("saturation");
      expect(a.devices!.M2!.region).toBe("saturation");
      expect(Math.abs(a.currents.drain! / 50e-6 - 1)).toBeLessThan(0.01);
      expect(Math.abs(Math.abs(a.cascode.gain) / 20 - 1)).toBeLessThan(0.06);
      expect(a.cascode.cascodeResistance).toBeGreaterThan(1e6);
      // M1 sits at VDS = VOV1 + 0.1 V margin (device polarity): saturated, its margin near the 0.1 V (EKV's VDS,sat is not VOV, so only bounds).
      expect(a.op.saturationMargin).toBeGreaterThan(0);
      expect(a.op.saturationMargin).toBeLessThan(0.2);
    });
  it("a gain beyond the supply, and an output resistance beyond the devices, are InfeasibleErrors", () => {
    expect(() => synthesize(spec("cascode-stage", n, { id: 50e-6, sizing: { vov: 0.2, l: 1e-6 }, cascode: { l: 1e-6 }, drain: { gain: 60 } }))).toThrow(/drain\.gain.*output node/);
    expect(() => synthesize(spec("cascode-stage", n, { id: 50e-6, sizing: { vov: 0.2, l: 1e-6 }, cascode: { l: 1e-6 }, outputResistance: 1e9 }))).toThrow(/outputResistance.*lengthen/);
  });
});

describe("wide-swing cascode mirror from a specification", () => {
  for (const card of [n, p, ekvN])
    it(`${card.name}: 50 µA out, compliance within 0.6 V of the rail, every device saturated`, () => {
      const d = synthesize(spec("cascode-mirror", card, { id: 50e-6, sizing: { vov: 0.2, l: 2e-6 }, cascode: { l: 1e-6 }, compliance: at(card, 0.6) }));
      const a = analyzeStage(d.stage) as ReturnType<typeof analyzeStage> & { cascode: CascodeMirrorFigures };
      expect(a.region).toBe("saturation");
      for (const dv of Object.values(a.devices!)) expect(dv.region).toBe("saturation");
      expect(Math.abs(a.cascode.outputCurrent / 50e-6 - 1)).toBeLessThan(0.02);
      // Compliance (device polarity) no further from the rail than asked; the wide-swing bias inside its window.
      const sg = card.polarity === "nmos" ? 1 : -1;
      expect(sg * a.cascode.compliance).toBeLessThanOrEqual(sg * at(card, 0.6) + 1e-3);
      expect(sg * d.stage.components.vcas!).toBeGreaterThanOrEqual(sg * a.cascode.wideSwingBias);
      expect(sg * d.stage.components.vcas!).toBeLessThanOrEqual(sg * a.cascode.wideSwingBiasLimit);
    });
  it("a compliance tighter than the lower devices allow is an InfeasibleError naming it", () => {
    expect(() => synthesize(spec("cascode-mirror", n, { id: 50e-6, sizing: { vov: 0.3, l: 2e-6 }, cascode: { l: 1e-6 }, compliance: 0.4 }))).toThrow(/compliance/);
  });
  it("a discrete part is refused for an on-chip designer", () => {
    const s = { topology: "cascode-mirror", device: { part: {} }, supplies, specification: { id: 50e-6 } } as unknown as StageSpec;
    expect(() => synthesize(s)).toThrow(/not a discrete part/);
  });
});

describe("five-transistor amplifier in the design file's shape", () => {
  it("synthesize gives designMirrorLoadPair's stage, with the deviation of the gain and the tail current reported", () => {
    const s = { topology: "diff-pair-mirror-load", device: { card: n }, supplies, specification: { id: 40e-6, gain: 40, commonMode: { min: 1.2, max: 2.0 }, l: 1e-6, load: { card: p, l: 1e-6 }, output: { max: 2.9 } } } as unknown as StageSpec;
    const d = synthesize(s);
    const direct = designMirrorLoadPair({ input: n, load: p, supplies, itail: amperes(40e-6), gain: ratio(40), commonModeMin: volts(1.2), commonModeMax: volts(2.0), outputMax: volts(2.9), lInput: meters(1e-6), lLoad: meters(1e-6) });
    expect(d.stage.device.w).toBe(direct.stage.device.w);
    expect(d.stage.devices!.load!.w).toBe(direct.stage.devices!.load!.w);
    expect(d.stage.components.vtail).toBe(direct.stage.components.vtail);
    expect(d.deviation.gain!.achieved).toBe(Math.abs(direct.analysis.pair.differentialGain));
    expect(Math.abs(d.deviation.id.relative)).toBeLessThan(0.1);
    // A range the supply cannot hold stays an InfeasibleError naming the field.
    expect(() => synthesize({ ...s, specification: { ...(s.specification as object), commonMode: { min: 0.6, max: 2.0 } } } as unknown as StageSpec)).toThrow(/diff-pair-mirror-load spec\.commonMode\.min/);
  });
});

describe("pinchoff op with a specification for the new designers", { timeout: 60_000 }, () => {
  const folder = designFolder("pinchoff-synth-pairs-");
  const card = { name: "demo-p (invented)", polarity: "pmos", kp: "80 uA/V^2", vt0: "-0.55 V", lambda: "0.08 1/V" };
  it("a PMOS pair: the same design as the library call, the chosen RD and the deviation printed", async () => {
    const d = { topology: "diff-pair", device: { card }, supplies: { vdd: "3.3 V" }, specification: { id: "100 uA", sizing: { vov: "0.2 V", l: "1 um" }, commonMode: { min: "1.5 V", max: "2.1 V" }, drain: { gain: 5 }, tail: { l: "1 um" } } };
    const r = await captureCli(main, [folder.write("pair.json", d), "--json"]);
    const j = JSON.parse(r.out);
    const lib = synthesize(spec("diff-pair", p, { id: 100e-6, sizing: { vov: 0.2, l: 1e-6 }, commonMode: { min: 1.5, max: 2.1 }, drain: { gain: 5 }, tail: { l: 1e-6 } }));
    expect(j.chosen.components.rd).toBe(lib.stage.components.rd);
    expect(j.chosen.devices.tail.w).toBe(lib.stage.devices!.tail!.w);
    expect(j.series).toBe("E24");
    expect(j.deviation.gain.achieved).toBe(lib.deviation.gain!.achieved);
    expect(j.failedChecks).toEqual([]);
  });
  it("a designed cascode mirror with a mismatch section: the Monte Carlo runs on the chosen stage", async () => {
    const ncard = { name: "demo-n (invented)", polarity: "nmos", kp: "200 uA/V^2", vt0: "0.7 V", lambda: "0.05 1/V" };
    const d = { topology: "cascode-mirror", device: { card: ncard }, supplies: { vdd: "3.3 V" }, specification: { id: "50 uA", sizing: { vov: "0.2 V", l: "2 um" }, cascode: { l: "1 um" }, compliance: "0.65 V" }, mismatch: { nmos: { avt: "5 mV*um", abeta: "0.01 um" }, samples: 5000, limits: { currentError: "3 %", outputVoltage: "0.65 V" } } };
    const r = await captureCli(main, [folder.write("mirror-mm.json", d), "--json"]);
    const j = JSON.parse(r.out);
    expect(j.chosen.components.vcas).toBeGreaterThan(0);
    // σ(ΔI/I) of M1/M2 drawn W·L: the closed form and the Monte Carlo agree within 10 % at 5000 samples.
    expect(Math.abs(j.mismatch.monteCarlo.figures[0].sigma / j.mismatch.closedForm.currentErrorSigma - 1)).toBeLessThan(0.1);
    expect(j.mismatch.monteCarlo.checks.map((c: { yield: number }) => c.yield)).toEqual([1, 1]);
    expect(r.code).toBe(0);
  });
  it("a five-transistor amplifier from its specification: the load card read like device.card, the same design as the library", async () => {
    const ncard = { name: "demo-n (invented)", polarity: "nmos", kp: "200 uA/V^2", vt0: "0.5 V", lambda: "0.05 1/V", gamma: 0.4, phi: "0.7 V" };
    const d = { topology: "diff-pair-mirror-load", device: { card: ncard }, supplies: { vdd: "3.3 V" }, specification: { id: "40 uA", gain: 40, commonMode: { min: "1.2 V", max: "2 V" }, l: "1 um", load: { card, l: "1 um" }, output: { max: "2.9 V" } } };
    const r = await captureCli(main, [folder.write("five.json", d), "--json"]);
    const j = JSON.parse(r.out);
    const lib = synthesize({ topology: "diff-pair-mirror-load", device: { card: n }, supplies, specification: { id: 40e-6, gain: 40, commonMode: { min: 1.2, max: 2.0 }, l: 1e-6, load: { card: p, l: 1e-6 }, output: { max: 2.9 } } } as unknown as StageSpec);
    expect(j.chosen.devices.load.w).toBe(lib.stage.devices!.load!.w);
    expect(j.chosen.components.vtail).toBe(lib.stage.components.vtail);
    expect(j.series).toBeNull();
    expect(j.failedChecks).toEqual([]);
    await expect(captureCli(main, [folder.write("five-bad.json", { ...d, specification: { ...d.specification, commonMode: { min: "0.6 V", max: "2 V" } } }), "--json"])).rejects.toThrow(/five-bad\.json: specification\.commonMode\.min/);
  });
  it("an infeasible compliance names the file and the specification field", async () => {
    const file = folder.write("mirror.json", { topology: "cascode-mirror", device: { card }, supplies: { vdd: "3.3 V" }, specification: { id: "50 uA", sizing: { vov: "0.3 V", l: "2 um" }, cascode: { l: "1 um" }, compliance: "2.9 V" } });
    await expect(captureCli(main, [file, "--json"])).rejects.toThrow(/mirror\.json: specification\.compliance/);
  });
});
