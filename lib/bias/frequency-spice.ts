/**
 * SPICE export of a stage's frequency response: the DC deck of its topology
 * with the signal source (AC 1 V) and its resistance, the coupling and bypass
 * capacitors, the load, the device's datasheet capacitances as explicit
 * capacitors when the card has no Level 1 capacitance block, and an `.ac`
 * sweep. The transfer function is v(<prefix>out)/1 V.
 */
import { deviceCapacitances } from "../device/capacitance.js";
import { InputError } from "../errors.js";
import { topologyFor, type Stage, type StageAnalysis } from "./topology.js";
import { spiceNumber } from "./spice.js";
import { writeDeck } from "../spice/deck.js";
import { compensationLines } from "./topologies/two-stage.js";
import type { FrequencyAnalysis } from "./frequency.js";

export interface AcSweep {
  readonly pointsPerDecade: number;
  readonly start: number;
  readonly stop: number;
}

export interface AcCircuit {
  readonly lines: string[];
  /** Node whose voltage is the response to the 1 V AC source. */
  readonly output: string;
  readonly sweep: AcSweep;
}

/** Default sweep: two decades below the low corner (or 1 Hz) to two decades above the upper corner. */
export function defaultSweep(fa: FrequencyAnalysis): AcSweep {
  const lo = fa.low ? fa.low.corner / 100 : Math.min(1, fa.high.corner / 1e4);
  const hi = fa.high.corner * 100;
  const dec = (x: number, up: boolean) => 10 ** (up ? Math.ceil(Math.log10(x)) : Math.floor(Math.log10(x)));
  return { pointsPerDecade: 50, start: dec(lo, false), stop: dec(hi, true) };
}

/** Circuit lines for the AC response of a single-transistor stage. */
export function acCircuit(stage: Stage, analysis: StageAnalysis, fa: FrequencyAnalysis, prefix = "", sweep = defaultSweep(fa)): AcCircuit {
  const p = prefix;
  const dc = topologyFor(stage.topology).spice(stage, p);
  const n = dc.nodes as Readonly<Record<"gate" | "source" | "drain", string>>;
  const lines = [...dc.lines];
  const sig = `${p}sig`;
  const gateIn = `${p}gin`;
  const rsig = fa.source.resistance;
  const cap = (role: "input" | "output" | "bypass") => fa.low?.capacitors.find((c) => c.role === role)?.value;
  if (fa.view === "differential-pair" || fa.view === "two-stage") {
    // Differential drive: 1 V between the inputs, half on each in opposite phase; the response is v(out).
    const nn = dc.nodes as Record<string, string>;
    const devs = stage.devices as Record<string, Stage["device"]> | undefined;
    const roles = fa.view === "two-stage" ? (["load", "second", "sink"] as const) : (["load"] as const);
    if (!stage.device.card.capacitance || roles.some((r) => !devs?.[r]?.card.capacitance))
      throw new InputError(stage.device.card.name, `Level 1 capacitance blocks on the pair and ${roles.join(", ")} cards for the AC export (datasheet capacitances are not placed in a pair's deck)`, `${stage.name ?? stage.topology}: device.card.capacitance`, "invalid-design");
    const t = fa.twoStage;
    if (t) {
      // The compensation the analysis used (given or designed) replaces the one the DC deck carries from the components.
      const ours = [`C${p}C `, `R${p}Z `, `C${p}L `];
      for (let i = lines.length - 1; i >= 0; i--) if (ours.some((x) => lines[i]!.startsWith(x))) lines.splice(i, 1);
      lines.push(...compensationLines({ cc: t.cc, rz: t.rz }, nn, p));
    }
    for (const [node, ac] of [[nn.in1!, "AC 0.5"], [nn.in2!, "AC 0.5 180"]] as const) {
      const i = lines.findIndex((l) => /^V\S* /.test(l) && l.split(" ")[1] === node && l.split(" ")[2] === "0");
      if (i < 0) throw new Error(`internal: no input source at node ${node}`);
      lines[i] = `${lines[i]} ${ac}`;
    }
    if (fa.load.capacitance > 0) lines.push(`C${p}L ${nn.out} 0 ${spiceNumber(fa.load.capacitance)}`);
    return { lines, output: nn.out!, sweep };
  }
  if (fa.view === "cascode-mirror") {
    // Signal current into node A (where IREF enters); RLOAD returned to the output source, whose DC value moves by
    // IOUT·RLOAD so the output still sits at vout (the bias is untouched).
    const nn = dc.nodes as Record<string, string>;
    const cas = (stage.devices as Record<string, Stage["device"]> | undefined)?.cascode;
    if (!stage.device.card.capacitance || !cas?.card.capacitance)
      throw new InputError(stage.device.card.name, "Level 1 capacitance blocks on the mirror and cascode cards for the AC export (datasheet capacitances are not placed in a cascode mirror's deck)", `${stage.name ?? stage.topology}: device.card.capacitance`, "invalid-design");
    const m4 = analysis.devices?.M4;
    if (!m4) throw new Error(`internal: no M4 analysis in the cascode-mirror deck`);
    loadHeldOutput(lines, stage, nn.out!, Math.abs(m4.op.channelCurrent), fa.load.resistance!, p);
    lines.push(`I${p}SIG 0 ${nn.a} DC 0 AC 1`);
    if (fa.load.capacitance > 0) lines.push(`C${p}L ${nn.out} 0 ${spiceNumber(fa.load.capacitance)}`);
    return { lines, output: nn.out!, sweep };
  }
  if (fa.drive === "current") {
    // Current mirror: an ideal AC current into the reference (gate) node; DC 0, so the bias is untouched.
    lines.push(`I${p}SIG 0 ${n.gate} DC 0 AC 1`);
    // An outside RLOAD goes between the source that holds vout and the output.
    if (fa.load.resistance !== undefined) {
      const held = (dc.nodes as Record<string, string>).held;
      if (!held) throw new Error(`internal: the ${stage.topology} deck names no held output node`);
      loadHeldOutput(lines, stage, held, Math.abs(analysis.op.channelCurrent), fa.load.resistance, p);
    }
  } else if (fa.circuit.gateCoupled) {
    lines.push(`V${p}SIG ${sig} 0 DC 0 AC 1`);
    lines.push(rsig > 0 ? `R${p}SIG ${sig} ${gateIn} ${spiceNumber(rsig)}` : `V${p}SIGR ${sig} ${gateIn} 0`);
    lines.push(`C${p}IN ${gateIn} ${n.gate} ${spiceNumber(cap("input")!)}`);
  } else {
    // DC-coupled gate: the signal source goes in series with the gate bias source.
    // The source holding the gate node: V<p>G (single-transistor decks) or V<p>vg (circuit decks).
    const i = lines.findIndex((l) => /^V\S* /.test(l) && l.split(" ")[1] === n.gate && l.split(" ")[2] === "0");
    if (i < 0) throw new Error(`internal: no gate bias source at node ${n.gate} in the ${stage.topology} deck`);
    const bias = `${p}gdc`;
    const [name, , ...rest] = lines[i]!.split(" ");
    lines[i] = [name, bias, ...rest].join(" ");
    lines.push(`V${p}SIG ${sig} ${bias} DC 0 AC 1`);
    lines.push(rsig > 0 ? `R${p}SIG ${sig} ${n.gate} ${spiceNumber(rsig)}` : `V${p}SIGR ${sig} ${n.gate} 0`);
  }
  const cb = cap("bypass");
  if (cb !== undefined) lines.push(`C${p}B ${n.source} 0 ${spiceNumber(cb)}`);
  const outNode = fa.view === "cascode" ? (dc.nodes as Record<string, string>).out! : fa.outputNode === "drain" ? n.drain : n.source;
  let out = outNode;
  if (fa.load.resistance !== undefined && fa.drive !== "current") {
    out = `${p}out`;
    lines.push(`C${p}OUT ${outNode} ${out} ${spiceNumber(cap("output")!)}`);
    lines.push(`R${p}L ${out} 0 ${spiceNumber(fa.load.resistance)}`);
  }
  if (fa.load.capacitance > 0) lines.push(`C${p}L ${out} 0 ${spiceNumber(fa.load.capacitance)}`);
  if (!stage.device.card.capacitance && (stage.device.card.datasheetCapacitances || stage.device.card.tableCapacitances)) {
    const c = deviceCapacitances(stage.device, analysis.op);
    lines.push(`C${p}GS ${n.gate} ${n.source} ${spiceNumber(c.cgs)}`, `C${p}GD ${n.gate} ${n.drain} ${spiceNumber(c.cgd)}`);
    if (c.cds > 0) lines.push(`C${p}DS ${n.drain} ${n.source} ${spiceNumber(c.cds)}`);
    // A table's Cgb (the rest of Cgg) goes to the body node.
    if (c.cgb > 0) lines.push(`C${p}GB ${n.gate} ${(dc.nodes as Record<string, string>).body ?? n.source} ${spiceNumber(c.cgb)}`);
  }
  // The second device of a mirror or a diode-load stage, at its own nodes (gate, drain, source).
  const second =
    fa.view === "current-mirror" ? { role: "reference", an: analysis.devices?.reference, g: n.gate, d: n.gate, s: n.source } : fa.view === "diode-load" ? { role: "load", an: analysis.devices?.load, ...loadNodes(dc.nodes as Record<string, string>) } : undefined;
  const dev2 = second && (stage.devices as Record<string, Stage["device"]> | undefined)?.[second.role];
  if (second && dev2 && second.an && !dev2.card.capacitance && dev2.card.datasheetCapacitances) {
    const c = deviceCapacitances(dev2, second.an.op);
    lines.push(`C${p}GS2 ${second.g} ${second.s} ${spiceNumber(c.cgs)}`, `C${p}GD2 ${second.g} ${second.d} ${spiceNumber(c.cgd)}`, `C${p}DS2 ${second.d} ${second.s} ${spiceNumber(c.cds)}`);
  }
  const cas = (stage.devices as Record<string, Stage["device"]> | undefined)?.cascode;
  const m2 = analysis.devices?.M2;
  if (fa.view === "cascode" && cas && m2 && !cas.card.capacitance && cas.card.datasheetCapacitances) {
    // The cascode device M2: gate at vcas, source at x, drain at out.
    const c = deviceCapacitances(cas, m2.op);
    const g = (dc.nodes as Record<string, string>).vcas!;
    const x = (dc.nodes as Record<string, string>).x!;
    const d = (dc.nodes as Record<string, string>).out!;
    lines.push(`C${p}GS2 ${g} ${x} ${spiceNumber(c.cgs)}`, `C${p}GD2 ${g} ${d} ${spiceNumber(c.cgd)}`, `C${p}DS2 ${d} ${x} ${spiceNumber(c.cds)}`);
  }
  return { lines, output: out, sweep };
}

/**
 * A mirror's output held at vout by a source: RLOAD goes between that source and the output, and the source moves by
 * IOUT·RLOAD (up for an NMOS sink, down for a PMOS source) so the output still sits at vout and the bias is untouched.
 */
function loadHeldOutput(lines: string[], stage: Stage, out: string, iout: number, rl: number, p: string): void {
  const i = lines.findIndex((l) => /^V\S* /.test(l) && l.split(" ")[1] === out && l.split(" ")[2] === "0");
  if (i < 0) throw new Error(`internal: no output source at node ${out} in the ${stage.topology} deck`);
  const vout = (stage.components as Record<string, number>).vout!;
  const sign = stage.device.card.polarity === "nmos" ? 1 : -1;
  const name = lines[i]!.split(" ")[0]!;
  lines[i] = `${name} ${p}outb 0 ${spiceNumber(vout + sign * iout * rl)}`;
  lines.push(`R${p}LOAD ${p}outb ${out} ${spiceNumber(rl)}`);
}

const loadNodes = (nn: Record<string, string>) => ({ g: nn.loadGate!, d: nn.loadDrain!, s: nn.loadSource! });

/** A whole deck: title, cautions, circuit, .ac and .end. */
export function acDeckText(title: string, ac: AcCircuit): string {
  return writeDeck({
    title,
    comments: [
      "Exported by pinchoff: SPICE Level 1 card with its capacitances, signal source AC 1 V.",
      "Hand-analysis cross-check only: verify with your process models and by measurement.",
      `Response: v(${ac.output}) (the gain, since the source is 1 V).`,
    ],
    lines: ac.lines,
    analyses: [".op", `.ac dec ${ac.sweep.pointsPerDecade} ${spiceNumber(ac.sweep.start)} ${spiceNumber(ac.sweep.stop)}`],
  });
}
