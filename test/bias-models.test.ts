/**
 * Every single-transistor topology with the square-law-mobility and EKV models:
 * the network's current equals the model's current at the solved nodes (KCL),
 * PMOS mirrors NMOS, the record carries the model's own equations and
 * re-evaluates with units. Cards are invented for the tests.
 */
import { describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { parseDesignFile } from "../lib/bias/design-file.js";
import { toleranceAnalysis } from "../lib/bias/tolerance.js";
import { topologyIds, type Stage } from "../lib/bias/topology.js";
import { checkDevice, type DeviceCard } from "../lib/device/card.js";
import { drainCurrent } from "../lib/device/drain-current.js";
import { Derivation, type FormulaStep } from "../lib/record/derivation.js";
import { expectReevaluates } from "./support/reevaluate.js";

const base = { name: "invented-n", polarity: "nmos", kp: 150e-6, vt0: 0.6, lambda: 0.04, gamma: 0.45, phi: 0.7 };
const cards = {
  "square-law-mobility": { ...base, model: "square-law-mobility", theta: 0.2, ecrit: 4e6 },
  ekv: { ...base, model: "ekv", theta: 0.2, thetaB: 0.05, ecrit: 4e6, sigma: 0.01, cit: 0.15 },
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
          const id = drainCurrent(checkDevice(stage.device), n.gate - n.source, n.drain - n.source, n.source - n.body);
          expect(a.currents.drainMagnitude).toBeGreaterThan(1e-6);
          expect(Math.abs(Math.abs(id) - a.currents.drainMagnitude)).toBeLessThanOrEqual(1e-9 * a.currents.drainMagnitude + 1e-15);
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

describe("design files name the model and its parameters", { timeout: 60_000 }, () => {
  const file = (card: Record<string, unknown>) => ({
    topology: "four-resistor",
    device: { card: { name: "invented-n", polarity: "nmos", kp: "150 uA/V^2", vt0: "0.6 V", lambda: 0.04, gamma: 0.45, phi: 0.7, ...card }, w: "20 um", l: "1 um" },
    components: { rg1: "300k", rg2: "100k", rd: "4.7k", rs: "1k" },
    supplies: { vdd: 9 },
    body: "rail",
  });
  it("reads an EKV card with units and analyses the stage with it", () => {
    const d = parseDesignFile(file({ model: "ekv", theta: "0.2 1/V", thetaB: 0.05, ecrit: "4 V/um", sigma: 0.01 }), "stage.json");
    expect(d.kind).toBe("analysis");
    if (d.kind !== "analysis") return;
    expect(d.stage.device.card.model).toBe("ekv");
    expect(d.stage.device.card.ecrit).toBeCloseTo(4e6, 6);
    expect(analyzeStage(d.stage).op.model).toBe("ekv");
  });
  it("refuses an unknown model and a parameter the card's model does not use, naming the file and field", () => {
    expect(() => parseDesignFile(file({ model: "level-99" }), "stage.json")).toThrow(/stage\.json: device\.card.*model/);
    expect(() => parseDesignFile(file({ theta: 0.2 }), "stage.json")).toThrow(/stage\.json: device\.card.*theta/);
    expect(() => parseDesignFile(file({ model: "ekv", ecrit: "4 V" }), "stage.json")).toThrow(/stage\.json: device\.card\.ecrit/);
  });
});

describe("tolerance and Monte Carlo on a model's own parameters", () => {
  it("spreads the EKV card's threshold and current factor: the corners bracket the nominal and match a re-analysis", () => {
    const stage = stages["four-resistor"]!(cards.ekv!);
    const r = toleranceAnalysis(stage, { resistors: 0, process: { vt0: 0.05 as never, kp: 0.1 } });
    const mc = toleranceAnalysis(stage, { resistors: 0, process: { vt0: 0.05 as never, kp: 0.1 }, monteCarlo: { samples: 50, seed: 3 } });
    expect(mc.id.max).toBeLessThanOrEqual(r.id.max * (1 + 1e-12));
    expect(r.id.min).toBeLessThan(r.id.nominal);
    expect(r.id.max).toBeGreaterThan(r.id.nominal);
    // The high-current corner: threshold 50 mV lower, k' 10 % higher.
    const fast = analyzeStage({ ...stage, device: dev({ ...cards.ekv!, vt0: 0.55 as never, kp: 165e-6 as never }) });
    expect(r.id.max).toBeCloseTo(fast.currents.drainMagnitude, 12);
  });
  it("spreads an EKV mirror's two cards together: the high-current corner matches a re-analysis with both devices shifted", () => {
    const mirror = { topology: "current-mirror", device: dev(cards.ekv!), devices: { reference: { ...dev(cards.ekv!), w: 10e-6 } }, components: { rref: 10e3, vout: 2 }, supplies: { vdd: 5 } } as unknown as Stage;
    const r = toleranceAnalysis(mirror, { resistors: 0, process: { vt0: 0.05 as never, kp: 0.1 } });
    expect(r.id.min).toBeLessThan(r.id.nominal);
    expect(r.id.max).toBeGreaterThan(r.id.nominal);
    const fast = { ...cards.ekv!, vt0: 0.55 as never, kp: 165e-6 as never };
    const again = analyzeStage({ ...mirror, device: dev(fast), devices: { reference: { ...dev(fast), w: 10e-6 } } } as unknown as Stage);
    expect(r.id.max).toBeCloseTo(again.currents.drainMagnitude, 12);
    const mc = toleranceAnalysis(mirror, { resistors: 0.01, process: { vt0: 0.05 as never, kp: 0.1 }, monteCarlo: { samples: 50, seed: 3 } });
    expect(mc.id.max).toBeGreaterThan(mc.id.nominal);
    expect(mc.id.min).toBeLessThan(mc.id.nominal);
  });
});
