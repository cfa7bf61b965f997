/**
 * The current mirror and the diode-load stage with the square-law-mobility and
 * EKV models: the solved node voltages carry the same current in each device's
 * own model (KCL, evaluated independently through drainCurrent), PMOS mirrors
 * NMOS, the record shows the model's equations and re-evaluates with units, the
 * EKV card carries its strong-inversion limit, and design files with
 * an EKV card run through `pinchoff op`. Cards and stages are invented for the tests.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import type { MirrorAnalysis } from "../lib/bias/topologies/current-mirror.js";
import type { Stage, StageAnalysis } from "../lib/bias/topology.js";
import { main as op } from "../lib/cli/op.js";
import { stagePlots } from "../lib/plot/stage.js";
import { device, type DeviceCard } from "../lib/device/card.js";
import { drainCurrent } from "../lib/device/drain-current.js";
import { thermalVoltage, type Kelvin, type Meters } from "../lib/quantity.js";
import { Derivation, type FormulaStep } from "../lib/record/derivation.js";
import { captureCli } from "./support/cli.js";
import { ekvStrongInversionCurrent } from "./support/ekv-limit.js";
import { expectReevaluates } from "./support/reevaluate.js";

/** UT at the cards' default temperature, 300.15 K (lib/device/card.ts). */
const ut = thermalVoltage(300.15 as Kelvin);

const base = { name: "invented-n", polarity: "nmos", kp: 150e-6, vt0: 0.6, lambda: 0.04, gamma: 0.45, phi: 0.7 };
const cards = {
  "square-law-mobility": { ...base, model: "square-law-mobility", theta: 0.2, ecrit: 4e6 },
  ekv: { ...base, model: "ekv", theta: 0.2, thetaB: 0.05, ecrit: 4e6, sigma: 0.01 },
} as unknown as Record<string, DeviceCard>;
const pmos = (c: DeviceCard): DeviceCard => ({ ...c, name: "invented-p", polarity: c.polarity === "nmos" ? "pmos" : "nmos", vt0: -c.vt0 as never });
const um = (x: number) => (x * 1e-6) as Meters;
const sgn = (c: DeviceCard) => (c.polarity === "nmos" ? 1 : -1);

function mirrorStage(c: DeviceCard, out: { vout: number } | { rload: number }): Stage {
  const s = sgn(c);
  const comps = "vout" in out ? { rref: 20e3, vout: s > 0 ? out.vout : 5 - out.vout } : { rref: 20e3, rload: out.rload };
  return { topology: "current-mirror", device: { card: c, w: um(20), l: um(1) }, devices: { reference: { card: c, w: um(10), l: um(1) } }, components: comps, supplies: { vdd: 5 }, body: "source" } as unknown as Stage;
}
function diodeStage(drv: DeviceCard, load: DeviceCard, body: "source" | "rail", vg: number): Stage {
  return { topology: "diode-load", device: { card: drv, w: um(20), l: um(1) }, devices: { load: { card: load, w: um(5), l: um(1) } }, components: { vg }, supplies: { vdd: 5 }, body } as unknown as Stage;
}

/** |a − b| within 1e-9 of the larger (the solvers' KCL tolerance is tighter still). */
const expectSameCurrent = (a: number, b: number) => expect(Math.abs(Math.abs(a) - Math.abs(b))).toBeLessThanOrEqual(1e-9 * Math.max(Math.abs(a), Math.abs(b)) + 1e-15);

describe("current mirror with every model", () => {
  for (const [model, card] of Object.entries(cards))
    for (const out of [{ vout: 2.5 }, { rload: 8e3 }])
      it(`${model}, output ${"vout" in out ? "held" : "into a resistor"}: both devices' models carry the solved currents (KCL), NMOS and PMOS`, () => {
        for (const c of [card, pmos(card)]) {
          const st = mirrorStage(c, out);
          const a = analyzeStage(st) as MirrorAnalysis;
          const n = a.nodes;
          const m1 = device(c, um(10), um(1));
          const m2 = device(c, um(20), um(1));
          // Independent check: each model at the solved node voltages.
          const i1 = drainCurrent(m1, n.gate - n.source, n.reference! - n.source, 0);
          const i2 = drainCurrent(m2, n.gate - n.source, n.drain - n.source, 0);
          expectSameCurrent(i1, a.mirror.referenceCurrent);
          expectSameCurrent(i2, a.mirror.outputCurrent);
          expect(Math.sign(i2)).toBe(sgn(c));
          // The network side: IREF through RREF, IOUT through RLOAD.
          const vdr = sgn(c) > 0 ? 5 : 0;
          expectSameCurrent(Math.abs(vdr - n.gate) / 20e3, a.mirror.referenceCurrent);
          if ("rload" in out && out.rload !== undefined) expectSameCurrent(Math.abs(vdr - n.drain) / out.rload, a.mirror.outputCurrent);
          expect(a.op.model).toBe(model);
          expect(a.region).toBe("saturation");
          // Compliance at the model's own VDsat, below the square law's VOV.
          expect(Math.abs(a.mirror.compliance - n.source)).toBeCloseTo(a.op.vdsat, 12);
          expect(a.op.vdsat).toBeLessThan(a.op.vov + 1e-12);
        }
      });

  it("records an EKV mirror with the EKV equations and the model's compliance, and the record re-evaluates with units", () => {
    const rec = new Derivation("EKV mirror" as never);
    analyzeStage(mirrorStage(cards.ekv!, { rload: 8e3 }), rec);
    const ids = rec.steps.filter((s): s is FormulaStep => s.kind === "formula").map((s) => s.formula);
    for (const f of ["ekvForwardCurrent", "ekvDrainCurrent", "ekvDrainSaturationVoltage", "mirrorComplianceSaturation", "referenceCurrent"]) expect(ids).toContain(f);
    for (const f of ["referenceGateSource", "mirrorOutputCurrent", "mirrorCompliance", "saturationCurrent"]) expect(ids).not.toContain(f);
    expect(rec.toJSON().assumptions.join(" ")).toMatch(/EKV all-region model/);
    expectReevaluates(rec);
  });

  it("EKV in strong inversion with γ = θ = σ = λ = 0 and no velocity saturation carries its strong-inversion limit ID = (k'/2)·(W/L)·((VOV − UT·(ln q − 1))² − UT²) (charge-based EKV, n = 1 for γ = 0), below the square law's", () => {
    const sq = { name: "invented-n", polarity: "nmos", kp: 150e-6, vt0: 0.6 } as unknown as DeviceCard;
    const ek = { ...sq, model: "ekv", gamma: 0, theta: 0, ecrit: 1e12, sigma: 0 } as unknown as DeviceCard;
    // RREF 2k…20k: overdrives 1.4 V … 0.5 V, well inside strong inversion.
    for (const rref of [2e3, 5e3, 20e3]) {
      const at = (c: DeviceCard) => analyzeStage({ ...mirrorStage(c, { vout: 2.5 }), components: { rref, vout: 2.5 } } as unknown as Stage) as MirrorAnalysis;
      const a = at(sq);
      const b = at(ek);
      const vov = b.mirror.gateSource - 0.6;
      expect(vov).toBeGreaterThan(0.45);
      expect(b.mirror.referenceCurrent / ekvStrongInversionCurrent(150e-6 * 10, vov, ut) - 1).toBeCloseTo(0, 4);
      expect(b.mirror.outputCurrent / ekvStrongInversionCurrent(150e-6 * 20, vov, ut) - 1).toBeCloseTo(0, 4);
      expect(b.mirror.referenceCurrent).toBeLessThan(a.mirror.referenceCurrent);
    }
  });
});

describe("diode-load stage with every model", () => {
  for (const [model, card] of Object.entries(cards)) {
    const cases: [string, DeviceCard, DeviceCard, "source" | "rail"][] = [
      ["complementary load", card, pmos(card), "source"],
      ["same-type load, body at the rail", card, { ...card, name: "invented-n-load" }, "rail"],
    ];
    for (const [what, drv, load, body] of cases)
      it(`${model}, ${what}: driver and load models carry the same current at the solved output (KCL), NMOS and PMOS`, () => {
        for (const flip of [false, true]) {
          const d = flip ? pmos(drv) : drv;
          const l = flip ? pmos(load) : load;
          const s = sgn(d);
          const vg = s > 0 ? 1.3 : 5 - 1.3;
          const st = diodeStage(d, l, body, vg);
          const a: StageAnalysis = analyzeStage(st);
          const n = a.nodes;
          const railD = s > 0 ? 5 : 0;
          const railS = s > 0 ? 0 : 5;
          const i1 = drainCurrent(device(d, um(20), um(1)), vg - railS, n.drain - railS, 0);
          const ld = device(l, um(5), um(1));
          const i2 = l.polarity === d.polarity ? drainCurrent(ld, railD - n.drain, railD - n.drain, n.drain - (body === "rail" ? railS : n.drain)) : drainCurrent(ld, n.drain - railD, n.drain - railD, 0);
          expectSameCurrent(i1, a.currents.drainMagnitude!);
          expectSameCurrent(i2, a.currents.drainMagnitude!);
          expect(a.currents.drainMagnitude).toBeGreaterThan(1e-6);
          expect(a.op.model).toBe(model);
          // The output sits strictly between the rails and the driver is saturated by its model's VDsat.
          expect(a.region).toBe("saturation");
          const amp = a.metrics.amplifiers[0]!;
          expect(Math.abs(amp.gain)).toBeGreaterThan(1);
          const sw = a.metrics.swing[0]!;
          expect(sw.lower).toBeLessThan(sw.upper);
        }
      });
  }

  it("EKV in strong inversion carries its strong-inversion limit (charge-based EKV), below the square law's", () => {
    const sq = { name: "invented-n", polarity: "nmos", kp: 150e-6, vt0: 0.6 } as unknown as DeviceCard;
    const ek = { ...sq, model: "ekv", gamma: 0, theta: 0, ecrit: 1e12, sigma: 0 } as unknown as DeviceCard;
    const a = analyzeStage(diodeStage(sq, pmos(sq), "source", 1.8));
    const b = analyzeStage(diodeStage(ek, pmos(ek), "source", 1.8));
    expect(b.currents.drainMagnitude! / ekvStrongInversionCurrent(150e-6 * 20, 1.8 - 0.6, ut) - 1).toBeCloseTo(0, 4);
    expect(b.currents.drainMagnitude!).toBeLessThan(a.currents.drainMagnitude!);
  });

  it("records an EKV diode-load stage with the EKV equations; the record re-evaluates with units", () => {
    const rec = new Derivation("EKV diode load" as never);
    analyzeStage(diodeStage(cards.ekv!, pmos(cards.ekv!), "source", 1.3), rec);
    const ids = rec.steps.filter((s): s is FormulaStep => s.kind === "formula").map((s) => s.formula);
    for (const f of ["ekvDrainCurrent", "ekvDrainSaturationVoltage", "diodeLoadGain"]) expect(ids).toContain(f);
    for (const f of ["diodeLoadOutputVoltage", "diodeLoadGainSizing", "saturationCurrent"]) expect(ids).not.toContain(f);
    expectReevaluates(rec);
  });
});

describe("plots of the two-transistor stages with an EKV card", () => {
  it("draws the output characteristic with the load and the operating point at the solved current", () => {
    for (const st of [mirrorStage(cards.ekv!, { rload: 8e3 }), diodeStage(cards.ekv!, pmos(cards.ekv!), "source", 1.3)]) {
      const a = analyzeStage(st);
      const plots = stagePlots(st, a);
      const roles = plots.output.figure.data.map((t) => t.meta?.role);
      expect(roles).toContain("operating-point");
      expect(roles.some((r) => r === "load-line" || r === "load-curve")).toBe(true);
      const q = plots.output.figure.data.find((t) => t.meta?.role === "operating-point")!;
      const y = (q as { y?: number[] }).y![0]!;
      const scale = plots.output.axes.y.divisor;
      // The plot trims its numbers for display: the point sits at the solved current within 0.1 %.
      expect(Math.abs(Math.abs(y * scale) - a.currents.drainMagnitude!) / a.currents.drainMagnitude!).toBeLessThan(1e-3);
    }
  });
});

describe("design files with an EKV card through pinchoff op", () => {
  const dir = mkdtempSync(join(tmpdir(), "pinchoff-ekv-pairs-"));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const card = { name: "invented-n", polarity: "nmos", model: "ekv", kp: "150 uA/V^2", vt0: "0.6 V", lambda: "0.04 1/V", gamma: 0.45, phi: "0.7 V", theta: "0.2 1/V", ecrit: "4 V/um", sigma: 0.01 };
  const pcard = { ...card, name: "invented-p", polarity: "pmos", vt0: "-0.6 V" };
  const files = {
    "current-mirror": { topology: "current-mirror", device: { card, w: "20 um", l: "1 um" }, devices: { reference: { card, w: "10 um", l: "1 um" } }, components: { rref: "20k", rload: "8k" }, supplies: { vdd: "5 V" } },
    "diode-load": { topology: "diode-load", device: { card, w: "20 um", l: "1 um" }, devices: { load: { card: pcard, w: "5 um", l: "1 um" } }, components: { vg: "1.3 V" }, supplies: { vdd: "5 V" } },
  };
  for (const [topology, file] of Object.entries(files))
    it(`${topology}: the operating point comes from the EKV model and agrees with the library call`, async () => {
      const path = join(dir, `${topology}.json`);
      writeFileSync(path, JSON.stringify(file));
      const r = await captureCli(op, [path]);
      expect(r.err).toBe("");
      expect(r.code).toBe(0);
      const j = JSON.parse(r.out);
      expect(j.op.model).toBe("ekv");
      const direct = analyzeStage(
        topology === "current-mirror"
          ? mirrorStage(cards.ekv!, { rload: 8e3 })
          : diodeStage(cards.ekv!, pmos(cards.ekv!), "source", 1.3),
      );
      expect(j.currents.drainMagnitude).toBeCloseTo(direct.currents.drainMagnitude!, 12);
      expect(j.nodes.drain).toBeCloseTo(direct.nodes.drain, 9);
    });
});
