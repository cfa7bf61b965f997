import { describe, expect, it } from "vitest";
import { analyzeStage, synthesizeFourResistor, amperesPerVoltSquared, volts, meters, perVolt, amperes, ohms, type DeviceCard } from "../lib/index.js";
import { stageLoad, stagePlots, type PlotSpec, type Trace } from "../lib/plot/index.js";
import { designShape } from "./support/design-shape.js";

// Invented cards for the tests (not real parts).
const n: DeviceCard = { name: "inv-n", polarity: "nmos", kp: amperesPerVoltSquared(0.1), vt0: volts(1.8), lambda: perVolt(0.01) };
const nChip: DeviceCard = { name: "inv-n-chip", polarity: "nmos", kp: amperesPerVoltSquared(250e-6), vt0: volts(0.45), lambda: perVolt(0.08) };
const pChip: DeviceCard = { name: "inv-p-chip", polarity: "pmos", kp: amperesPerVoltSquared(80e-6), vt0: volts(-0.5), lambda: perVolt(0.1) };
const one = meters(1e-6);

const role = (s: PlotSpec, r: string): Trace[] => s.figure.data.filter((t) => t.meta?.role === r);
/** The operating-point marker's meta; meta is open-ended, so its numbers are checked before use. */
function opOf(s: PlotSpec): { vds: number; id: number } {
  const meta = role(s, "operating-point")[0]?.meta;
  expect(typeof meta?.vds).toBe("number");
  expect(typeof meta?.id).toBe("number");
  return { vds: meta!.vds as number, id: meta!.id as number };
}

/** Linear interpolation of a trace (in SI) at x. */
function at(s: PlotSpec, t: Trace, x: number): number {
  const xs = t.x.map((v) => v * s.axes.x.divisor);
  const ys = t.y.map((v) => v * s.axes.y.divisor);
  const i = xs.findIndex((v) => v >= x);
  if (i <= 0) return ys[0]!;
  return ys[i - 1]! + ((ys[i]! - ys[i - 1]!) * (x - xs[i - 1]!)) / (xs[i]! - xs[i - 1]!);
}

describe("stage plots", () => {
  it("draws the four-resistor load line VDS = VDD − ID·(RD + RS) through the solved operating point (KVL round the drain–source loop)", () => {
    const r = synthesizeFourResistor(designShape({ topology: "four-resistor", card: n, supplies: { vdd: volts(5) }, id: amperes(1e-3), sizing: { w: one, l: one }, drain: { vd: volts(3) }, source: { vrs: volts(1) }, gate: { current: amperes(50e-6) } }));
    const load = stageLoad(r.stage);
    expect(load.loadLine).toEqual({ openCircuit: 5, resistance: r.stage.components.rd + r.stage.components.rs });
    const p = stagePlots(r.stage, r.analysis);
    const op = opOf(p.output);
    expect(Math.abs(at(p.output, role(p.output, "load-line")[0]!, op.vds) - op.id) / op.id).toBeLessThan(1e-4);
    // ... and on its own curve of the family.
    const own = role(p.output, "curve").find((t) => t.name.endsWith("(bias)"))!;
    expect(Math.abs(at(p.output, own, op.vds) - op.id) / op.id).toBeLessThan(1e-3);
    expect(p.transfer.kind).toBe("transfer-characteristic");
    expect(p.transconductance.kind).toBe("transconductance");
  });

  it("uses the diode-connected load's curve, which crosses the driver's curve at the solved output (equal currents)", () => {
    const stage = {
      topology: "diode-load",
      device: { card: nChip, w: meters(8.9e-6), l: meters(0.5e-6) },
      devices: { load: { card: pChip, w: meters(3.1e-6), l: meters(0.5e-6) } },
      components: { vg: volts(0.595) },
      supplies: { vdd: volts(1.8) },
    };
    const a = analyzeStage(stage);
    const p = stagePlots(stage, a);
    const op = opOf(p.output);
    const curve = role(p.output, "load-curve")[0]!;
    expect(Math.abs(at(p.output, curve, op.vds) - op.id) / op.id).toBeLessThan(5e-3);
  });

  it("draws the mirror's load resistor line and a horizontal line for an ideal current source", () => {
    const mirror = stageLoad({ topology: "current-mirror", device: { card: nChip, w: one, l: one }, components: { rref: ohms(56e3), rload: ohms(10e3) }, supplies: { vdd: volts(1.8) } });
    expect(mirror.loadLine).toMatchObject({ openCircuit: 1.8, resistance: 10e3 });
    const held = stageLoad({ topology: "current-mirror", device: { card: nChip, w: one, l: one }, components: { rref: ohms(56e3), vout: volts(0.9) }, supplies: { vdd: volts(1.8), vss: volts(-1) } });
    expect(held.loadCurve!.vds).toEqual([1.9, 1.9]);
    const src = stageLoad({ topology: "current-source-bias", device: { card: nChip, w: one, l: one }, components: { vg: volts(1), iss: amperes(40e-6), rd: ohms(10e3) }, supplies: { vdd: volts(1.8) } });
    expect(src.loadCurve!.id).toEqual([40e-6, 40e-6]);
  });
});
