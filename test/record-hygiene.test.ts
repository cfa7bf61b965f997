/**
 * Records a reviewer signs: one stated sign convention for PMOS (issue 7 item
 * 19) and record hygiene (item 20): solver checks after the design checks, no
 * input stated twice under two names, engineering units, lists that stay
 * lists in Markdown, and the forward current not labelled as a drain current.
 */
import { describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { synthesize } from "../lib/bias/synthesis.js";
import { pmosConvention } from "../lib/bias/stage.js";
import { toleranceAnalysis } from "../lib/bias/tolerance.js";
import type { Stage } from "../lib/bias/topology.js";
import type { CurrentMirrorStage } from "../lib/bias/topologies/current-mirror.js";
import type { DiodeLoadStage } from "../lib/bias/topologies/diode-load.js";
import type { DeviceCard } from "../lib/device/card.js";
import { amperes, amperesPerVoltSquared, meters, ohms, perVolt, volts } from "../lib/quantity.js";
import { Derivation, type FormulaStep, type NoteStep } from "../lib/record/derivation.js";
import { renderHtml } from "../lib/record/render-html.js";
import { renderMarkdown } from "../lib/record/render-markdown.js";
import { renderText } from "../lib/record/render-text.js";
import { designShape } from "./support/design-shape.js";

// Invented cards (not a real process).
const pcard: DeviceCard = { name: "hy-p", polarity: "pmos", kp: amperesPerVoltSquared(80e-6), vt0: volts(-0.7), lambda: perVolt(0.02) };
const ncard: DeviceCard = { name: "hy-n", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.5), lambda: perVolt(0.02) };
const pStage: Stage = {
  topology: "four-resistor",
  device: { card: pcard, w: meters(40e-6), l: meters(1e-6) },
  components: { rg1: ohms(100e3), rg2: ohms(300e3), rd: ohms(4.7e3), rs: ohms(1e3) },
  supplies: { vdd: volts(12) },
};
const notes = (rec: Derivation) => rec.steps.filter((s): s is NoteStep => s.kind === "note");
const formulas = (rec: Derivation) => rec.steps.filter((s): s is FormulaStep => s.kind === "formula");

describe("PMOS records state one sign convention and follow it (item 19)", () => {
  it("four-resistor analysis: the convention first, the gate bias to ground then mirrored, node voltages to ground at the end", () => {
    const rec = new Derivation("p");
    const a = analyzeStage(pStage, rec);
    expect(rec.steps[0]!.title).toBe("Sign convention (PMOS)");
    const vgg = formulas(rec).find((s) => s.formula === "dividerGate")!;
    expect(vgg.result.value).toBeCloseTo(9, 12); // a node voltage to ground, as the convention says
    const mirrored = notes(rec).find((n) => n.title === "Gate in device polarity")!;
    expect(rec.steps.indexOf(mirrored)).toBe(rec.steps.indexOf(vgg) + 2); // right after the divider's two steps
    expect(mirrored.text).toMatch(/VG = −\(9 V\) = -9 V/);
    // Every later use of VG in the working is the mirrored value.
    for (const s of formulas(rec)) for (const i of s.inputs) if (i.name === "VG") expect(i.value).toBeCloseTo(-9, 12);
    const back = notes(rec).find((n) => n.title === "Node voltages to ground")!;
    expect(back.text).toContain(`VD = ${+a.nodes.drain.toPrecision(6)} V`);
    expect(a.nodes.drain).toBeGreaterThan(0);
    expect(rec.steps.some((s) => /Lowest drain voltage/.test(s.title))).toBe(false);
  });
  it("four-resistor synthesis: the convention first; the drain target recorded as given (to ground), the mirrored value in a note", () => {
    const rec = new Derivation("p synth");
    synthesize(designShape({ topology: "four-resistor", card: pcard, supplies: { vdd: volts(12) }, id: amperes(1e-3), sizing: { vov: volts(0.4), l: meters(1e-6) }, drain: { vd: volts(3) } }), rec);
    expect(notes(rec)[0]!.title).toBe("Sign convention (PMOS)");
    expect(rec.inputs.find((i) => i.name === "VD")!.value).toBe(3);
    expect(rec.inputs.some((i) => /device polarity/.test(i.name))).toBe(false);
    expect(notes(rec).find((n) => n.title === "Drain in device polarity")!.text).toMatch(/−VD = -3 V/);
  });
});

describe("the two-transistor PMOS records state the same convention (item 19)", () => {
  const pMirror: CurrentMirrorStage = {
    topology: "current-mirror",
    device: { card: pcard, w: meters(20e-6), l: meters(1e-6) },
    devices: { reference: { card: pcard, w: meters(10e-6), l: meters(1e-6) } },
    components: { rref: ohms(20e3), rload: ohms(2e3) },
    supplies: { vdd: volts(5) },
  };
  // PMOS driver from VDD, NMOS diode load to ground.
  const pDiode: DiodeLoadStage = {
    topology: "diode-load",
    device: { card: pcard, w: meters(40e-6), l: meters(1e-6) },
    devices: { load: { card: ncard, w: meters(5e-6), l: meters(1e-6) } },
    components: { vg: volts(3.5) },
    supplies: { vdd: volts(5) },
  };
  for (const [name, st] of [["current mirror", pMirror], ["diode load", pDiode]] as const)
    it(`${name}: the shared statement among the first steps, node voltages to ground at the end`, () => {
      const rec = new Derivation(name);
      const a = analyzeStage(st, rec);
      const conv = notes(rec).filter((n) => n.title === "Sign convention (PMOS)");
      expect(conv).toHaveLength(1);
      expect(conv[0]!.text.startsWith(pmosConvention)).toBe(true);
      expect(rec.steps.indexOf(conv[0]!)).toBeLessThan(rec.steps.findIndex((s) => s.kind === "formula"));
      expect(notes(rec).some((n) => n.title === "PMOS" || n.title === "PMOS driver")).toBe(false);
      const back = notes(rec).find((n) => n.title === "Node voltages to ground")!;
      const vout = a.nodes.drain;
      expect(vout).toBeGreaterThan(0); // a node voltage to ground between the rails
      expect(back.text).toContain(`output at ${+vout.toPrecision(6)} V`);
    });
});

describe("record hygiene (item 20)", () => {
  it("the solver's KCL check comes after the design checks and says it is the solver's", () => {
    for (const st of [pStage, { ...pStage, device: { ...pStage.device, card: ncard } }]) {
      const rec = new Derivation("t");
      analyzeStage(st, rec);
      const last = rec.checks[rec.checks.length - 1]!;
      expect(last.title).toMatch(/^Solver: /);
      expect(rec.checks.filter((c) => c.title.startsWith("Solver:"))).toHaveLength(1);
    }
  });
  it("each renderer prints the solver's checks under a heading of their own, after the design checks", () => {
    const rec = new Derivation("t");
    analyzeStage(pStage, rec);
    const kcl = "device current equals";
    const text = renderText(rec);
    const md = renderMarkdown(rec);
    const html = renderHtml(rec);
    for (const [out, heading, designHeading] of [
      [text, "\nSolver checks\n", "\nChecks\n"],
      [md, "**Solver checks**", "**Checks**"],
      [html, ">Solver checks</h3>", ">Checks</h3>"],
    ] as const) {
      const h = out.indexOf(heading);
      expect(h, heading).toBeGreaterThan(out.indexOf(designHeading));
      expect(out.indexOf(kcl)).toBeGreaterThan(h);
      expect(out).not.toContain(`Solver: ${kcl}`);
      const designAt = rec.checks.find((c) => !c.title.startsWith("Solver:"))!.title;
      expect(out.indexOf(designAt)).toBeLessThan(h);
    }
  });
  it("no input is stated twice under two names (IDIV, not Idiv beside it)", () => {
    const rec = new Derivation("t");
    synthesize(designShape({ topology: "four-resistor", card: ncard, supplies: { vdd: volts(9) }, id: amperes(1e-3), sizing: { vov: volts(0.3), l: meters(1e-6) }, drain: { vd: volts(5) }, gate: { current: amperes(50e-6) } }), rec);
    const names = rec.inputs.map((i) => i.name);
    expect(names).toContain("IDIV");
    expect(names).not.toContain("Idiv");
    expect(names.filter((n) => n.toUpperCase() === "VD")).toHaveLength(1);
  });
  it("the standard-value inputs and the tolerance spread carry engineering units", () => {
    const rec = new Derivation("t");
    const r = synthesize(designShape({ topology: "four-resistor", card: ncard, supplies: { vdd: volts(9) }, id: amperes(566e-6), sizing: { vov: volts(0.3), l: meters(1e-6) } }), rec);
    for (const i of rec.inputs.filter((x) => x.origin?.startsWith("standard value"))) expect(i.origin).toMatch(/^standard value for ideal [\d.]+ [kM]?Ω$/);
    const tol = new Derivation("tol");
    toleranceAnalysis(r.stage, { resistors: 0.05 }, tol);
    const spread = notes(tol).find((n) => n.title === "Spread of the bias")!.text;
    expect(spread).toMatch(/^ID: [\d.]+ µA /);
    expect(spread).not.toMatch(/0\.000\d+ A/);
  });
  it("a note's list (the best combinations) stays one line per entry in Markdown", () => {
    const rec = new Derivation("t");
    synthesize(designShape({ topology: "four-resistor", card: ncard, supplies: { vdd: volts(9) }, id: amperes(1e-3), sizing: { vov: volts(0.3), l: meters(1e-6) } }), rec);
    const md = renderMarkdown(rec);
    const at = md.indexOf("**Best combinations**");
    const block = md.slice(at, md.indexOf("\n\n", md.indexOf("1. ", at)));
    expect(block).toMatch(/ {3}1\. .* {2}\n {3}2\. /);
  });
  it("the forward current for the inversion level is I_F, not a second I_D", () => {
    const rec = new Derivation("t");
    analyzeStage(pStage, rec);
    const fwd = formulas(rec).find((s) => s.because === "for the inversion level")!;
    expect(fwd.result.name).toBe("IF");
    expect(fwd.tex).toContain("I_{F}");
  });
});

describe("dissipation is computed once (item 20)", () => {
  it("a synthesis with ratings reuses the analysis' dissipation figures instead of deriving them again", () => {
    const rec = new Derivation("t");
    const r = synthesize(designShape(
      { topology: "four-resistor", card: ncard, supplies: { vdd: volts(9) }, id: amperes(1e-3), sizing: { vov: volts(0.3), l: meters(1e-6) }, dissipation: { resistors: { rd: { rating: 0.125 as never } }, transistor: { rating: 0.2 as never } } }),
      rec,
    );
    const rdPower = formulas(rec).filter((s) => s.formula === "resistorPower" && s.inputs.some((i) => i.value === r.stage.components.rd));
    expect(rdPower).toHaveLength(1);
    expect(formulas(rec).filter((s) => s.formula === "devicePower")).toHaveLength(1);
    const item = r.dissipation!.items.find((i) => i.name === "rd")!;
    expect(item.power).toBe(r.analysis.power.components.rd);
  });
});

describe("the tolerance record's fingerprint covers its own inputs (item 20)", () => {
  it("records the bands, nominal values, temperatures and Monte Carlo settings, so different runs fingerprint differently", () => {
    const st: Stage = { ...pStage, device: { ...pStage.device, card: ncard } };
    const fp = (spec: Parameters<typeof toleranceAnalysis>[1]) => {
      const rec = new Derivation("tol");
      toleranceAnalysis(st, spec, rec);
      return rec;
    };
    const a = fp({ resistors: 0.05 });
    expect(a.inputs.find((i) => i.name === "RD band")!.value).toBe(0.05);
    expect(a.fingerprint()).not.toBe(new Derivation("empty").fingerprint());
    expect(fp({ resistors: 0.01 }).fingerprint()).not.toBe(a.fingerprint());
    expect(fp({ resistors: 0.05, monteCarlo: { samples: 10, seed: 1 } }).fingerprint()).not.toBe(fp({ resistors: 0.05, monteCarlo: { samples: 10, seed: 2 } }).fingerprint());
  });
});

describe("text records keep a note's lines (item 20)", () => {
  it("the spread of the bias prints one figure per line", async () => {
    const { renderText } = await import("../lib/record/render-text.js");
    const rec = new Derivation("tol");
    toleranceAnalysis({ ...pStage, device: { ...pStage.device, card: ncard } }, { resistors: 0.05 }, rec);
    const text = renderText(rec);
    for (const figure of ["ID", "VD", "VS", "VOV"]) expect(text).toMatch(new RegExp(`\\n {5}${figure}: `));
  });
});
