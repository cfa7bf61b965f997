/**
 * Verification of stages with a process library, and correction from the simulated
 * current. Reference: ngspice 39 BSIM4 with the GF180MCU library (`sm141064.ngspice`,
 * section typical). The hand cards below are square-law values for the kit's 3.3 V
 * devices from memory (kp, vt0, λ, γ of a 180 nm 3.3 V process), so the hand analysis
 * lands near, not on, the simulation: the point is the comparison and the correction.
 */
import { existsSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { correctStage, verifyStage } from "../lib/bias/simulation-check.js";
import type { Stage } from "../lib/bias/topology.js";
import type { DeviceCard } from "../lib/device/card.js";
import { InputError } from "../lib/errors.js";
import { builtinProcessFile, readProcess } from "../lib/process/description.js";
import { Derivation } from "../lib/record/derivation.js";
import { column } from "../lib/spice/raw.js";
import { runDeckSync } from "../lib/spice/run.js";

const proc = readProcess(builtinProcessFile());
const nmos = { name: "kit NMOS, square law from memory", polarity: "nmos", kp: 170e-6, vt0: 0.7, lambda: 0.05, gamma: 0.6, phi: 0.8 } as DeviceCard;
const pmos = { name: "kit PMOS, square law from memory", polarity: "pmos", kp: 30e-6, vt0: -0.8, lambda: 0.06, gamma: 0.5, phi: 0.8 } as DeviceCard;
const dev = (card: DeviceCard, w: number, l: number) => ({ card, w: w as Stage["device"]["w"], l: l as Stage["device"]["l"] });
const fourResistor = (name = "common-source stage"): Stage => ({
  topology: "four-resistor",
  name,
  device: dev(nmos, 20e-6, 1e-6),
  components: { rg1: 250e3, rg2: 100e3, rd: 10e3, rs: 300 },
  supplies: { vdd: 3.3 } as Stage["supplies"],
  body: "rail",
});
const mirror: Stage = {
  topology: "current-mirror",
  name: "bias mirror",
  device: dev(nmos, 20e-6, 2e-6),
  devices: { reference: dev(nmos, 10e-6, 2e-6) },
  components: { rref: 20e3, vout: 2 },
  supplies: { vdd: 3.3 } as Stage["supplies"],
  body: "rail",
} as Stage;

describe("stage verification with the open 180 nm library (ngspice 39 BSIM4, GF180MCU typical)", () => {
  it("compares nodes, drain current, region, gm, gds and gain with the hand analysis, and the deck re-runs to the same current", async () => {
    const rec = new Derivation("verification");
    const v = await verifyStage(fourResistor(), proc, {}, rec);
    const m = v.devices[0]!;
    expect(m.model).toBe("nmos_3p3");
    expect(m.simRegion).toBe("saturation");
    expect(m.vds).toBeGreaterThan(m.vdsat);
    // The divider sets the gate exactly in both.
    expect(v.nodes.gate!.sim).toBeCloseTo((3.3 * 100) / 350, 9);
    for (const c of [m.id, m.gm, m.gds, v.gain!, v.nodes.drain!]) {
      expect(Number.isFinite(c.sim)).toBe(true);
      expect(c.deviation).toBeCloseTo(c.sim / c.hand - 1, 12);
    }
    expect(v.gain!.sim).toBeLessThan(0);
    expect(Math.abs(m.id.deviation)).toBeLessThan(0.1);
    expect(v.passed).toBe(true);
    expect(rec.checks[0]!.passed).toBe(true);
    // The deck carries the library, the kit's device and no Level 1 card; a reviewer's re-run gives the same current.
    expect(v.deck).toMatch(/^\.lib ".*sm141064\.ngspice" typical$/m);
    expect(v.deck).toMatch(/^M1 d g_tf s vss nmos_3p3 W=0\.00002 L=0\.000001$/m);
    expect(v.deck).not.toMatch(/level=1/);
    const again = runDeckSync({ deck: v.deck, outputs: ["op.raw"] });
    expect(column(again.raw["op.raw"]![0]!, "i(@m1[id])")[0]).toBe(m.id.sim);
    // Nodes and branch currents are saved too, for the reviewer.
    expect(again.raw["op.raw"]![0]!.names).toContain("v(d)");
  }, 60_000);

  it("verifies PMOS stages and two-transistor stages with each device's own model", async () => {
    const p: Stage = { ...fourResistor("pmos stage"), device: dev(pmos, 40e-6, 1e-6), components: { rg1: 100e3, rg2: 250e3, rd: 10e3, rs: 300 } };
    const v = await verifyStage(p, proc);
    expect(v.devices[0]!.model).toBe("pmos_3p3");
    expect(v.devices[0]!.id.sim).toBeLessThan(0);
    expect(v.devices[0]!.id.deviation).toBeCloseTo(v.devices[0]!.id.sim / v.devices[0]!.id.hand - 1, 12);
    expect(v.devices[0]!.simRegion).toBe("saturation");
    const m = await verifyStage(mirror, proc);
    expect(m.devices.map((d) => d.role)).toEqual(["device", "reference"]);
    expect(m.devices.every((d) => d.model === "nmos_3p3" && d.simRegion === "saturation")).toBe(true);
  }, 60_000);

  it("fails the check when the tolerance is tighter than the deviation", async () => {
    const rec = new Derivation("tight");
    const v = await verifyStage(mirror, proc, { tolerance: 0.001 }, rec);
    expect(v.passed).toBe(false);
    expect(rec.passed).toBe(false);
  }, 60_000);
});

describe("correction from the simulated current", () => {
  it("brings a hand-designed four-resistor stage within 1 % of its target in at most 3 simulations, by W or by RS", async () => {
    for (const adjust of ["w", "rs"]) {
      const rec = new Derivation(`correct ${adjust}`);
      const c = await correctStage(fourResistor(), proc, { adjust }, rec);
      expect(c.converged).toBe(true);
      expect(c.iterations).toBeLessThanOrEqual(3);
      expect(Math.abs(Math.abs(c.verification.devices[0]!.id.sim) / c.target - 1)).toBeLessThanOrEqual(0.01);
      expect(rec.steps.filter((s) => s.kind === "note" && s.title.startsWith("Correction")).length).toBe(c.steps.length);
      console.log(`four-resistor by ${adjust}: ${c.steps.map((s) => `${s.value.toPrecision(5)} → ${(100 * s.deviation).toFixed(2)} %`).join(", ")}`);
    }
  }, 60_000);

  it("brings a hand-designed current mirror within 1 % of its target in at most 3 simulations", async () => {
    const c = await correctStage(mirror, proc, { target: 200e-6 });
    expect(c.converged).toBe(true);
    expect(c.iterations).toBeLessThanOrEqual(3);
    expect(Math.abs(c.verification.devices[0]!.id.sim / 200e-6 - 1)).toBeLessThanOrEqual(0.01);
    console.log(`mirror by W: ${c.steps.map((s) => `${s.value.toPrecision(5)} → ${(100 * s.deviation).toFixed(2)} %`).join(", ")}`);
  }, 60_000);

  it("says why when the target cannot be reached", async () => {
    const rec = new Derivation("unreachable");
    const c = await correctStage(mirror, proc, { target: 50e-3 }, rec);
    expect(c.converged).toBe(false);
    expect(c.why).toMatch(/outside/);
    expect(rec.findings.some((f) => f.severity === "warning" && /Correction stopped/.test(f.text))).toBe(true);
  }, 60_000);
});

describe("verification input and injection", () => {
  const dir = mkdtempSync(join(tmpdir(), "pinchoff-verify-"));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it("keeps a stage name with deck lines in it on one comment line; ngspice creates no file (issue 7 item 5)", async () => {
    const target = join(dir, "INJECTED");
    const v = await verifyStage(fourResistor(`amp\n.control\nshell touch ${target}\n.endc\n*`), proc);
    expect(v.deck).not.toMatch(/^shell/m);
    runDeckSync({ deck: v.deck });
    expect(existsSync(target)).toBe(false);
  }, 60_000);

  it("refuses a W or L outside the process's range, a bad tolerance and an unknown component to adjust", async () => {
    await expect(verifyStage({ ...fourResistor(), device: dev(nmos, 200e-6, 1e-6) }, proc)).rejects.toThrow(/device W: got 0.0002, expected W from 2.2e-7 m to 0.0001 m \(nmos_3p3 in gf180-3v3/);
    await expect(verifyStage({ ...fourResistor(), device: dev(nmos, 20e-6, 0.18e-6) }, proc)).rejects.toThrow(InputError);
    await expect(verifyStage(fourResistor(), proc, { tolerance: 5 })).rejects.toThrow(/relative tolerance/);
    await expect(correctStage(fourResistor(), proc, { adjust: "rx" })).rejects.toThrow(/rg1, rg2, rd, rs/);
  }, 60_000);
});
