/**
 * Synthesis with fitted cards: every topology designed with an EKV or a
 * square-law-mobility card (and a card set by L) meets its specified drain
 * current when the chosen stage is re-analysed with the same card, the device
 * step is the model's own (checked independently by evaluating the model at the
 * designed bias), the record shows the model's equations and re-evaluates with
 * units, and the EKV card in its square-law limit gives the square law's design.
 * Cards and specifications are invented for the tests.
 */
import { describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { parseDesignFile } from "../lib/bias/design-file.js";
import { designOf } from "../lib/cli/op.js";
import { netlistSynthesisTopologies, synthesize, synthesisTopologies as allTopologies, type SynthesisResult } from "../lib/bias/synthesis.js";
import { cardAt, type CardSet } from "../lib/device/card-set.js";
import { device, type DeviceCard } from "../lib/device/card.js";
import { drainCurrent } from "../lib/device/drain-current.js";
import { thermalVoltage, type Kelvin, type Meters } from "../lib/quantity.js";
import { Derivation, type FormulaStep } from "../lib/record/derivation.js";
import { designShape } from "./support/design-shape.js";
import { ekvStrongInversionCurrent } from "./support/ekv-limit.js";
import { expectReevaluates } from "./support/reevaluate.js";

// The single-transistor designers; the netlist stages' designers take fitted cards in test/synthesis-pairs.test.ts.
const synthesisTopologies = allTopologies.filter((t) => !netlistSynthesisTopologies.includes(t));

const base = { name: "invented-n", polarity: "nmos", kp: 150e-6, vt0: 0.6, lambda: 0.04, gamma: 0.45, phi: 0.7 };
const cards = {
  ekv: { ...base, model: "ekv", theta: 0.2, thetaB: 0.05, ecrit: 4e6, sigma: 0.01 },
  "square-law-mobility": { ...base, model: "square-law-mobility", theta: 0.2, ecrit: 4e6 },
} as unknown as Record<string, DeviceCard>;
const flip = (c: DeviceCard): DeviceCard => ({ ...c, name: `${c.name}-flipped`, polarity: c.polarity === "nmos" ? "pmos" : "nmos", vt0: -c.vt0 as never });

/** One specification per topology with synthesis; `pmos` mirrors the supplies' sense through the card only. */
function specs(card: DeviceCard, sizing: object, series: "exact" | "E24"): Record<string, object> {
  const common = { supplies: { vdd: 5 }, id: 2e-4, sizing, series };
  return {
    "fixed-gate": { ...common, topology: "fixed-gate", card, drain: { gain: 5 } },
    "four-resistor": { ...common, topology: "four-resistor", card, body: "rail" },
    "drain-feedback": { ...common, topology: "drain-feedback", card, feedback: { rin: 200e3 } },
    "source-follower": { ...common, topology: "source-follower", card, body: "rail" },
    "current-source-bias": { ...common, topology: "current-source-bias", card, supplies: { vdd: 5, vss: -5 } },
    "current-mirror": { ...common, topology: "current-mirror", card, ratio: 2 },
    "diode-load": { ...common, topology: "diode-load", card, load: { card: flip(card), l: 1e-6 }, output: { gain: 3 } },
  };
}

/** The model's current at the analysed node voltages of the chosen stage: an independent look at what it carries. */
function modelCurrentAtNodes(r: SynthesisResult): number {
  const st = r.stage;
  const n = r.analysis.nodes;
  const dev = device(st.device.card, st.device.w, st.device.l);
  return Math.abs(drainCurrent(dev, n.gate - n.source, n.drain - n.source, n.source - n.body));
}

describe("every synthesis topology with a fitted model", () => {
  it("covers the seven single-transistor topologies with synthesis", () => {
    expect(Object.keys(specs(cards.ekv!, {}, "exact")).sort()).toEqual([...synthesisTopologies].sort());
  });
  for (const [model, card] of Object.entries(cards))
    for (const [sizingName, sizing] of [
      ["overdrive stated", { vov: 0.3, l: 1e-6 }],
      ["width stated", { w: 40e-6, l: 1e-6 }],
    ] as const)
      for (const topology of synthesisTopologies)
        it(`${topology}, ${model}, ${sizingName}: the exact design re-analysed with the card meets ID within 1e-9, the E24 design within 5 %, NMOS and PMOS`, () => {
          for (const c of [card, flip(card)]) {
            const exact = synthesize(designShape(specs(c, sizing, "exact")[topology]!));
            expect(exact.analysis.op.model).toBe(model);
            expect(exact.analysis.region).toBe("saturation");
            expect(Math.abs(exact.deviation.id.relative)).toBeLessThan(1e-9);
            // Independently of the solver's report: re-analyse the chosen stage, and evaluate the model at its nodes.
            const again = analyzeStage(exact.stage);
            expect(Math.abs(again.currents.drainMagnitude! - 2e-4) / 2e-4).toBeLessThan(1e-9);
            expect(Math.abs(modelCurrentAtNodes(exact) - 2e-4) / 2e-4).toBeLessThan(1e-8);
            const e24 = synthesize(designShape(specs(c, sizing, "E24")[topology]!));
            expect(Math.abs(e24.deviation.id.relative)).toBeLessThan(0.05);
          }
        });
});

describe("the device step is the model's", () => {
  it("the designed gate drive carries ID in the EKV model at the designed VDS (width stated: numeric inversion)", () => {
    const r = synthesize(designShape({ ...specs(cards.ekv!, { w: 40e-6, l: 1e-6 }, "exact")["fixed-gate"]!, drain: { vd: 3 } }));
    const dev = device(cards.ekv!, 40e-6 as Meters, 1e-6 as Meters);
    expect(drainCurrent(dev, r.ideal.vg - r.ideal.vs, r.ideal.vd - r.ideal.vs, 0) / 2e-4 - 1).toBeCloseTo(0, 9);
    expect(r.ideal.w).toBeCloseTo(40e-6, 18);
  });
  it("overdrive stated: VGS = Vt + VOV with the model's threshold, and the width carries ID there", () => {
    const r = synthesize(designShape({ ...specs(cards.ekv!, { vov: 0.3, l: 1e-6 }, "exact")["fixed-gate"]!, drain: { vd: 3 } }));
    expect(r.ideal.vov).toBeCloseTo(0.3, 12);
    const dev = device(cards.ekv!, r.ideal.w, 1e-6 as Meters);
    expect(drainCurrent(dev, r.ideal.vg, r.ideal.vd, 0) / 2e-4 - 1).toBeCloseTo(0, 9);
  });
  it("records the EKV equations (not the square law's sizing) and re-evaluates with units", () => {
    for (const topology of ["four-resistor", "current-mirror", "diode-load"]) {
      const rec = new Derivation(`EKV ${topology}` as never);
      synthesize(designShape(specs(cards.ekv!, { vov: 0.3, l: 1e-6 }, "E24")[topology]!), rec);
      const ids = rec.steps.filter((s): s is FormulaStep => s.kind === "formula").map((s) => s.formula);
      expect(ids).toContain("ekvDrainCurrent");
      expect(ids).not.toContain("aspectRatioForCurrent");
      expect(ids).not.toContain("overdriveForCurrent");
      expectReevaluates(rec);
    }
  });
  it("the EKV card with γ = θ = σ = λ = 0 and no velocity saturation designs the square law's W scaled by its strong-inversion limit, VOV²/((VOV − UT·(ln q − 1))² − UT²) (charge-based EKV)", () => {
    const sq = { name: "invented-n", polarity: "nmos", kp: 150e-6, vt0: 0.6 } as unknown as DeviceCard;
    const ek = { ...sq, model: "ekv", gamma: 0, theta: 0, ecrit: 1e12, sigma: 0 } as unknown as DeviceCard;
    for (const topology of ["fixed-gate", "current-mirror", "diode-load"]) {
      const at = (c: DeviceCard) => synthesize(designShape({ ...specs(c, { vov: 0.8, l: 1e-6 }, "exact")[topology]!, ...(topology === "fixed-gate" ? { drain: { vd: 3 } } : {}), ...(topology === "diode-load" ? { output: { vout: 2.5 } } : {}) }));
      const a = at(sq);
      const b = at(ek);
      const vov = 0.8;
      expect(b.ideal.w / a.ideal.w / ((150e-6 / 2) * vov * vov / ekvStrongInversionCurrent(150e-6, vov, thermalVoltage(300.15 as Kelvin))) - 1).toBeCloseTo(0, 4);
      expect(b.ideal.vg - a.ideal.vg).toBeCloseTo(0, 4);
    }
  });
});

describe("a card set by L", () => {
  const set: CardSet = {
    kind: "card-set",
    name: "invented-set",
    polarity: "nmos",
    entries: [
      { l: 0.5e-6 as Meters, card: { ...cards.ekv!, name: "invented at 0.5 um", vt0: 0.55 as never, lambda: 0.08 as never } },
      { l: 2e-6 as Meters, card: { ...cards.ekv!, name: "invented at 2 um", vt0: 0.62 as never, lambda: 0.02 as never } },
    ],
  };
  it("designs with the card at the stated L and meets ID when re-analysed with it", () => {
    const rec = new Derivation("card set" as never);
    const spec = { ...specs(set as unknown as DeviceCard, { vov: 0.3, l: 1e-6 }, "exact")["four-resistor"]! };
    const r = synthesize(designShape(spec), rec);
    const want = cardAt(set, 1e-6 as Meters);
    expect(r.stage.device.card).toEqual(want);
    expect(Math.abs(analyzeStage(r.stage).currents.drainMagnitude! - 2e-4) / 2e-4).toBeLessThan(1e-9);
    expect(rec.toJSON().steps.some((s) => s.kind === "note" && /card set/i.test(JSON.stringify(s)))).toBe(true);
  });
  it("design files take the set too: an analysis gets the card at the device's L, a specification at sizing.l", () => {
    const an = parseDesignFile({ topology: "fixed-gate", device: { card: set, w: "20 um", l: "1 um" }, components: { vg: "1.2 V", rd: "5k" }, supplies: { vdd: "3.3 V" } }, "set.json");
    if (an.kind !== "analysis") throw new Error("expected an analysis");
    expect(an.stage.device.card).toEqual(cardAt(set, 1e-6 as Meters));
    const sp = parseDesignFile({ topology: "fixed-gate", device: { card: set }, specification: { id: "100 uA", sizing: { vov: "0.3 V", l: "1 um" }, series: "exact" }, supplies: { vdd: "3.3 V" } }, "set-spec.json");
    if (sp.kind !== "specification") throw new Error("expected a specification");
    const r = designOf(sp).design;
    expect(r.stage.device.card).toEqual(cardAt(set, 1e-6 as Meters));
    expect(Math.abs(r.deviation.id.relative)).toBeLessThan(1e-9);
    expect(() => parseDesignFile({ topology: "fixed-gate", device: { card: { ...set, entries: [] }, w: "20 um", l: "1 um" }, components: { vg: "1.2 V", rd: "5k" }, supplies: { vdd: "3.3 V" } }, "bad.json")).toThrow(/bad\.json: device\.card\.entries/);
  });
  it("refuses a length outside the set, naming it", () => {
    const spec = specs(set as unknown as DeviceCard, { vov: 0.3, l: 5e-6 }, "exact")["four-resistor"]!;
    expect(() => synthesize(designShape(spec))).toThrow(/fitted range/);
  });
});
