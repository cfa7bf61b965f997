/**
 * The frequency analysis as rows of named quantities: gain, capacitors, corners,
 * poles, the zero, each view's own figures, and the methods' conditions with
 * their verdicts. Notebooks show it with `showTable(frequencyRows(fa), title,
 * { part: "frequency" })`, which the run report files under its frequency
 * heading. Display data only; allocates its rows.
 */
import { dimensions, type Dimension } from "../quantity.js";
import type { FrequencyAnalysis } from "./frequency.js";

export interface FrequencyRow {
  readonly name: string;
  readonly value: number;
  readonly dim: Dimension;
  readonly note?: string;
}

/** A check's dimension back from its unit (the frequency checks are ratios and frequencies). */
const dimOf = (unit: string): Dimension => (Object.keys(dimensions) as Dimension[]).find((k) => dimensions[k].unit === unit) ?? "dimensionless";
const sig = (x: number) => (Number.isFinite(x) ? String(+x.toPrecision(3)) : String(x));

export function frequencyRows(fa: FrequencyAnalysis): FrequencyRow[] {
  const rows: FrequencyRow[] = [];
  rows.push(
    fa.drive === "current"
      ? { name: "midband transimpedance", value: Math.abs(fa.midbandGain), dim: "resistance", note: "output voltage per signal current into the reference node (inverting)" }
      : { name: "midband gain", value: fa.midbandGain, dim: "dimensionless", note: "from the signal source to the output, with source and load" },
  );
  for (const c of fa.low?.capacitors ?? [])
    rows.push({ name: `C ${c.role}`, value: c.value, dim: "capacitance", note: `${c.designed ? `designed (ideal ${sig(c.ideal ?? c.value)} F); ` : "given; "}sees ${sig(c.resistance)} Ω, pole ${sig(c.pole)} Hz` });
  if (fa.low) {
    rows.push({ name: "low corner", value: fa.low.corner, dim: "frequency", note: `hand transfer function; short-circuit sum ${sig(fa.low.sctcCorner)} Hz` });
    if (fa.low.bypassZero !== undefined) rows.push({ name: "bypass zero", value: fa.low.bypassZero, dim: "frequency", note: "1/(2π·RS·CB)" });
  }
  const h = fa.high;
  rows.push({ name: "upper corner", value: h.corner, dim: "frequency", note: `hand transfer function; open-circuit estimate ${sig(h.octcCorner)} Hz` });
  if (h.dominantPole !== undefined) rows.push({ name: "dominant pole", value: h.dominantPole, dim: "frequency" });
  if (h.nonDominantPole !== undefined) rows.push({ name: "non-dominant pole", value: h.nonDominantPole, dim: "frequency" });
  if (h.complexPair) rows.push({ name: "complex pole pair", value: h.complexPair.naturalFrequency, dim: "frequency", note: `Q = ${sig(h.complexPair.q)}` });
  rows.push({ name: "zero", value: Math.abs(h.zero.frequency), dim: "frequency", note: h.zero.rightHalfPlane ? "right half plane" : "left half plane" });
  if (h.miller && Number.isFinite(h.miller.inputPole)) rows.push({ name: "Miller input pole", value: h.miller.inputPole, dim: "frequency", note: `Miller capacitance ${sig(h.miller.capacitance)} F` });
  if (fa.mirror) rows.push({ name: "mirror pole", value: fa.mirror.mirrorPole, dim: "frequency", note: `gate node: ${sig(fa.mirror.gateResistance)} Ω, ${sig(fa.mirror.gateCapacitance)} F` });
  if (fa.cascode) rows.push({ name: "node pole between the devices", value: fa.cascode.nodePole, dim: "frequency", note: `Miller factor 1 + gm1·RX = ${sig(1 + fa.cascode.gainToX)}` });
  const cm = fa.cascodeMirror;
  if (cm) {
    if (cm.nodeA) rows.push({ name: "pole of node A (cascode gates)", value: cm.nodeA.pole, dim: "frequency", note: `${sig(cm.nodeA.resistance)} Ω, ${sig(cm.nodeA.capacitance)} F with Cgd4's Miller share` });
    rows.push({ name: "pole of node X (between M2 and M4)", value: cm.nodeX.pole, dim: "frequency", note: `${sig(cm.nodeX.resistance)} Ω, ${sig(cm.nodeX.capacitance)} F` });
    if (fa.mirror) rows.push({ name: "output pole", value: fa.mirror.outputPole, dim: "frequency", note: `RLOAD ∥ the cascode (${sig(cm.cascodeResistance)} Ω looking into M4), ${cm.bias} bias` });
  }
  if (fa.pair) {
    rows.push({ name: "gain-bandwidth product", value: fa.pair.gainBandwidth, dim: "frequency" });
    if (fa.pair.phaseMargin !== undefined) rows.push({ name: "phase margin", value: fa.pair.phaseMargin, dim: "dimensionless", note: "degrees" });
  }
  if (fa.twoStage) {
    const t = fa.twoStage;
    rows.push({ name: "Miller capacitor Cc", value: t.cc, dim: "capacitance", note: `${t.ccDesigned ? "designed for the target phase margin" : "given"}; rule of thumb 0.22·CL = ${sig(t.ccRuleOfThumb)} F` });
    if (t.rz > 0) rows.push({ name: "nulling resistor Rz", value: t.rz, dim: "resistance", note: t.rzDesigned ? "by the nulling rule" : "given" });
    rows.push({ name: "gain-bandwidth product", value: t.gainBandwidth, dim: "frequency", note: "gm1/(2π·Cc)" });
    rows.push({ name: "second pole", value: t.secondPole, dim: "frequency" });
    if (Number.isFinite(t.zero)) rows.push({ name: "Miller zero", value: Math.abs(t.zero), dim: "frequency", note: t.zero > 0 ? "right half plane" : "left half plane" });
    rows.push({ name: "mirror pole", value: t.mirrorPole, dim: "frequency" });
    if (t.unityGain !== undefined) rows.push({ name: "unity-gain frequency", value: t.unityGain, dim: "frequency" });
    if (t.phaseMargin !== undefined) rows.push({ name: "phase margin", value: t.phaseMargin, dim: "dimensionless", note: "degrees" });
  }
  for (const c of fa.checks) rows.push({ name: `condition: ${c.name}`, value: c.value, dim: dimOf(c.unit), note: c.passed ? "holds" : "does not hold: the estimate is rough" });
  return rows;
}
