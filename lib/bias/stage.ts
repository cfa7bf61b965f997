/**
 * Single-transistor stages: the shared path from a stage (JSON data) to its
 * analysis. A topology module states how its components map onto the
 * canonical network of solve.ts and which small-signal views apply; this
 * module validates the input, solves, and assembles nodes, currents, power,
 * small-signal parameters and metrics, recording each step when asked.
 */
import { device as makeDevice, polaritySign, defaultPhi, modelOf, type Device } from "../device/card.js";
import { models } from "../device/models/index.js";
import type { ClmMode, OperatingPoint } from "../device/drain-current.js";
import { inversion, inversionFinding, type InversionOptions } from "../device/inversion.js";
import { smallSignal } from "../device/small-signal.js";
import { InfeasibleError, InputError, requireFinite, requireNonNegative, requirePositive } from "../errors.js";
import * as bf from "../formulas/bias.formulas.js";
import type { Amperes, Ohms, Volts, Watts } from "../quantity.js";
import { solverCheckPrefix, type Derivation } from "../record/derivation.js";
import { newSolution, solveNetwork, type BiasNetwork, type NetworkSolution } from "./solve.js";
import {
  bodyTies,
  type AmplifierMetrics,
  type ComponentField,
  type SpiceCircuit,
  type Stage,
  type StageAnalysis,
  type StageCheck,
  type StageLimits,
  type StageSmallSignal,
  type SwingLimits,
  type Topology,
} from "./topology.js";
import { stageSpice } from "./spice.js";
import { stageMetrics } from "./metrics.js";

/** How a topology's components map onto the canonical network (values in absolute volts / SI). */
export interface NetworkMapping {
  /** Gate voltage (absolute), when the gate is held; omitted when tied to the drain. */
  readonly vg?: number;
  readonly gateToDrain?: boolean;
  readonly rd: number;
  readonly rs: number;
  readonly iss?: number;
  /** Gate divider, for currents, power and input resistance. */
  readonly divider?: { readonly rg1: number; readonly rg2: number };
}

/** Everything the metrics and SPICE code need about a solved single-transistor stage. */
export interface SolvedStage {
  readonly stage: Stage;
  readonly device: Device;
  readonly sign: 1 | -1;
  readonly net: BiasNetwork;
  readonly sol: NetworkSolution;
  readonly map: NetworkMapping;
  readonly ss: StageSmallSignal;
  /** gmb where the body sees the signal (0 with the body at the source). */
  readonly gmbEff: number;
  /** VDS and VOV in device polarity. */
  readonly vds: number;
  readonly vov: number;
}

export interface SingleTransistorSpec<Id extends string, C> {
  readonly id: Id;
  readonly title: string;
  readonly description: string;
  readonly components: readonly ComponentField[];
  /** Map validated components onto the network; record the gate bias when `rec` is given. */
  map(c: C, stage: Stage<Id, C>, rec?: Derivation): NetworkMapping;
  /** Small-signal views at the operating point. */
  amplifiers(s: SolvedStage, rec?: Derivation): AmplifierMetrics[];
  /** Output swing limits. */
  swing(s: SolvedStage, rec?: Derivation): SwingLimits[];
}

/** Define a single-transistor topology from its spec; registered by the caller. */
export function singleTransistorTopology<Id extends string, C>(spec: SingleTransistorSpec<Id, C>): Topology<Id, C> {
  return {
    id: spec.id,
    title: spec.title,
    description: spec.description,
    components: spec.components,
    analyze: (stage, rec) => analyzeSingle(spec, stage, rec),
    spice: (stage, prefix): SpiceCircuit => stageSpice(stage as Stage, spec.map(checkComponents(spec, stage), stage), prefix),
  };
}

const origin = (stage: Stage) => (stage.name ? `stage "${stage.name}"` : `${stage.topology} stage`);

/** Validate the fields every stage has; returns the device. */
export function checkStage(stage: Stage): Device {
  if (!stage || typeof stage !== "object") throw new InputError(stage, "a stage object", "stage", "invalid-design");
  const o = origin(stage);
  if (!stage.device || typeof stage.device !== "object") throw new InputError(stage.device, "a device { card, w, l }", `${o}: device`, "invalid-design");
  const dev = makeDevice(stage.device.card, stage.device.w, stage.device.l, `${o}: device`);
  if (!stage.supplies || typeof stage.supplies !== "object") throw new InputError(stage.supplies, "supplies { vdd, vss? }", `${o}: supplies`, "invalid-design");
  const vdd = requireFinite(stage.supplies.vdd, `${o}: supplies.vdd`, "a finite supply voltage in V");
  const vss = requireFinite(stage.supplies.vss ?? 0, `${o}: supplies.vss`, "a finite supply voltage in V (0 V when omitted)");
  if (!(vdd > vss)) throw new InfeasibleError(`supplies.vdd = ${vdd} V must be above supplies.vss = ${vss} V`, o);
  if (stage.body !== undefined && !bodyTies.includes(stage.body)) throw new InputError(stage.body, `"source" or "rail"`, `${o}: body`, "invalid-design");
  checkLimits(stage.limits, o);
  const clm = stage.options?.clm;
  if (clm !== undefined && clm !== "continuous" && clm !== "saturation-only")
    throw new InputError(clm, `"continuous" or "saturation-only"`, `${o}: options.clm`, "invalid-design");
  return dev;
}

/** Each limit's range: power limits > 0, margins and headroom ≥ 0. */
const limitRanges: Readonly<Record<keyof StageLimits, { positive: boolean; what: string }>> = {
  maxDevicePower: { positive: true, what: "a transistor power limit > 0 in W" },
  maxTotalPower: { positive: true, what: "a total power limit > 0 in W" },
  minSaturationMargin: { positive: false, what: "a saturation margin ≥ 0 in V" },
  minOverdrive: { positive: false, what: "an overdrive ≥ 0 in V" },
  minSourceHeadroom: { positive: false, what: "a current-source headroom ≥ 0 in V" },
};

/** Validate a stage's limits: known names, numbers in range (a negative power limit cannot be met by any design). */
export function checkLimits(limits: StageLimits | undefined, o: string): void {
  if (limits === undefined) return;
  if (!limits || typeof limits !== "object") throw new InputError(limits, "limits { maxDevicePower?, maxTotalPower?, minSaturationMargin?, minOverdrive?, minSourceHeadroom? }", `${o}: limits`, "invalid-design");
  for (const [key, v] of Object.entries(limits)) {
    const r = limitRanges[key as keyof StageLimits];
    if (!r) throw new InputError(key, `a limit name (${Object.keys(limitRanges).join(", ")})`, `${o}: limits.${key}`, "invalid-design");
    if (v === undefined) continue;
    if (r.positive) requirePositive(v as number, `${o}: limits.${key}`, r.what);
    else requireNonNegative(v as number, `${o}: limits.${key}`, r.what);
  }
}

/** Check the component record against the topology's fields: known names, required present, finite, resistors ≥ 0. */
export function checkComponents<C>(spec: { id: string; components: readonly ComponentField[] }, stage: Stage<string, C>): C {
  const o = origin(stage as Stage);
  const c = stage.components as unknown as Record<string, unknown>;
  if (!c || typeof c !== "object") throw new InputError(c, "a components object", `${o}: components`, "invalid-design");
  const known = new Set(spec.components.map((f) => f.name));
  for (const key of Object.keys(c))
    if (!known.has(key)) throw new InputError(key, `a component of the ${spec.id} topology (${[...known].join(", ")})`, `${o}: components.${key}`, "invalid-design");
  for (const f of spec.components) {
    const v = c[f.name];
    const at = `${o}: components.${f.name}`;
    if (v === undefined) {
      if (f.required) throw new InputError(v, `${f.meaning} (${f.dim})`, at, "invalid-design");
      continue;
    }
    if (typeof v !== "number" || !Number.isFinite(v)) throw new InputError(v, `a finite ${f.dim} in SI units (${f.meaning})`, at);
    if (f.dim === "resistance" && v < 0) throw new InputError(v, `a resistance ≥ 0 Ω (${f.meaning})`, at);
    if (f.dim === "current" && v <= 0) throw new InputError(v, `a current > 0 A (${f.meaning})`, at);
  }
  return stage.components;
}

function analyzeSingle<Id extends string, C>(spec: SingleTransistorSpec<Id, C>, stage: Stage<Id, C>, rec?: Derivation): StageAnalysis {
  const dev = checkStage(stage as Stage);
  if (stage.devices !== undefined)
    throw new InputError(Object.keys(stage.devices ?? {}), `no devices: the ${spec.id} topology has one transistor, given by device (devices holds the further transistors of current-mirror and diode-load)`, `${origin(stage as Stage)}: devices`, "invalid-design");
  const comps = checkComponents(spec, stage);
  const o = origin(stage as Stage);
  const card = dev.card;
  const s = polaritySign(card);
  const pmos = s < 0;
  const vdd = stage.supplies.vdd;
  const vss = (stage.supplies.vss ?? 0) as Volts;
  const bodyToRail = stage.body === "rail";
  const clm: ClmMode = stage.options?.clm ?? "continuous";
  if (rec) {
    rec.input("VDD", vdd, "voltage", `${o}: supplies.vdd`);
    rec.input("VSS", vss, "voltage", `${o}: supplies.vss`);
    for (const f of spec.components) {
      const v = (comps as Record<string, number>)[f.name];
      if (v !== undefined) rec.input(f.name.toUpperCase(), v, f.dim, `${o}: components.${f.name}`);
    }
    rec.input("W", dev.w, "length", `${o}: device.w`);
    rec.input("L", dev.l, "length", `${o}: device.l`);
    rec.input("KP", card.kp, "transconductanceParameter", `card ${card.name}`);
    rec.input("VTO", card.vt0, "voltage", `card ${card.name}`);
    rec.input("LAMBDA", card.lambda ?? 0, "inverseVoltage", `card ${card.name}`);
    rec.input("GAMMA", card.gamma ?? 0, "sqrtVoltage", `card ${card.name}`);
    rec.input("PHI", card.phi ?? defaultPhi, "voltage", `card ${card.name}`);
    rec.assume("No DC gate current (insulated gate).");
    const model = modelOf(card);
    if (model === "square-law") rec.assume(`Square law (SPICE Level 1), channel-length modulation ${clm === "continuous" ? "applied in triode and saturation" : "applied in saturation only"}.`);
    else {
      rec.assume(`Device model: ${models[model].title} (${models[model].source}).`);
      if (card.theta !== undefined) rec.input("THETA", card.theta, "inverseVoltage", `card ${card.name}`);
      if (card.ecrit !== undefined) rec.input("ESAT", card.ecrit, "electricField", `card ${card.name}`);
      if (card.thetaB !== undefined) rec.input("THETAB", card.thetaB, "inverseVoltage", `card ${card.name}`);
      if (card.sigma !== undefined) rec.input("SIGMA", card.sigma, "dimensionless", `card ${card.name}`);
      if (card.cit !== undefined) rec.input("CIT/COX", card.cit, "dimensionless", `card ${card.name}`);
    }
    rec.assume(bodyToRail ? `Body tied to the ${pmos ? "upper (VDD)" : "lower (VSS)"} rail: the body effect applies when the source is off that rail.` : "Body tied to the source: VSB = 0, no body effect.");
    if (pmos)
      rec.note("Sign convention (PMOS)", pmosConvention);
  }
  const map = spec.map(comps, stage, rec);
  if (pmos && rec && map.vg !== undefined)
    rec.note("Gate in device polarity", `Mirrored for the PMOS equations: VG = −(${fmtV(map.vg)}) = ${fmtV(-map.vg)} (VDR = −VSS = ${fmtV(-vss)}, VSR = −VDD = ${fmtV(-vdd)}).`);
  const net: BiasNetwork = {
    k: (card.kp * dev.w) / dev.l,
    vt0: s * card.vt0,
    gamma: card.gamma ?? 0,
    phi: card.phi ?? defaultPhi,
    lambda: card.lambda ?? 0,
    clm,
    vdr: pmos ? -vss : vdd,
    vsr: pmos ? -vdd : vss,
    gateToDrain: map.gateToDrain ?? false,
    vg: map.vg === undefined ? 0 : s * map.vg,
    rd: map.rd,
    rs: map.rs,
    iss: map.iss ?? 0,
    bodyToRail,
    ...(modelOf(card) === "square-law" ? {} : { device: dev }),
  };
  const depletion = depletionFinding(card);
  if (depletion) rec?.find("caution", depletion);
  const sol = solveNetwork(net, newSolution(), o, rec);
  if (rec && (sol.method === "bracketed-newton" || sol.method === "bracketed-regula-falsi") && net.iss <= 0) {
    rec.step(bf.sourceNode, [net.vsr, sol.id, net.rs], sol.vs, "at the solved drain current");
    rec.step(bf.drainNode, [net.vdr, sol.id, net.rd], sol.vd);
  }
  // Absolute node voltages.
  const vG = (s * sol.vg) as Volts;
  const vS = (s * sol.vs) as Volts;
  const vD = (s * sol.vd) as Volts;
  const vB = (bodyToRail ? s * net.vsr : vS) as Volts;
  if (pmos) rec?.note("Node voltages to ground", `Mirrored back: VG = ${fmtV(vG)}, VS = ${fmtV(vS)}, VD = ${fmtV(vD)}; the device sees VSG = ${fmtV(vS - vG)} and VSD = ${fmtV(vS - vD)}.`);
  rec?.note("Device at the solved node voltages", "The operating point of the transistor at these terminal voltages, region and current from the device model:");
  const small = smallSignal(dev, { vgs: (vG - vS) as Volts, vds: (vD - vS) as Volts, vsb: (vS - vB) as Volts }, { clm }, rec);
  const op = small.op;
  const idNet = sol.id;
  const ss: StageSmallSignal = { gm: small.gm, gmb: small.gmb, gds: small.gds, ro: small.ro };
  const gmbEff = bodyToRail ? small.gmb : 0;
  const solved: SolvedStage = {
    stage: stage as Stage,
    device: dev,
    sign: s,
    net,
    sol,
    map,
    ss,
    gmbEff,
    vds: sol.vd - sol.vs,
    vov: op.vov,
  };
  // Currents and power.
  const currents: Record<string, Amperes> = { drainMagnitude: idNet as Amperes };
  const power: Record<string, Watts> = {};
  const c = comps as Record<string, number | undefined>;
  const resistorPower = (name: string, i: number, r: number) => {
    currents[name] = i as Amperes;
    const p = bf.resistorPower.fn(i as Amperes, r as Ohms);
    power[name] = p;
    rec?.step(bf.resistorPower, [i, r], p, `dissipation in ${name.toUpperCase()}`);
  };
  if (c.rd !== undefined) resistorPower("rd", idNet, map.rd);
  if (c.rs !== undefined) resistorPower("rs", idNet, map.rs);
  let dividerCurrent = 0;
  if (map.divider) {
    const { rg1, rg2 } = map.divider;
    dividerCurrent = (vdd - vss) / (rg1 + rg2);
    resistorPower("rg1", dividerCurrent, rg1);
    resistorPower("rg2", dividerCurrent, rg2);
  }
  if (c.rf !== undefined) {
    currents.rf = 0 as Amperes;
    power.rf = 0 as Watts;
  }
  if (net.iss > 0) {
    const across = sol.vs - net.vsr;
    const p = bf.sourcePower.fn(net.iss as Amperes, across as Volts);
    power.iss = p;
    currents.iss = net.iss as Amperes;
    rec?.step(bf.sourcePower, [net.iss, across], p, "power absorbed by the ideal current source (negative: it delivers power)");
  }
  const pDev = bf.devicePower.fn(idNet as Amperes, solved.vds as Volts);
  rec?.step(bf.devicePower, [idNet, solved.vds], pDev, "transistor dissipation");
  const supply = (idNet + dividerCurrent) as Amperes;
  const total = (Object.values(power).reduce((a, p) => a + p, 0) + pDev) as Watts;
  const amplifiers = op.region === "cutoff" ? [] : spec.amplifiers(solved, rec);
  if (op.region === "cutoff") rec?.note("Small-signal gain", "The device is in cutoff: there is no transconductance and no gain.");
  const swing = op.region === "cutoff" ? [] : spec.swing(solved, rec);
  const metrics = stageMetrics(solved, pDev, total, rec);
  // solveNetwork verified KCL and the region conditions (verify.ts); the record shows the residual it found, after the design checks.
  rec?.check(`${solverCheckPrefix}device current equals network current (KCL)`, sol.kcl, "current", { max: sol.kclTolerance }, "residual of the solved operating point; tolerance 1e-9·I + G·δV (verify.ts)");
  const checks = metrics.checks;
  const findings = depletion ? [depletion, ...metrics.findings] : metrics.findings;
  // The inversion-level finding the record carries (operatingPoint records it), in the analysis findings too.
  const inv = stageInversionFinding(op, stage.options);
  if (inv) findings.splice(findings.length - 1, 0, inv);
  return {
    topology: stage.topology,
    ...(stage.name ? { name: stage.name } : {}),
    polarity: card.polarity,
    region: op.region,
    nodes: { gate: vG, source: vS, drain: vD, body: vB, vdd, vss },
    currents: { ...currents, drainMagnitude: idNet as Amperes, supply },
    op,
    smallSignal: ss,
    metrics: { amplifiers, swing, checks: checks as StageCheck[] },
    power: { components: power, transistor: pDev, total },
    solver: { method: sol.method, iterations: sol.iterations, tolerance: sol.tolerance, unknown: sol.method === "direct" ? "none" : net.iss > 0 ? "source voltage" : "drain current" },
    findings,
  };
}

/**
 * A card whose threshold has the other sign from an enhancement device of its
 * polarity (NMOS vt0 ≤ 0, PMOS vt0 ≥ 0) describes a depletion-mode device: it
 * conducts at VGS = 0. The square law holds for it unchanged; say so.
 */
export function depletionFinding(card: { readonly polarity: string; readonly vt0: number; readonly name?: string }): string | undefined {
  const s = card.polarity === "nmos" ? 1 : -1;
  if (s * card.vt0 > 0) return undefined;
  const sign = card.polarity === "nmos" ? "VTO ≤ 0 for an NMOS" : "VTO ≥ 0 for a PMOS";
  return `Depletion-mode device: card ${card.name ? `"${card.name}" ` : ""}has VTO = ${card.vt0} V (${sign}), so it conducts with VGS = 0. The square-law equations still hold; check that a depletion device is what was meant (an enhancement ${card.polarity === "nmos" ? "NMOS has VTO > 0" : "PMOS has VTO < 0"}).`;
}

/** The inversion-level finding at an operating point (none in strong inversion or cutoff), worded as the record words it. */
export function stageInversionFinding(op: OperatingPoint, opts: InversionOptions | undefined): string | undefined {
  if (op.region === "cutoff") return undefined;
  const forward = (op.k / 2) * op.vov * op.vov;
  if (!Number.isFinite(forward)) return undefined;
  return inversionFinding(inversion(forward as Amperes, op.k, opts ?? {}))?.text;
}

const fmtV = (x: number) => `${+x.toPrecision(6)} V`;

/** The one sign convention every PMOS record states at its top (analysis and synthesis alike). */
export const pmosConvention =
  "Inputs, targets and the node voltages reported at the end are node voltages to ground. The equations in between are in the device's own polarity: every node voltage is mirrored (V → −V), so VG, VS, VD, VDR and VSR there are mirrored node voltages (VDR = −VSS, VSR = −VDD) and VGS, VDS, Vt stand for VSG, VSD, |Vt|; the drain rail is then the more positive one. Checks and margins are in the device's polarity (VSG − |Vt|, VSD − VOV).";
