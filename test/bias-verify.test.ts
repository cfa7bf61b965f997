/**
 * Every solve is verified (lib/bias/verify.ts): KCL and the region conditions
 * at the solved node voltages, within 1e-9·I + G·δV. Extreme resistances that
 * once returned wrong operating points now solve correctly, checked against
 * ngspice 39 Level 1 (Debian package ngspice, batch mode), or throw.
 */
import { describe, expect, it } from "vitest";
import { analyzeStage, stageCircuit } from "../lib/bias/analyze.js";
import { newSolution, solveNetwork, type BiasNetwork } from "../lib/bias/solve.js";
import type { Stage } from "../lib/bias/topology.js";
import { networkResidual, verifyCurrent, verifyNetwork } from "../lib/bias/verify.js";
import { device, type DeviceCard } from "../lib/device/card.js";
import { drainCurrent, operatingPoint } from "../lib/device/drain-current.js";
import { ConvergenceError } from "../lib/errors.js";
import { Derivation } from "../lib/record/derivation.js";
import { amperesPerVoltSquared, meters, ohms, perVolt, sqrtVolts, volts } from "../lib/quantity.js";
import { runNgspice } from "./support/ngspice.js";

// Invented cards for tests (not a real process).
const ncard: DeviceCard = { name: "ver-n", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.5), lambda: perVolt(0.05), gamma: sqrtVolts(0.4), phi: volts(0.7) };
const pcard: DeviceCard = { ...ncard, name: "ver-p", polarity: "pmos", vt0: volts(-0.5), kp: amperesPerVoltSquared(80e-6) };
const flat = (c: DeviceCard): DeviceCard => ({ ...c, lambda: perVolt(0), gamma: sqrtVolts(0) });

function fourR(card: DeviceCard, rd: number, rs: number): Stage {
  return {
    topology: "four-resistor",
    device: { card, w: meters(10e-6), l: meters(1e-6) },
    components: { rg1: ohms(1e6), rg2: ohms(1e6), rd: ohms(rd), rs: ohms(rs) },
    supplies: { vdd: volts(5) },
    body: "rail",
  };
}

/** ngspice's node voltages for a stage, from the deck the library exports. */
function spiceNodes(st: Stage): { vs: number; vd: number } {
  const c = stageCircuit(st, "x_");
  const rows = runNgspice({
    circuit: [".options reltol=1e-10 vntol=1e-15 abstol=1e-22 gmin=1e-24", ...c.lines].join("\n"),
    control: ["op", `print v(${c.nodes.source})`, `print v(${c.nodes.drain})`].join("\n"),
  });
  return { vs: rows[0]![1], vd: rows[1]![1] };
}

/** The device law at the reported nodes must carry the reported network current. */
function kclHolds(st: Stage): void {
  const a = analyzeStage(st);
  const dev = device(st.device.card, st.device.w, st.device.l);
  const op = operatingPoint(dev, { vgs: volts(a.nodes.gate - a.nodes.source), vds: volts(a.nodes.drain - a.nodes.source), vsb: volts(a.nodes.source - a.nodes.body) });
  const rs = st.components.rs!;
  // The current through RS from the reported source voltage, and the device current: both the network's.
  const throughRs = Math.abs(a.nodes.source - (st.device.card.polarity === "nmos" ? 0 : 5)) / rs;
  expect(Math.abs(throughRs - a.currents.drainMagnitude) / a.currents.drainMagnitude).toBeLessThan(1e-9);
  expect(Math.abs(Math.abs(op.channelCurrent) - a.currents.drainMagnitude) / a.currents.drainMagnitude, JSON.stringify(st.components)).toBeLessThan(1e-6);
}

describe("extreme resistances solve correctly (were wrong without a word)", () => {
  it("rd = 1e20 Ω: triode with VD at the source (≈ 0 V), as ngspice 39 Level 1 finds; λ, γ on and off; NMOS and PMOS", () => {
    for (const card of [ncard, flat(ncard), pcard, flat(pcard)]) {
      const st = fourR(card, 1e20, 1e3);
      const a = analyzeStage(st);
      expect(a.region, card.name).toBe("triode");
      const rail = card.polarity === "nmos" ? 0 : 5;
      expect(Math.abs(a.nodes.drain - rail)).toBeLessThan(1e-9);
      expect(a.currents.drainMagnitude).toBeLessThan(5.1e-20);
      const ng = spiceNodes(st);
      expect(Math.abs(a.nodes.drain - ng.vd)).toBeLessThan(1e-6);
      expect(Math.abs(a.nodes.source - ng.vs)).toBeLessThan(1e-6);
    }
  });
  it("rs = 1e13 Ω: VS agrees with ngspice 39 Level 1 to 1e-6 relative and KCL holds", () => {
    for (const card of [ncard, flat(ncard), pcard]) {
      const st = fourR(card, 1e3, 1e13);
      const a = analyzeStage(st);
      const ng = spiceNodes(st);
      expect(Math.abs(a.nodes.source - ng.vs) / Math.abs(ng.vs), card.name).toBeLessThan(1e-6);
      kclHolds(st);
    }
  });
  it("rs = 1e15 … 1e18 Ω: the device law at the reported nodes carries the reported current (was 49 % off)", () => {
    for (const rs of [1e15, 1e16, 1e17, 1e18]) for (const card of [ncard, flat(ncard), pcard]) kclHolds(fourR(card, 1e3, rs));
  });
  it("a divider of 1 Ω over 1e308 Ω no longer overflows to an infinite gate voltage", () => {
    const st = { ...fourR(ncard, 1e3, 1e3), components: { rg1: ohms(1), rg2: ohms(1e308), rd: ohms(1e3), rs: ohms(1e3) } };
    const a = analyzeStage(st);
    expect(a.nodes.gate).toBeCloseTo(5, 12);
    kclHolds(st);
  });
});

describe("verification throws ConvergenceError with the residual rather than return a wrong answer", () => {
  const net = (): BiasNetwork => ({ k: 2e-3, vt0: 0.5, gamma: 0, phi: 0.7, lambda: 0.05, clm: "continuous", vdr: 5, vsr: 0, gateToDrain: false, vg: 2.5, rd: 1e3, rs: 1e3, iss: 0, bodyToRail: false });
  it("a solution whose device current disagrees with the network current", () => {
    // The wrong answer once returned for rd = 1e20: saturation at VD = 1.25 V against a network current of 4e-20 A.
    const n = { ...net(), rd: 1e20 };
    const s = { ...newSolution(), id: 3.75e-20, vg: 2.5, vs: 3.75e-17, vd: 1.25 };
    expect(networkResidual(n, s)).toBeGreaterThan(1);
    expect(() => verifyNetwork(n, s, "stage \"x\"")).toThrow(ConvergenceError);
    expect(() => verifyNetwork(n, s, "stage \"x\"")).toThrow(/stage "x": the solved operating point fails its check.*KCL residual 0\.003652 A, tolerance/);
  });
  it("a solution that reverses the device or leaves the rails", () => {
    const n = net();
    expect(networkResidual(n, { ...newSolution(), id: 0, vg: 2.5, vs: 1, vd: 0.5 })).toBe(Infinity);
    expect(networkResidual(n, { ...newSolution(), id: 0, vg: 0, vs: -1, vd: 5 })).toBe(Infinity);
    expect(networkResidual(n, { ...newSolution(), id: NaN, vg: 2.5, vs: NaN, vd: 5 })).toBe(Infinity);
  });
  it("a correct solution passes and reports its residual", () => {
    const rec = new Derivation("t");
    analyzeStage(fourR(ncard, 1e3, 1e3), rec);
    const kcl = rec.checks.find((c) => c.title.startsWith("Solver: device current"));
    expect(kcl?.passed).toBe(true);
    expect(kcl!.value).toBeLessThan(1e-15);
    expect(() => verifyCurrent("a node", 1e-3, 1e-3 * (1 + 5e-10), 0, 5, "o")).not.toThrow();
    expect(() => verifyCurrent("a node", 1e-3, 1e-3 * (1 + 5e-9), 0, 5, "o")).toThrow(/o: the solved operating point fails KCL at a node/);
  });
  it("a network double precision cannot resolve throws instead of returning (kp·W/L = 1e301 A/V² with rd = 1e20 Ω)", () => {
    const st = fourR({ ...ncard, kp: amperesPerVoltSquared(1e296) }, 1e20, 1e3);
    expect(() => analyzeStage(st)).toThrow(ConvergenceError);
    expect(() => analyzeStage(st)).toThrow(/four-resistor stage: the solved operating point fails its check/);
  });
});

describe("the record says when a closed form was rejected", () => {
  it("a current-fed stage with ISS = 1e-100 A: the closed form is spoiled by rounding, the record notes it and the bracketed solution", () => {
    const rec = new Derivation("t");
    const st: Stage = {
      topology: "current-source-bias",
      device: { card: { ...flat(ncard), kp: amperesPerVoltSquared(1e-9) }, w: meters(1e-6), l: meters(1e-6) },
      components: { vg: volts(3), iss: 1e-100 as never, rd: ohms(1e3) },
      supplies: { vdd: volts(5) },
    };
    const a = analyzeStage(st, rec);
    const titles = rec.steps.map((s) => s.title);
    const rejected = titles.findIndex((t) => t.startsWith("Closed form"));
    expect(rejected).toBeGreaterThanOrEqual(0);
    expect(titles.indexOf("Exact solution", rejected)).toBeGreaterThan(rejected);
    expect(a.solver.method).toBe("bracketed-newton");
    expect(a.nodes.source).toBeCloseTo(2.5, 9); // VG − Vt, the overdrive for 1e-100 A being negligible
    expect(rec.checks.find((c) => c.title.startsWith("Solver:"))!.passed).toBe(true);
  });
});

describe("verification with the device's own model", () => {
  // Invented EKV card (not a real process), on the resistive network of the tests above.
  const ekvCard = { ...ncard, name: "ver-ekv", model: "ekv", theta: 0.2, thetaB: 0.05, ecrit: 4e6, sigma: 0.01 } as unknown as DeviceCard;
  const ekv = device(ekvCard, meters(10e-6), meters(1e-6));
  const base = (): BiasNetwork => ({ k: 2e-3, vt0: 0.5, gamma: 0.4, phi: 0.7, lambda: 0.05, clm: "continuous", vdr: 5, vsr: 0, gateToDrain: false, vg: 2, rd: 4.7e3, rs: 1e3, iss: 0, bodyToRail: true });
  it("an EKV solve passes, and the square law's solution of the same network fails against the EKV device", () => {
    const n = { ...base(), device: ekv };
    const s = solveNetwork(n, newSolution(), "ekv-stage");
    expect(networkResidual(n, s)).toBeLessThanOrEqual(1);
    expect(Math.abs(drainCurrent(ekv, s.vg - s.vs, s.vd - s.vs, s.vs - n.vsr) - s.id)).toBeLessThanOrEqual(1e-9 * s.id);
    const square = solveNetwork(base(), newSolution(), "square-stage");
    expect(Math.abs(square.id / s.id - 1)).toBeGreaterThan(0.01);
    expect(networkResidual(n, { ...square })).toBeGreaterThan(1);
    expect(() => verifyNetwork(n, { ...square }, "ekv-stage")).toThrow(ConvergenceError);
  });
  it("the current-fed network with an EKV device is verified at its solved source voltage", () => {
    const n = { ...base(), vsr: -5, rs: 0, iss: 100e-6, device: ekv };
    const s = solveNetwork(n, newSolution(), "ekv-fed");
    expect(networkResidual(n, s)).toBeLessThanOrEqual(1);
    expect(() => verifyNetwork(n, { ...s, vs: s.vs + 0.01 }, "ekv-fed")).toThrow(ConvergenceError);
  });
});
