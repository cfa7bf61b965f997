/**
 * Every single-transistor topology with the square-law-mobility and EKV models:
 * the network's current equals the model's current at the solved nodes (KCL),
 * PMOS mirrors NMOS, the record carries the model's own equations and
 * re-evaluates with units. Cards are invented for the tests.
 */
import { describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { topologyIds, type Stage } from "../lib/bias/topology.js";
import type { DeviceCard } from "../lib/device/card.js";
import { drainCurrent } from "../lib/device/drain-current.js";
import { Derivation, type FormulaStep } from "../lib/record/derivation.js";
import { expectReevaluates } from "./support/reevaluate.js";

const base = { name: "invented-n", polarity: "nmos", kp: 150e-6, vt0: 0.6, lambda: 0.04, gamma: 0.45, phi: 0.7 };
const cards = {
  "square-law-mobility": { ...base, model: "square-law-mobility", theta: 0.2, ecrit: 4e6 },
  ekv: { ...base, model: "ekv", theta: 0.2, thetaB: 0.05, ecrit: 4e6, sigma: 0.01 },
} as unknown as Record<string, DeviceCard>;
const mirror = (c: DeviceCard): DeviceCard => ({ ...c, name: "invented-p", polarity: "pmos", vt0: -c.vt0 as never });
const dev = (card: DeviceCard) => ({ card, w: 20e-6 as Stage["device"]["w"], l: 1e-6 as Stage["device"]["l"] });

const stages: Record<string, (card: DeviceCard) => Stage> = {
  "four-resistor": (card) => ({ topology: "four-resistor", device: dev(card), components: { rg1: 300e3, rg2: 100e3, rd: 4.7e3, rs: 1e3 }, supplies: { vdd: 9 } as Stage["supplies"], body: "rail" }),
  "fixed-gate": (card) => ({ topology: "fixed-gate", device: dev(card), components: { vg: 1.4, rd: 10e3 } as never, supplies: { vdd: 5 } as Stage["supplies"], body: "source" }),
  "drain-feedback": (card) => ({ topology: "drain-feedback", device: dev(card), components: { rd: 22e3, rf: 1e6 } as never, supplies: { vdd: 5 } as Stage["supplies"], body: "source" }),
  "source-follower": (card) => ({ topology: "source-follower", device: dev(card), components: { rg1: 100e3, rg2: 100e3, rs: 10e3 } as never, supplies: { vdd: 5 } as Stage["supplies"], body: "rail" }),
  "current-source-bias": (card) => ({ topology: "current-source-bias", device: dev(card), components: { vg: 2.5, rd: 10e3, iss: 100e-6 } as never, supplies: { vdd: 5, vss: -5 } as Stage["supplies"], body: "rail" }),
};

describe("bias topologies with every model", () => {
  it("covers the single-transistor topologies", () => {
    for (const t of Object.keys(stages)) expect(topologyIds()).toContain(t);
  });
  for (const [model, card] of Object.entries(cards))
    for (const [topology, make] of Object.entries(stages)) {
      it(`${topology}, ${model}: the model's current at the solved nodes equals the network's (KCL), NMOS and PMOS`, () => {
        for (const c of [card, mirror(card)]) {
          const stage = make(c);
          const a = analyzeStage(stage);
          const n = a.nodes;
          const id = drainCurrent(stage.device, n.gate - n.source, n.drain - n.source, n.source - n.body);
          expect(a.currents.drain).toBeGreaterThan(1e-6);
          expect(Math.abs(Math.abs(id) - a.currents.drain)).toBeLessThanOrEqual(1e-9 * a.currents.drain + 1e-15);
          expect(Math.sign(id)).toBe(c.polarity === "nmos" ? 1 : -1);
          expect(a.op.model).toBe(model);
        }
      });
    }
  it("records an EKV stage with the EKV equations, and the record re-evaluates with units", () => {
    const rec = new Derivation("EKV four-resistor stage" as never);
    const a = analyzeStage(stages["four-resistor"]!(cards.ekv!), rec);
    const ids = rec.steps.filter((s): s is FormulaStep => s.kind === "formula").map((s) => s.formula);
    for (const f of ["ekvPinchOffVoltage", "ekvForwardCurrent", "ekvSpecificCurrent", "ekvDrainCurrent", "ekvDrainSaturationVoltage"]) expect(ids).toContain(f);
    expect(ids).not.toContain("saturationCurrent");
    expect(a.solver.method).toBe("bracketed-regula-falsi");
    expectReevaluates(rec);
  });
});
