/**
 * Plots of a solved bias stage: the load line follows from the topology's
 * components (the drain–source loop sees RD + RS across the rail span; an ideal
 * current source fixes ID), the family is drawn around the solved operating
 * point. The family is drawn at the operating point's VSB; with the body tied
 * to the rail, VSB changes along the load line, so curves away from the bias
 * point are approximate (said in the summary).
 */
import { device } from "../device/card.js";
import { drainCurrent } from "../device/drain-current.js";
import { InputError } from "../errors.js";
import type { Stage, StageAnalysis } from "../bias/topology.js";
import { formatQuantity } from "../units/format.js";
import type { PlotSpec } from "./figure.js";
import { diodeLoadCurve, outputCharacteristics, type LoadCurve, type LoadLine } from "./output-characteristics.js";
import { transconductancePlot } from "./transconductance.js";
import { transferCharacteristic } from "./transfer.js";

export interface StageLoad {
  readonly loadLine?: LoadLine;
  readonly loadCurve?: LoadCurve;
}

const num = (c: unknown, name: string): number => {
  const v = (c as Record<string, unknown>)[name];
  return typeof v === "number" && Number.isFinite(v) ? v : 0;
};

/** The DC load seen by the transistor's drain–source loop, in device polarity. */
export function stageLoad<C>(stage: Stage<string, C>): StageLoad {
  const span = stage.supplies.vdd - (stage.supplies.vss ?? 0);
  const c = stage.components;
  const load = stage.devices?.load;
  if (stage.topology === "diode-load" && load) {
    const dev = device(load.card, load.w, load.l, "stageLoad.devices.load");
    // A same-type load with its body on the driver's source rail sees VSB = VOUT − VSS, the driver's VDS.
    const sameType = load.card.polarity === stage.device.card.polarity;
    const bodyOnRail = sameType && stage.body === "rail";
    return { loadCurve: diodeLoadCurve(dev, span, { ...(bodyOnRail ? { vsb: (vds: number) => vds } : {}), ...(stage.options?.clm ? { clm: stage.options.clm } : {}) }) };
  }
  if (stage.topology === "current-mirror") {
    const rload = num(c, "rload");
    if (rload > 0) return { loadLine: { openCircuit: span, resistance: rload, label: `load resistor ${formatQuantity(rload, "resistance")}` } };
    const vout = (c as Record<string, unknown>).vout;
    if (typeof vout === "number") {
      // An ideal output voltage: the load is a vertical line at the VDS it holds (device polarity).
      const vds = stage.device.card.polarity === "nmos" ? vout - (stage.supplies.vss ?? 0) : stage.supplies.vdd - vout;
      return { loadCurve: { vds: [vds, vds], id: [0, 1], label: `output held at ${formatQuantity(vout, "voltage")}` } };
    }
    return {};
  }
  const iss = num(c, "iss");
  if (iss > 0) {
    // An ideal current source forces ID whatever VDS is: the "load line" is horizontal.
    return { loadCurve: { vds: [0, span], id: [iss, iss], label: `ideal current source ISS = ${formatQuantity(iss, "current")}` } };
  }
  const r = num(c, "rd") + num(c, "rs");
  if (r > 0) return { loadLine: { openCircuit: span, resistance: r } };
  return {};
}

/**
 * The load of the main transistor of a netlist stage, from the solved nodes (device polarity):
 * the resistive pair's RD from the drain rail to its drain over the span from its source;
 * the five-transistor amplifier's diode M3 on M1's drain; the cascode mirror's output cascode
 * M4 (gate and drain held) on M2's drain. Undefined for other stages.
 */
export function netlistLoad<C>(stage: Stage<string, C>, analysis: StageAnalysis): StageLoad | undefined {
  const sgn = stage.device.card.polarity === "nmos" ? 1 : -1;
  const drainRail = sgn > 0 ? stage.supplies.vdd : stage.supplies.vss ?? 0;
  const vs = analysis.nodes.source;
  if (vs === undefined) return undefined;
  const open = sgn * (drainRail - vs);
  if (stage.topology === "diff-pair") {
    const rd = num(stage.components, "rd");
    return { loadLine: { openCircuit: open, resistance: rd, label: `load resistor ${formatQuantity(rd, "resistance")} from the source at ${formatQuantity(vs, "voltage")}` } };
  }
  if (stage.topology === "diff-pair-mirror-load" && stage.devices?.load) {
    const ld = stage.devices.load;
    return { loadCurve: diodeLoadCurve(device(ld.card, ld.w, ld.l, "stagePlots.devices.load"), open, { label: "diode-connected load M3 (mirror input)" }) };
  }
  if (stage.topology === "cascode-mirror" && stage.devices?.cascode) {
    const cd = stage.devices.cascode;
    const m4 = analysis.devices?.M4;
    if (!m4) return undefined;
    // M4's gate and drain are held: its current against the voltage it leaves M2 (its source, device polarity).
    const dev4 = device(cd.card, cd.w, cd.l, "stagePlots.devices.cascode");
    const vg = sgn * (m4.terminals.gate - vs);
    const vd = sgn * (m4.terminals.drain - vs);
    const n = 161;
    const x: number[] = [];
    const y: number[] = [];
    for (let i = 0; i < n; i++) {
      const v2 = (vd * i) / (n - 1);
      x.push(v2);
      y.push(Math.abs(drainCurrent(dev4, sgn * (vg - v2), sgn * (vd - v2), stage.body === "rail" ? sgn * v2 : 0)));
    }
    return { loadCurve: { vds: x, id: y, label: "output cascode M4 (gate at its bias, output held)" } };
  }
  return undefined;
}

export interface StagePlotOptions {
  /** Extra load (e.g. a diode-connected device from diodeLoadCurve) instead of the topology's own. */
  readonly load?: StageLoad;
  /** Gate drives for the family (device polarity); chosen around the bias point when omitted. */
  readonly gateDrives?: readonly number[];
}

export interface StagePlots {
  readonly output: PlotSpec;
  readonly transfer: PlotSpec;
  readonly transconductance: PlotSpec;
}

/** Output characteristic with load line and bias point, transfer characteristic and gm, gm/ID for a solved stage. */
export function stagePlots<C>(stage: Stage<string, C>, analysis: StageAnalysis, opts: StagePlotOptions = {}): StagePlots {
  if (!stage || !analysis || !analysis.op) throw new InputError(analysis, "a stage and its analysis (from analyzeStage or a synthesis result)", "stagePlots");
  const dev = device(stage.device.card, stage.device.w, stage.device.l, "stagePlots.stage.device");
  const op = analysis.op;
  const clm = stage.options?.clm ?? "continuous";
  const span = stage.supplies.vdd - (stage.supplies.vss ?? 0);
  const vt = Math.abs(op.vt);
  const vov = op.vov > 0 ? op.vov : 0.3;
  const drives = opts.gateDrives ?? [0.5, 1.5, 2].map((f) => Number((vt + f * vov).toPrecision(3)));
  const name = stage.name ?? analysis.name ?? stage.topology;
  const load = opts.load ?? netlistLoad(stage, analysis) ?? stageLoad(stage);
  const output = outputCharacteristics(dev, {
    gateDrives: drives,
    vdsMax: span,
    operatingPoint: op,
    clm,
    ...load,
    title: `Output characteristics with DC load, ${name}`,
  });
  const bodyNote =
    op.vsbDevice !== 0 ? ` Curves are drawn at the bias point's VSB = ${formatQuantity(op.vsbDevice, "voltage")}; with the body on the rail, VSB moves along the load line, so curves away from the bias point are approximate.` : "";
  const transfer = transferCharacteristic(dev, { vgsMax: Math.max(vt + 2 * vov, op.vgsDevice * 1.1), operatingPoint: op, clm, title: `Transfer characteristic at the bias VDS, ${name}` });
  const transconductance = transconductancePlot(dev, { vovMax: 2.5 * vov, operatingPoint: op, clm, title: `gm and gm/ID against overdrive, ${name}` });
  return { output: { ...output, summary: output.summary + bodyNote }, transfer, transconductance };
}
