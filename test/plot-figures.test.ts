import { describe, expect, it } from "vitest";
import { device, operatingPoint, amperesPerVoltSquared, volts, meters, perVolt, sqrtVolts, InputError, type DeviceCard } from "../lib/index.js";
import { outputCharacteristics, transferCharacteristic, transconductancePlot, diodeLoadCurve, plotMimeType, plotSchema, type PlotSpec, type Trace } from "../lib/plot/index.js";
import { runNgspice } from "./support/ngspice.js";

// Invented cards for the tests (not a real process).
const nCard: DeviceCard = { name: "inv-n", polarity: "nmos", kp: amperesPerVoltSquared(120e-6), vt0: volts(0.6), lambda: perVolt(0.04), gamma: sqrtVolts(0.45), phi: volts(0.7) };
const pCard: DeviceCard = { name: "inv-p", polarity: "pmos", kp: amperesPerVoltSquared(45e-6), vt0: volts(-0.7), lambda: perVolt(0.06) };
const mn = device(nCard, meters(20e-6), meters(2e-6));
const mp = device(pCard, meters(40e-6), meters(2e-6));

const role = (spec: PlotSpec, r: string): Trace[] => spec.figure.data.filter((t) => t.meta?.role === r);
/** Back to SI via the axis divisors. */
/** Relative closeness for plotted numbers: x and y are each rounded to 6 significant digits, and y ∝ x² moves twice as much. */
const near = (got: number, want: number, rel = 2e-5, abs = 1e-15) => expect(Math.abs(got - want)).toBeLessThanOrEqual(rel * Math.abs(want) + abs);
const si = (spec: PlotSpec, t: Trace) => ({
  x: t.x.map((v) => v * spec.axes.x.divisor),
  y: t.y.map((v) => v * (t.yaxis === "y2" ? spec.axes.y2!.divisor : spec.axes.y.divisor)),
});

describe("output characteristics", () => {
  const op = operatingPoint(mn, { vgs: volts(1.3), vds: volts(2.1), vsb: volts(0.4) });
  const spec = outputCharacteristics(mn, { gateDrives: [1.0, 1.5, 2.0], vdsMax: 4, operatingPoint: op, loadLine: { openCircuit: 5, resistance: 4000 } });

  it("is a JSON-only spec carrying its schema and a summary", () => {
    expect(spec.schema).toBe(plotSchema);
    expect(plotMimeType).toBe("application/vnd.pinchoff.plot+json");
    expect(JSON.parse(JSON.stringify(spec))).toEqual(spec);
    expect(spec.summary).toMatch(/Operating point: VGS = 1\.30 V, VDS = 2\.10 V/);
  });

  it("adds the bias point's own drive to the family and highlights it", () => {
    const drives = role(spec, "curve").map((t) => t.meta!.gateDrive);
    expect(drives).toEqual([1.0, 1.3, 1.5, 2.0]);
    expect(role(spec, "curve").filter((t) => t.name.endsWith("(bias)"))).toHaveLength(1);
  });

  it("draws the saturation edge as ½k·VDS²·(1+λVDS) at the operating point's VSB (Shichman–Hodges square law with SPICE Level 1 λ)", () => {
    const [edge] = role(spec, "boundary");
    const { x, y } = si(spec, edge!);
    const k = 120e-6 * 10;
    for (let i = 1; i < x.length; i += 10) near(y[i]!, 0.5 * k * x[i]! ** 2 * (1 + 0.04 * x[i]!));
    // It ends at the largest drive's overdrive, with Vt raised by the body effect at VSB = 0.4 V.
    const vt = 0.6 + 0.45 * (Math.sqrt(0.7 + 0.4) - Math.sqrt(0.7));
    expect(x.at(-1)!).toBeCloseTo(2.0 - vt, 5);
  });

  it("puts the load line through (VDD, 0) and (0, VDD/R) and the operating point at the computed bias", () => {
    const { x, y } = si(spec, role(spec, "load-line")[0]!);
    expect(x).toEqual([0, 4]);
    expect(y[0]!).toBeCloseTo(5 / 4000, 9);
    expect(y[1]!).toBeCloseTo(1 / 4000, 9);
    const p = role(spec, "operating-point")[0]!;
    expect(si(spec, p).y[0]!).toBeCloseTo(op.id, 8);
    expect(p.meta!.region).toBe("saturation");
  });

  it("samples the ID–VDS curves as ngspice Level 1 does (ngspice oracle)", () => {
    const curve = role(spec, "curve").find((t) => t.meta!.gateDrive === 1.5)!;
    const { x, y } = si(spec, curve);
    const picks = [8, 40, 100, 160];
    const circuit = [
      ".model NM nmos level=1 vto=0.6 kp=120u lambda=0.04 gamma=0.45 phi=0.7",
      "M1 d g s b NM W=20u L=2u",
      "VG g 0 1.9", "VS s 0 0.4", "VB b 0 0", "VD d 0 0",
    ].join("\n");
    const control = picks.map((i) => `alter VD dc = ${x[i]! + 0.4}\nop\nprint -i(VD)`).join("\n");
    const got = runNgspice({ circuit, control }).map(([, v]) => v);
    picks.forEach((i, n) => expect(Math.abs(y[i]! - got[n]!)).toBeLessThan(1e-3 * Math.abs(got[n]!) + 1e-11));
  });

  it("plots a PMOS in its own polarity (VSD, source→drain current), matching ngspice Level 1 (ngspice oracle)", () => {
    const p = outputCharacteristics(mp, { gateDrives: [1.2, 1.8], vdsMax: 3 });
    expect(p.figure.layout.xaxis.title.text).toContain("V<sub>SD</sub>");
    const curve = role(p, "curve")[1]!;
    const { x, y } = si(p, curve);
    expect(Math.min(...y)).toBeGreaterThanOrEqual(0);
    const picks = [20, 120];
    const circuit = [".model PM pmos level=1 vto=-0.7 kp=45u lambda=0.06", "M1 d g s s PM W=40u L=2u", "VS s 0 3", "VG g 0 1.2", "VD d 0 0"].join("\n");
    const control = picks.map((i) => `alter VD dc = ${3 - x[i]!}\nop\nprint i(VD)`).join("\n");
    const got = runNgspice({ circuit, control }).map(([, v]) => v);
    picks.forEach((i, n) => expect(Math.abs(y[i]! - got[n]!)).toBeLessThan(1e-3 * Math.abs(got[n]!) + 1e-11));
  });

  it("draws a diode-connected load curve that carries no current once the load's VSG falls below |Vt|", () => {
    const lc = diodeLoadCurve(mp, 3.3);
    const at = (vds: number) => lc.id[lc.vds.findIndex((x) => x >= vds)]!;
    expect(at(3.3 - 0.69)).toBe(0);
    const i = lc.vds.findIndex((x) => x >= 1.0);
    const vsd = 3.3 - lc.vds[i]!;
    near(lc.id[i]!, 0.5 * 45e-6 * 20 * (vsd - 0.7) ** 2 * (1 + 0.06 * vsd), 1e-12);
    const s = outputCharacteristics(mn, { gateDrives: [1.2], vdsMax: 3.3, loadCurve: lc });
    expect(role(s, "load-curve")).toHaveLength(1);
  });

  it("rejects bad input with typed errors naming the field", () => {
    expect(() => outputCharacteristics(mn, { gateDrives: [], vdsMax: 3 })).toThrow(InputError);
    expect(() => outputCharacteristics(mn, { gateDrives: [Number.NaN], vdsMax: 3 })).toThrow(/gateDrives\[0\]/);
    expect(() => outputCharacteristics(mn, { gateDrives: [1], vdsMax: -1 })).toThrow(/vdsMax/);
    expect(() => outputCharacteristics(mn, { gateDrives: [0.3], vdsMax: 3 })).toThrow(/above the threshold/);
    expect(() => outputCharacteristics(mn, { gateDrives: [1], vdsMax: 3, loadLine: { openCircuit: 5, resistance: 0 } })).toThrow(/loadLine\.resistance/);
    expect(() => outputCharacteristics(mn, { gateDrives: [1], vdsMax: 3, points: 1 })).toThrow(/points/);
  });
});

describe("transfer characteristic", () => {
  it("is zero below Vt and ½k·VOV²·(1+λVDS) above it in saturation (Shichman–Hodges square law)", () => {
    const s = transferCharacteristic(mn, { vds: 3, vgsMax: 2 });
    const { x, y } = si(s, role(s, "curve")[0]!);
    x.forEach((g, i) => {
      const vov = g - 0.6;
      const want = vov <= 0 ? 0 : 0.5 * 1.2e-3 * vov * vov * (1 + 0.04 * 3);
      near(y[i]!, want);
    });
    expect(role(s, "threshold")[0]!.meta!.vt).toBe(0.6);
  });
  it("takes VDS from the operating point and needs one", () => {
    const op = operatingPoint(mp, { vgs: volts(-1.5), vds: volts(-2) });
    const s = transferCharacteristic(mp, { vgsMax: 2.5, operatingPoint: op });
    expect(role(s, "curve")[0]!.meta!.vds).toBe(2);
    expect(() => transferCharacteristic(mp, { vgsMax: 2.5 })).toThrow(/vds/);
  });
});

describe("gm and gm/ID", () => {
  it("follows gm = k·VOV·(1+λVDS) and gm/ID = 2/VOV in saturation (square law)", () => {
    const s = transconductancePlot(mn, { vds: 2.5, vovMax: 1 });
    const gm = si(s, role(s, "gm")[0]!);
    const eff = si(s, role(s, "gm-over-id")[0]!);
    gm.x.forEach((v, i) => {
      near(gm.y[i]!, 1.2e-3 * v * (1 + 0.04 * 2.5));
      near(eff.y[i]!, 2 / v, 1e-5);
    });
  });
  it("switches to the triode gm = k·VDS·(1+λVDS) once VOV exceeds VDS (SPICE Level 1 form)", () => {
    const s = transconductancePlot(mn, { vds: 0.3, vovMax: 1 });
    const gm = si(s, role(s, "gm")[0]!);
    const i = gm.x.findIndex((v) => v > 0.5);
    near(gm.y[i]!, 1.2e-3 * 0.3 * (1 + 0.04 * 0.3));
  });
  it("marks the bias gm on the left axis and gm/ID on the right", () => {
    const op = operatingPoint(mn, { vgs: volts(1.0), vds: volts(2) });
    const s = transconductancePlot(mn, { vovMax: 0.8, operatingPoint: op });
    const pts = role(s, "operating-point");
    expect(pts.map((t) => t.yaxis ?? "y")).toEqual(["y", "y2"]);
    expect(pts[1]!.y[0]!).toBeCloseTo(2 / 0.4, 3);
    expect(() => transconductancePlot(mn, { vds: 1, vovMax: 0.5, vovMin: 0 })).toThrow(/vovMin/);
  });
  it("draws the weak-inversion ceiling 1/(n·UT): 25.8 S/A for n = 1.5 at 300 K (kT/q from the CODATA 2018 exact constants), n = 1.3 by default as in the inversion check", () => {
    const s = transconductancePlot(mn, { vds: 2, vovMax: 0.5, slopeFactor: 1.5 });
    const line = role(s, "threshold")[0]!;
    expect(line.yaxis).toBe("y2");
    near(line.meta!.gmOverIdCeiling as number, 1 / (1.5 * 0.025852), 1e-4);
    near(role(transconductancePlot(mn, { vds: 2, vovMax: 0.5 }), "threshold")[0]!.meta!.gmOverIdCeiling as number, 1 / (1.3 * 0.025852), 1e-4);
    expect(() => transconductancePlot(mn, { vds: 2, vovMax: 0.5, slopeFactor: 0 })).toThrow(/slopeFactor/);
  });
});
