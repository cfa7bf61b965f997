/**
 * Verification of a stage with a process library: the stage's own circuit (from its
 * topology's SPICE export) with each Level 1 card replaced by the process's device of
 * the same polarity, simulated by ngspice (`.op` and `.tf`), and compared with the
 * hand analysis: node voltages, drain currents, the simulator's region (|VDS| against
 * its VDsat), gm, gds and the small-signal gain, each with its deviation, and a check
 * on the main drain current with a tolerance the caller sets (default ±10 %).
 *
 * Correction (`correctStage`): re-size the main device's W, or one bias component,
 * from the simulated current until the simulated drain current is within 1 % of the
 * target, by secant steps on ln(parameter) against ln(ID) (first step with the
 * slope ID ∝ W, or ∝ 1/R for a resistor); at most 5 simulations after the first, else
 * the record says why. Each iteration is recorded.
 * Failure modes: the runner's typed errors; a W or L outside the process range is an
 * `InputError` before anything runs.
 */
import { InputError } from "../errors.js";
import type { Derivation } from "../record/derivation.js";
import { checkGeometry, cornerSection, type ProcessDescription } from "../process/description.js";
import { includeLine, libLine, spiceNumber, spiceText, writeDeck } from "../spice/deck.js";
import { column } from "../spice/raw.js";
import { runDeck } from "../spice/run.js";
import { analyzeStage, stageCircuit } from "./analyze.js";
import type { SpiceCircuit, Stage, StageAnalysis } from "./topology.js";

export interface VerifyOptions {
  readonly corner?: string;
  /** Allowed relative deviation of the main drain current; default 0.1 (±10 %). */
  readonly tolerance?: number;
  readonly timeoutMs?: number;
}

export type SimRegion = "saturation" | "triode" | "subthreshold";

export interface Compared {
  readonly hand: number;
  readonly sim: number;
  /** sim/hand − 1 (NaN when the hand value is 0). */
  readonly deviation: number;
}

export interface DeviceVerification {
  readonly role: string;
  readonly instance: string;
  readonly model: string;
  readonly id: Compared;
  readonly gm: Compared;
  readonly gds: Compared;
  readonly handRegion: string;
  readonly simRegion: SimRegion;
  readonly vds: number;
  readonly vdsat: number;
  readonly vth: number;
}

export interface StageVerification {
  readonly process: string;
  readonly section: string;
  /** The deck that was run, so a reviewer can re-run it (`ngspice -b deck.cir`). */
  readonly deck: string;
  readonly nodes: Readonly<Record<string, Compared>>;
  readonly devices: readonly DeviceVerification[];
  readonly gain?: Compared & { readonly input: string; readonly output: string };
  readonly tolerance: number;
  readonly passed: boolean;
  readonly seconds: number;
}

const compare = (hand: number, sim: number): Compared => ({ hand, sim, deviation: hand === 0 ? (sim === 0 ? 0 : Number.NaN) : sim / hand - 1 });

/** The stage's circuit lines with every Level 1 model replaced by the process's device, and an input source in series with the gate for `.tf`. */
export function processCircuit(stage: Stage, p: ProcessDescription, circuit: SpiceCircuit = stageCircuit(stage), withTf = true): { lines: string[]; tfSource?: string } {
  const models = circuit.models ?? {};
  const lines: string[] = [];
  const gate = circuit.nodes.gate!;
  let tfSource: string | undefined;
  for (const l of circuit.lines) {
    const tok = l.split(" ");
    if (tok[0]!.toLowerCase() === ".model" && tok[1]! in models) continue;
    if (/^M/i.test(tok[0]!) && tok[5]! in models) {
      tok[5] = p.devices[models[tok[5]!]!].model;
      // The main device's gate gets a 0 V source in series: the input of `.tf` (no change at DC).
      if (withTf && tok[0] === circuit.instance && tok[2] === gate) {
        tok[2] = `${gate}_tf`;
        tfSource = "VTFIN";
        lines.push(`VTFIN ${gate}_tf ${gate} 0`);
      }
      lines.push(tok.join(" "));
      continue;
    }
    lines.push(l);
  }
  return { lines, ...(tfSource ? { tfSource } : {}) };
}

/** Simulate the stage with the process library and compare with the hand analysis. */
/** Any topology's stage (its components typed as that topology declares them, as `analyzeStage` takes it). */
type AnyStage = Stage<string, object>;

export async function verifyStage(anyStage: AnyStage, p: ProcessDescription, opts: VerifyOptions = {}, rec?: Derivation): Promise<StageVerification> {
  const stage = anyStage as Stage;
  const tolerance = opts.tolerance ?? 0.1;
  if (typeof tolerance !== "number" || !(tolerance > 0) || tolerance >= 1) throw new InputError(tolerance, "a relative tolerance between 0 and 1 (0.1 is ±10 %)", "verification tolerance");
  const hand: StageAnalysis = analyzeStage(stage);
  const circuit = stageCircuit(stage);
  const roles: Array<[string, string, Stage["device"]]> = [["device", circuit.instance, stage.device]];
  for (const [role, inst] of Object.entries(circuit.instances ?? {})) roles.push([role, inst, stage.devices![role]!]);
  for (const [role, , d] of roles) {
    checkGeometry(p, d.card.polarity, "w", d.w, `${role} W`);
    checkGeometry(p, d.card.polarity, "l", d.l, `${role} L`);
  }
  const section = cornerSection(p, opts.corner);
  // Gain from an ideal source at the gate; not for drain feedback, where a series source would sit inside the loop.
  const amp = stage.topology === "drain-feedback" ? undefined : hand.metrics.amplifiers.find((a) => a.inputNode === "gate");
  const outNode = amp ? circuit.nodes[amp.outputNode] : undefined;
  const { lines, tfSource } = processCircuit(stage, p, circuit, outNode !== undefined);
  const inSource = tfSource;
  const saves = roles.flatMap(([, inst]) => ["id", "gm", "gds", "vdsat", "vth", "vds"].map((q) => `@${inst.toLowerCase()}[${q}]`));
  const control = ["set filetype=binary", `save all ${saves.join(" ")}`, "op", "write op.raw"];
  if (amp && outNode && inSource) control.push(`tf v(${outNode}) ${inSource}`, "write tf.raw");
  control.push("quit 0");
  const deck = writeDeck({
    title: `pinchoff verification: ${spiceText(stage.name ?? stage.topology)} with ${p.name} (${section})`,
    comments: [
      `Library ${p.library.file}, section ${section}; the stage's Level 1 cards are replaced by ${p.devices.nmos.model}/${p.devices.pmos.model}.`,
      "Re-run with: ngspice -b <this file> (writes op.raw and tf.raw in the working folder).",
    ],
    lines: [libLine(p.library.file, section), ...p.includes.map((f) => includeLine(f)), `.temp ${spiceNumber(p.temperature)}`, ...lines],
    control,
  });
  const r = await runDeck({ deck, outputs: amp && outNode && inSource ? ["op.raw", "tf.raw"] : ["op.raw"], timeoutMs: opts.timeoutMs ?? 30000, origin: `verification of ${spiceText(stage.name ?? stage.topology)}` });
  const op = r.raw["op.raw"]![0]!;
  const nodes: Record<string, Compared> = {};
  for (const [name, node] of Object.entries(circuit.nodes)) {
    const h = (hand.nodes as Record<string, number>)[name];
    if (h === undefined || node === "0" || !op.names.includes(`v(${node.toLowerCase()})`)) continue;
    nodes[name] = compare(h, column(op, `v(${node.toLowerCase()})`)[0]!);
  }
  const devices = roles.map(([role, inst, d]): DeviceVerification => {
    const v = (q: string, kind = "") => column(op, kind ? `${kind}(@${inst.toLowerCase()}[${q}])` : `@${inst.toLowerCase()}[${q}]`)[0]!;
    const h = role === "device" ? { op: hand.op, ss: hand.smallSignal } : { op: hand.devices![role]!.op, ss: hand.devices![role]!.smallSignal };
    const vds = Math.abs(v("vds", "v"));
    const vdsat = Math.abs(v("vdsat", "v"));
    const vth = Math.abs(v("vth", "v"));
    const vgs = Math.abs((h.op.vgsDevice as number) ?? 0);
    // BSIM4 in ngspice reports @m[id] of a PMOS as a positive magnitude: give it the SPICE sign (into the drain) of `op.id`.
    const id = (d.card.polarity === "pmos" ? -1 : 1) * Math.abs(v("id", "i"));
    const simRegion: SimRegion = Math.abs(id) < 1e-12 || vgs < vth - 0.05 ? "subthreshold" : vds >= vdsat ? "saturation" : "triode";
    return { role, instance: inst, model: p.devices[d.card.polarity].model, id: compare(h.op.id, id), gm: compare(h.ss.gm, Math.abs(v("gm"))), gds: compare(h.ss.gds, Math.abs(v("gds"))), handRegion: h.op.region, simRegion, vds, vdsat, vth };
  });
  let gain: StageVerification["gain"];
  if (amp && outNode && inSource && r.raw["tf.raw"]) {
    const tf = r.raw["tf.raw"]![0]!;
    const sim = column(tf, "v(transfer_function)")[0]!;
    gain = { ...compare(amp.gain, sim), input: inSource, output: outNode };
  }
  const main = devices[0]!;
  const passed = Math.abs(main.id.deviation) <= tolerance;
  if (rec) {
    rec.note(
      `Simulation with ${p.name} (${section})`,
      `ngspice with ${p.library.file}: ${devices.map((d) => `${d.instance} (${d.model}) I_D = ${d.id.sim.toPrecision(5)} A against ${d.id.hand.toPrecision(5)} A by hand (${pct(d.id.deviation)}), g_m ${pct(d.gm.deviation)}, g_ds ${pct(d.gds.deviation)}, ${d.simRegion} in the simulator (|V_DS| = ${d.vds.toFixed(3)} V, V_Dsat = ${d.vdsat.toFixed(3)} V), ${d.handRegion} by hand`).join("; ")}` +
        (gain ? `; gain ${gain.sim.toPrecision(4)} against ${gain.hand.toPrecision(4)} (${pct(gain.deviation)})` : "") +
        `; nodes ${Object.entries(nodes).map(([n, c]) => `${n} ${c.sim.toFixed(4)} V (${(1000 * (c.sim - c.hand)).toFixed(1)} mV)`).join(", ")}.`,
    );
    rec.check(`Simulated drain current within ±${pct(tolerance, 0).replace("+", "")} of the hand value`, main.id.deviation, "fraction", { min: -tolerance, max: tolerance }, `simulated ${main.id.sim.toPrecision(5)} A, hand ${main.id.hand.toPrecision(5)} A`);
    for (const d of devices)
      if (d.simRegion !== d.handRegion) rec.find("warning", `${d.instance}: ${d.handRegion} by hand but ${d.simRegion} in the simulator (|VDS| ${d.vds.toFixed(3)} V, VDsat ${d.vdsat.toFixed(3)} V).`);
    rec.cite(`ngspice with the ${p.name} model library (${p.library.file}, section ${section})`);
  }
  return { process: p.name, section, deck, nodes, devices, ...(gain ? { gain } : {}), tolerance, passed, seconds: r.seconds };
}

const pct = (x: number, digits = 2) => (Number.isFinite(x) ? `${x >= 0 ? "+" : ""}${(100 * x).toFixed(digits)} %` : "n/a");

export interface CorrectionOptions extends VerifyOptions {
  /** The drain current to reach (signed as `op.id`, or its magnitude); default the hand analysis's. */
  readonly target?: number;
  /** What to re-size: "w" (the main device's width, default) or a component name (e.g. "rs", "rref"). */
  readonly adjust?: string;
  /** Relative accuracy to reach; default 0.01. */
  readonly accuracy?: number;
  /** Simulations after the first; default and most 5. */
  readonly maxIterations?: number;
}

export interface CorrectionStep {
  readonly iteration: number;
  readonly value: number;
  readonly simulatedId: number;
  readonly deviation: number;
}

export interface StageCorrection {
  readonly stage: Stage;
  readonly adjust: string;
  readonly target: number;
  readonly steps: readonly CorrectionStep[];
  readonly converged: boolean;
  /** Simulations after the first verification. */
  readonly iterations: number;
  readonly verification: StageVerification;
  readonly why?: string;
}

/** Re-size W or a bias component until the simulated drain current is within `accuracy` of the target. */
export async function correctStage(anyStage: AnyStage, p: ProcessDescription, opts: CorrectionOptions = {}, rec?: Derivation): Promise<StageCorrection> {
  const stage = anyStage as Stage;
  const adjust = opts.adjust ?? "w";
  const accuracy = opts.accuracy ?? 0.01;
  const maxIt = Math.min(opts.maxIterations ?? 5, 5);
  const comps = stage.components as Record<string, number>;
  if (adjust !== "w" && !(typeof comps[adjust] === "number" && comps[adjust]! > 0)) throw new InputError(adjust, `"w" or a positive component of this stage (${Object.keys(comps).join(", ")})`, "correction adjust");
  const get = (s: Stage) => (adjust === "w" ? s.device.w : (s.components as Record<string, number>)[adjust]!);
  const set = (s: Stage, x: number): Stage => (adjust === "w" ? { ...s, device: { ...s.device, w: x as Stage["device"]["w"] } } : { ...s, components: { ...s.components, [adjust]: x } });
  const target = Math.abs(opts.target ?? analyzeStage(stage).op.id);
  if (!(target > 0) || !Number.isFinite(target)) throw new InputError(opts.target, "a non-zero drain current target in A", "correction target");
  const range = adjust === "w" ? p.devices[stage.device.card.polarity].w : { min: 1e-3, max: 1e12 };
  // First guess of d ln ID / d ln x: ID ∝ W, or ∝ 1/R.
  let slope = adjust === "w" ? 1 : -1;
  let cur = stage;
  let v = await verifyStage(cur, p, opts);
  const steps: CorrectionStep[] = [];
  const push = (i: number, s: Stage, ver: StageVerification) => {
    const id = Math.abs(ver.devices[0]!.id.sim);
    steps.push({ iteration: i, value: get(s), simulatedId: id, deviation: id / target - 1 });
    rec?.note(`Correction ${i}: ${adjust} = ${get(s).toPrecision(6)}`, `simulated I_D = ${id.toPrecision(6)} A, ${pct(id / target - 1)} from the target ${target.toPrecision(6)} A.`);
  };
  push(0, cur, v);
  let why: string | undefined;
  let i = 0;
  while (Math.abs(steps[steps.length - 1]!.deviation) > accuracy && i < maxIt) {
    const last = steps[steps.length - 1]!;
    if (steps.length >= 2) {
      const prev = steps[steps.length - 2]!;
      const s = (Math.log(last.simulatedId) - Math.log(prev.simulatedId)) / (Math.log(last.value) - Math.log(prev.value));
      if (Number.isFinite(s) && Math.abs(s) > 1e-3) slope = s;
    }
    let next = last.value * Math.exp((Math.log(target) - Math.log(last.simulatedId)) / slope);
    if (adjust === "w") next = Math.round(next / p.devices[stage.device.card.polarity].grid) * p.devices[stage.device.card.polarity].grid;
    if (next < range.min || next > range.max) {
      why = `${adjust} would have to be ${next.toPrecision(4)}, outside ${range.min}…${range.max}`;
      break;
    }
    i++;
    cur = set(cur, next);
    v = await verifyStage(cur, p, opts);
    push(i, cur, v);
  }
  const converged = Math.abs(steps[steps.length - 1]!.deviation) <= accuracy;
  if (!converged && !why) why = `not within ${pct(accuracy, 0).replace("+", "")} after ${maxIt} simulations (last ${pct(steps[steps.length - 1]!.deviation)}): the drain current hardly depends on ${adjust} here; re-size another component`;
  if (rec) {
    rec.check(`Simulated drain current within ±${pct(accuracy, 0).replace("+", "")} of the target after correction`, steps[steps.length - 1]!.deviation, "fraction", { min: -accuracy, max: accuracy }, `${i} correction simulation(s), ${adjust} = ${get(cur).toPrecision(6)}`);
    if (why) rec.find("warning", `Correction stopped: ${why}.`);
  }
  return { stage: cur, adjust, target, steps, converged, iterations: i, verification: v, ...(why ? { why } : {}) };
}
