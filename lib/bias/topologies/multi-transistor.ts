/**
 * The common path of the multi-transistor stages (differential pairs,
 * cascodes): a topology states its circuit as a netlist (lib/bias/circuit.ts)
 * built from the stage data, the regions it expects, and the figures it reads
 * off; this module validates the devices, solves the netlist, evaluates every
 * device through the public device API, records the assume → verify
 * reasoning, and assembles the StageAnalysis and the SPICE deck from the same
 * netlist, so the deck is the circuit that was solved.
 */
import { device as makeDevice, polaritySign, type Device, type Polarity } from "../../device/card.js";
import type { ClmMode } from "../../device/drain-current.js";
import { InputError } from "../../errors.js";
import type { Amperes, Volts, Watts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import { solveNetlist, smallSignalResponse, netlistSpice, type CircuitSolution, type CompiledNetlist, type Netlist } from "../circuit.js";
import { checkComponents, checkStage } from "../stage.js";
import type { ComponentField, SpiceCircuit, Stage, StageAnalysis, StageCheck, StageDeviceAnalysis, StageMetrics, Topology } from "../topology.js";
import { evaluateDevice, fmt, recordDevice, recordFindings, stageCheck, stageOrigin } from "./two-transistor.js";

/** A device role a topology accepts in `stage.devices`. */
export interface RoleSpec {
  readonly meaning: string;
  readonly required: boolean;
  /** "same" as the main device's polarity, or "opposite". */
  readonly polarity: "same" | "opposite";
}

/** What a topology's builder returns: the netlist and which MOSFET is the main device. */
export interface CircuitBuild {
  readonly net: Netlist;
  /** MOSFET name of the device reported as `op` (its gate, source, drain, body become the stage's nodes). */
  readonly main: string;
  /** Devices assumed saturated, in words, for the assume → verify record. */
  readonly assumeSaturated: readonly string[];
}

export interface Rails {
  readonly vdd: number;
  readonly vss: number;
  /** +1 when the main device is an NMOS, −1 for a PMOS: multiplies absolute volts into its polarity. */
  readonly sign: 1 | -1;
  /** Held node names of the drain-side and source-side rails for the main device. */
  readonly drail: "vdd" | "vss";
  readonly srail: "vdd" | "vss";
  /** Their voltages in device polarity. */
  readonly vdr: number;
  readonly vsr: number;
}

/** The solved circuit as a topology's figures see it. */
export interface Solved {
  readonly stage: Stage;
  readonly rails: Rails;
  readonly sol: CircuitSolution & { readonly compiled: CompiledNetlist };
  readonly devices: Readonly<Record<string, StageDeviceAnalysis>>;
  readonly origin: string;
  /** Node voltage change for unit changes of held nodes or unit current injections. */
  response(drive: Readonly<Record<string, number>>, inject?: Readonly<Record<string, number>>): Record<string, number>;
}

export interface Figures<X> {
  readonly metrics: StageMetrics;
  readonly findings: readonly string[];
  readonly extra: X;
}

export interface CircuitTopologySpec<Id extends string, C, X> {
  readonly id: Id;
  readonly title: string;
  readonly description: string;
  readonly components: readonly ComponentField[];
  readonly roles: Readonly<Record<string, RoleSpec>>;
  /** Validate the components beyond their dimensions and build the netlist. */
  build(stage: Stage<Id, C>, c: C, main: Device, devs: Readonly<Record<string, Device>>, rails: Rails, clm: ClmMode, origin: string): CircuitBuild;
  /** The figures a designer reads off, recorded when `rec` is given. */
  figures(s: Solved, c: C, rec?: Derivation): Figures<X>;
}

export function railsOf(stage: Stage<string, unknown>, polarity: Polarity): Rails {
  const vdd = stage.supplies.vdd;
  const vss = stage.supplies.vss ?? 0;
  const sign = polarity === "nmos" ? 1 : -1;
  return sign > 0 ? { vdd, vss, sign, drail: "vdd", srail: "vss", vdr: vdd, vsr: vss } : { vdd, vss, sign, drail: "vss", srail: "vdd", vdr: -vss, vsr: -vdd };
}

/** The devices under `stage.devices`, validated against the roles: unknown roles, missing required ones and wrong polarities are InputErrors. */
export function roleDevices(stage: Stage<string, unknown>, main: Device, roles: Readonly<Record<string, RoleSpec>>): Record<string, Device> {
  const o = stageOrigin(stage);
  const given = (stage.devices ?? {}) as Record<string, Stage["device"] | undefined>;
  if (typeof given !== "object") throw new InputError(given, "devices: an object keyed by role", `${o}: devices`, "invalid-design");
  for (const key of Object.keys(given))
    if (!(key in roles)) throw new InputError(key, `a device role of the ${stage.topology} topology (${Object.keys(roles).join(", ")})`, `${o}: devices.${key}`, "invalid-design");
  const out: Record<string, Device> = {};
  for (const [role, spec] of Object.entries(roles)) {
    const d = given[role];
    if (d === undefined) {
      if (spec.required) throw new InputError(d, `${spec.meaning} { card, w, l }`, `${o}: devices.${role}`, "invalid-design");
      continue;
    }
    if (!d || typeof d !== "object") throw new InputError(d, `${spec.meaning} { card, w, l }`, `${o}: devices.${role}`, "invalid-design");
    const dev = makeDevice(d.card, d.w, d.l, `${o}: devices.${role}`);
    const want = spec.polarity === "same" ? main.card.polarity : main.card.polarity === "nmos" ? "pmos" : "nmos";
    if (dev.card.polarity !== want) throw new InputError(dev.card.polarity, `"${want}" for ${spec.meaning}`, `${o}: devices.${role}.card.polarity`);
    out[role] = dev;
  }
  return out;
}

/** An absolute node voltage that must lie within the rails. */
export function requireWithinRails(x: number, rails: Rails, at: string, what: string): void {
  if (!(x >= rails.vss && x <= rails.vdd)) throw new InputError(x, `${what} from VSS = ${rails.vss} V to VDD = ${rails.vdd} V`, at);
}

/** Current delivered by the ideal source holding node `held` (out of its + terminal into the circuit). */
function heldSourceCurrent(c: CompiledNetlist, sol: CircuitSolution, held: string): number {
  let i = 0;
  const net = c.net;
  const v = sol.nodes;
  for (const r of net.resistors) {
    if (r.a === held) i += (v[r.a]! - v[r.b]!) / r.r;
    if (r.b === held) i += (v[r.b]! - v[r.a]!) / r.r;
  }
  for (const s of net.sources) {
    if (s.from === held) i += s.i;
    if (s.to === held) i -= s.i;
  }
  for (const m of net.mosfets) {
    const id = sol.drain[m.name]!;
    if (m.d === held) i += id;
    if (m.s === held) i -= id;
  }
  return i;
}

export function analyzeCircuit<Id extends string, C, X>(spec: CircuitTopologySpec<Id, C, X>, stage: Stage<Id, C>, rec?: Derivation): StageAnalysis & X {
  const plain = stage as unknown as Stage;
  const main = checkStage(plain);
  const o = stageOrigin(plain);
  const c = checkComponents(spec, stage);
  const devs = roleDevices(plain, main, spec.roles);
  const rails = railsOf(plain, main.card.polarity);
  const clm: ClmMode = stage.options?.clm ?? "continuous";
  const build = spec.build(stage, c, main, devs, rails, clm, o);
  const net = build.net;
  if (rec) {
    rec.describe(`${spec.title} (${main.card.polarity.toUpperCase()} input)`);
    rec.input("VDD", rails.vdd, "voltage", "supplies.vdd");
    rec.input("VSS", rails.vss, "voltage", "supplies.vss");
    for (const f of spec.components) {
      const x = (c as Record<string, number | undefined>)[f.name];
      if (x !== undefined) rec.input(f.name, x, f.dim, `components.${f.name}`);
    }
    for (const m of net.mosfets) recordDevice(rec, `M${m.name}`, m.device, m.role);
    rec.assume(`${build.assumeSaturated.join(", ")} saturated (to be verified at the solved node voltages).`);
  }
  const sol = solveNetlist(net);
  rec?.note(
    "Node voltages by nodal analysis",
    `Kirchhoff's current law at ${net.unknown.join(", ")}, with every device's current from the device model, solved by a damped Newton iteration (${sol.method}, ${sol.iterations} iterations); largest remaining residual ${sol.residual.toExponential(2)} A. The solution holds in every region, so the assumption is checked rather than imposed: ${net.unknown.map((n) => `V(${n}) = ${fmt(sol.nodes[n]!)} V`).join(", ")}.`,
  );
  const devices: Record<string, StageDeviceAnalysis> = {};
  let transistorPower = 0;
  const power: Record<string, number> = {};
  for (const m of net.mosfets) {
    const v = sol.nodes;
    const p = Math.abs(sol.drain[m.name]! * (v[m.d]! - v[m.s]!));
    const e = evaluateDevice(m.device, { gate: v[m.g]!, source: v[m.s]!, drain: v[m.d]!, body: v[m.b]! }, clm, p, `M${m.name} (${m.role})`, rec);
    devices[`M${m.name}`] = e.analysis;
    power[`M${m.name}`] = p;
    transistorPower += p;
  }
  for (const r of net.resistors) {
    const i = sol.branch[r.name]!;
    power[`R${r.name}`] = i * i * r.r;
  }
  for (const s of net.sources) power[`I${s.name}`] = s.i * (sol.nodes[s.from]! - sol.nodes[s.to]!);
  const checks: StageCheck[] = [];
  const findings: string[] = [];
  for (const m of net.mosfets) {
    const d = devices[`M${m.name}`]!;
    const want = build.assumeSaturated.includes(`M${m.name}`);
    if (want) checks.push(stageCheck(`M${m.name} (${m.role}) saturated: VDS − VOV`, d.op.saturationMargin, "voltage", { min: stage.limits?.minSaturationMargin ?? 0 }, rec, d.op.reason));
    if (want && d.region !== "saturation") findings.push(`M${m.name} (${m.role}) is in ${d.region}, not saturation as assumed: ${d.op.reason}`);
  }
  for (const n of sol.floating)
    findings.push(`Node ${n} floats: every device on it is off and no current flows through it, so its voltage (${fmt(sol.nodes[n]!)} V here) is not set by the circuit; a simulator places it by its leakage and gmin.`);
  const solved: Solved = {
    stage: plain,
    rails,
    sol,
    devices,
    origin: o,
    response: (drive, inject) => smallSignalResponse(sol.compiled, drive, inject),
  };
  const fig = spec.figures(solved, c, rec);
  findings.push(...fig.findings);
  findings.push("Hand analysis with the square law is approximate: verify by simulation and measurement, and respect the device ratings.");
  recordFindings(findings, rec);
  const m = net.mosfets.find((x) => x.name === build.main)!;
  const md = devices[`M${m.name}`]!;
  const supply = heldSourceCurrent(sol.compiled, sol, "vdd");
  // drainMagnitude is the name every reader of StageAnalysis.currents uses (summary, tolerance, checks).
  const currents: Record<string, number> = { drain: Math.abs(sol.drain[m.name]!), drainMagnitude: Math.abs(sol.drain[m.name]!), supply: Math.abs(supply) };
  for (const r of net.resistors) currents[`R${r.name}`] = Math.abs(sol.branch[r.name]!);
  for (const x of net.mosfets) currents[`M${x.name}`] = Math.abs(sol.drain[x.name]!);
  const total = Object.values(power).reduce((a, b) => a + b, 0);
  const limits = stage.limits ?? {};
  if (limits.maxDevicePower !== undefined) for (const x of net.mosfets) checks.push(stageCheck(`M${x.name} dissipation`, power[`M${x.name}`]!, "power", { max: limits.maxDevicePower }, rec));
  if (limits.maxTotalPower !== undefined) checks.push(stageCheck("Total supply power", total, "power", { max: limits.maxTotalPower }, rec));
  const { [`M${m.name}`]: _main, ...others } = devices;
  const nodes: Record<string, number> = { ...sol.nodes, gate: sol.nodes[m.g]!, source: sol.nodes[m.s]!, drain: sol.nodes[m.d]!, body: sol.nodes[m.b]!, vdd: rails.vdd, vss: rails.vss };
  delete nodes["0"];
  return {
    topology: spec.id,
    ...(stage.name ? { name: stage.name } : {}),
    polarity: main.card.polarity,
    region: md.region,
    nodes: nodes as StageAnalysis["nodes"],
    currents: currents as StageAnalysis["currents"],
    op: md.op,
    smallSignal: md.smallSignal,
    metrics: { amplifiers: fig.metrics.amplifiers, swing: fig.metrics.swing, checks: [...checks, ...fig.metrics.checks] },
    power: { components: power as Record<string, Watts>, transistor: transistorPower as Watts, total: total as Watts },
    solver: { method: sol.method, iterations: sol.iterations, tolerance: 1e-12, unknown: "node voltages" },
    findings,
    devices: others,
    ...fig.extra,
  };
}

/** The SPICE circuit of the netlist the stage solves. */
export function circuitSpice<Id extends string, C, X>(spec: CircuitTopologySpec<Id, C, X>, stage: Stage<Id, C>, prefix = ""): SpiceCircuit & { readonly net: Netlist } {
  const plain = stage as unknown as Stage;
  const main = checkStage(plain);
  const o = stageOrigin(plain);
  const c = checkComponents(spec, stage);
  const devs = roleDevices(plain, main, spec.roles);
  const rails = railsOf(plain, main.card.polarity);
  const build = spec.build(stage, c, main, devs, rails, stage.options?.clm ?? "continuous", o);
  const { lines, node, instance, ammeter } = netlistSpice(build.net, prefix);
  const m = build.net.mosfets.find((x) => x.name === build.main)!;
  const nodes: Record<string, string> = { gate: node(m.g), source: node(m.s), drain: node(m.d), body: node(m.b) };
  for (const n of [...build.net.unknown, ...Object.keys(build.net.fixed)]) nodes[n] = node(n);
  const instances: Record<string, string> = {};
  const ammeters: Record<string, string> = {};
  for (const x of build.net.mosfets) {
    instances[`M${x.name}`] = instance(x.name);
    ammeters[`M${x.name}`] = ammeter(x.name);
  }
  return { lines, nodes, drainAmmeter: ammeter(m.name), instance: instance(m.name), instances, ammeters, net: build.net };
}

export function circuitTopology<Id extends string, C, X>(spec: CircuitTopologySpec<Id, C, X>): Topology<Id, C> {
  return {
    id: spec.id,
    title: spec.title,
    description: spec.description,
    components: spec.components,
    analyze: (stage, rec) => analyzeCircuit(spec, stage, rec),
    spice: (stage, prefix) => circuitSpice(spec, stage, prefix),
  };
}

export const polarityOf = (d: Device): 1 | -1 => polaritySign(d.card);
export type { Amperes, Volts };
