/**
 * Frequency response and compensation of the two-stage Miller amplifier
 * (`two-stage-miller`), driven differentially (in1 = +vid/2, in2 = −vid/2
 * around the common mode, ideal sources) with a load capacitance CL.
 *
 * Method (catalog formulas, lib/formulas/two-stage.catalog.ts and
 * frequency.catalog.ts): two high-resistance nodes, node 1 (R1 = ro2 ∥ ro4,
 * C1) and the output (R2 = ro6 ∥ ro7, C2 with CL), bridged by Cc' = Cc + Cgd6.
 * Pole splitting gives the dominant pole 1/(2π·gm6·R1·R2·Cc'), GBW =
 * gm1/(2π·Cc'), the second pole gm6·Cc'/(2π·(C1·C2 + Cc'·(C1 + C2))) and the
 * Miller zero 1/(2π·Cc'·(1/gm6 − Rz)) (right half plane for Rz < 1/gm6); a
 * nulling resistor adds the pole 1/(2π·Rz·C1); the first stage's mirror adds
 * its pole and the left-half-plane zero at twice it. The unity-gain frequency
 * is the crossing of 1 by the product of these factors (bisection), the phase
 * margin the catalog's sum of their phases there.
 * Conditions (checked in the record): every device of the signal path
 * saturated; fp2 ≥ 2·GBW, fm ≥ 10·GBW, fp2 ≥ 10·fp1 (`twoStageConditions`,
 * common practice; a right-half-plane zero ≥ 10·GBW is checked as design
 * advice, the zero being in the model exactly). Where they
 * hold, ngspice's `.ac` agrees within 10 % in fu and 3° in phase margin
 * (test/two-stage-ngspice.test.ts).
 * Compensation design: Cc for a target phase margin by bisection on the same
 * hand model (the phase margin grows with Cc; a target above what an
 * unbounded Cc reaches is an InfeasibleError), Rz = 1/gm6 (zero moved to
 * infinity) or Rz placing the zero on the second pole; the rule of thumb
 * Cc ≥ 0.22·CL is recorded beside it. Not on a hot path; allocates its result.
 */
import { deviceCapacitances, evaluateFormula, hasCapacitanceData, missingCapacitanceHelp } from "../device/capacitance.js";
import { InfeasibleError, InputError } from "../errors.js";
import * as ff from "../formulas/frequency.formulas.js";
import * as tf from "../formulas/two-stage.formulas.js";
import type { Farads, Hertz, Ohms, Ratio } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { frequencyRecordNote, twoKnownPoles, type FrequencyAnalysis, type FrequencySpec } from "./frequency.js";
import { stageCheck } from "./metrics.js";
import type { Stage, StageAnalysis, StageCheck } from "./topology.js";
import type { TwoStageFigures } from "./topologies/two-stage.js";

/** How the nulling resistor is chosen when it is not given. */
export type NullingRule = "none" | "cancel-zero" | "cancel-pole";

/** The `frequency.compensation` section: a Miller capacitor, or a target phase margin to design it for, and the nulling resistor or its rule. */
export interface CompensationSpec {
  readonly cc?: Farads;
  readonly rz?: Ohms;
  /** Target phase margin in degrees (0 < φ < 90), in unity-gain feedback. */
  readonly targetPhaseMargin?: number;
  readonly nulling?: NullingRule;
}

export interface TwoStageFrequency {
  readonly cc: Farads;
  readonly rz: Ohms;
  /** Whether Cc was designed for the target phase margin, and Rz by the nulling rule. */
  readonly ccDesigned: boolean;
  readonly rzDesigned: boolean;
  /** 0.22·CL, the rule of thumb for about 60°. */
  readonly ccRuleOfThumb: Farads;
  readonly r1: Ohms;
  readonly r2: Ohms;
  readonly c1: Farads;
  readonly c2: Farads;
  readonly gainBandwidth: Hertz;
  readonly dominantPole: Hertz;
  readonly secondPole: Hertz;
  /** Miller zero: positive in the right half plane, negative in the left, Infinity when cancelled. */
  readonly zero: Hertz;
  /** Pole of the nulling resistor (Infinity without one). */
  readonly nullingPole: Hertz;
  readonly mirrorPole: Hertz;
  readonly mirrorZero: Hertz;
  /** DC gain magnitude the response starts from (nodal analysis). */
  readonly dcGain: number;
  readonly unityGain?: Hertz;
  readonly phaseMargin?: number;
  /** Whether the analysis's conditions hold (p2 ≥ 2·GBW, fm ≥ 10·GBW, fp2 ≥ 10·fp1); the zero's place is checked as advice. */
  readonly conditionsHold: boolean;
}

/** Stated conditions of the hand analysis (common practice). */
export const twoStageConditions = { secondPoleOverGbw: 2, mirrorPoleOverGbw: 10, zeroOverGbw: 10, poleSeparation: 10 } as const;

const rad = 180 / Math.PI;

/** Validate a compensation section. */
export function checkCompensation(c: CompensationSpec, o: string): CompensationSpec {
  if (!c || typeof c !== "object" || Array.isArray(c)) throw new InputError(c, "a compensation section { cc?, rz?, targetPhaseMargin?, nulling? }", o, "invalid-design");
  if (c.cc !== undefined && (typeof c.cc !== "number" || !(c.cc > 0) || !Number.isFinite(c.cc))) throw new InputError(c.cc, "a Miller capacitor Cc > 0 F", `${o}.cc`);
  if (c.rz !== undefined && (typeof c.rz !== "number" || !(c.rz >= 0) || !Number.isFinite(c.rz))) throw new InputError(c.rz, "a nulling resistor Rz ≥ 0 Ω", `${o}.rz`);
  if (c.targetPhaseMargin !== undefined && (typeof c.targetPhaseMargin !== "number" || !(c.targetPhaseMargin > 0 && c.targetPhaseMargin < 90)))
    throw new InputError(c.targetPhaseMargin, "a target phase margin between 0° and 90° (degrees, a plain number)", `${o}.targetPhaseMargin`);
  if (c.nulling !== undefined && !["none", "cancel-zero", "cancel-pole"].includes(c.nulling)) throw new InputError(c.nulling, `"none", "cancel-zero" or "cancel-pole"`, `${o}.nulling`);
  if (c.cc !== undefined && c.targetPhaseMargin !== undefined) throw new InputError("both cc and targetPhaseMargin", "a Miller capacitor cc, or a target phase margin to design it for, not both", o, "invalid-design");
  if (c.rz !== undefined && c.nulling !== undefined) throw new InputError("both rz and nulling", "a nulling resistor rz, or a rule to choose it (nulling), not both", o, "invalid-design");
  return c;
}

/** The hand model's poles and zeros, in Hz, for one Cc (plain numbers; used by the design loop and the response). */
interface Model {
  a0: number;
  fp1: number;
  gbw: number;
  fp2: number;
  fzc: number;
  fp4: number;
  fm: number;
  fmz: number;
}

/** |H(f)|/|H(0)| and the phase lag (degrees, from DC) of the hand model. */
function factors(m: Model, f: number): { mag: number; lag: number } {
  const mag =
    (Math.hypot(1, f / m.fzc) * Math.hypot(1, f / m.fmz)) / (Math.hypot(1, f / m.fp1) * Math.hypot(1, f / m.fp2) * Math.hypot(1, f / m.fm) * Math.hypot(1, f / m.fp4));
  const lag = (Math.atan(f / m.fp1) + Math.atan(f / m.fp2) + Math.atan(f / m.fm) - Math.atan(f / m.fmz) + Math.atan(f / m.fzc) + Math.atan(f / m.fp4)) * rad;
  return { mag, lag };
}

/** Unity-gain frequency of the hand model by bisection (undefined when the gain never reaches 1). */
function unityGainOf(m: Model): number | undefined {
  if (!(m.a0 > 1)) return undefined;
  let lo = m.fp1 * 1e-3;
  let hi = Math.max(m.gbw, m.fp1) * 1e3;
  if (m.a0 * factors(m, hi).mag > 1) return undefined;
  for (let i = 0; i < 200 && hi / lo > 1 + 1e-12; i++) {
    const mid = Math.sqrt(lo * hi);
    if (m.a0 * factors(m, mid).mag > 1) lo = mid;
    else hi = mid;
  }
  return Math.sqrt(lo * hi);
}

interface Nodes {
  gm1: number;
  gm6: number;
  r1: number;
  r2: number;
  c1: number;
  c2: number;
  cgd6: number;
  fm: number;
  fmz: number;
  a0: number;
}

function rzFor(rule: NullingRule, n: Nodes, cce: number): number {
  if (rule === "cancel-zero") return tf.nullingCancelZero.fn(n.gm6 as never);
  if (rule === "cancel-pole") return tf.nullingCancelPole.fn(n.c1 as never, n.c2 as never, cce as never, n.gm6 as never);
  return 0;
}

function model(n: Nodes, cc: number, rz: number): Model {
  const cce = cc + n.cgd6;
  return {
    a0: n.a0,
    fp1: tf.millerDominantPole.fn(n.gm6 as never, n.r1 as never, n.r2 as never, cce as never),
    gbw: ff.gainBandwidth.fn(n.gm1 as never, cce as never),
    fp2: tf.millerSecondPole.fn(n.gm6 as never, cce as never, n.c1 as never, n.c2 as never),
    fzc: tf.millerZero.fn(cce as never, n.gm6 as never, rz as never),
    fp4: rz > 0 ? tf.nullingPole.fn(n.c1 as never, (cc + n.cgd6) as never, rz as never) : Infinity,
    fm: n.fm,
    fmz: n.fmz,
  };
}

function phaseMarginOf(m: Model): number | undefined {
  const fu = unityGainOf(m);
  return fu === undefined ? undefined : tf.millerPhaseMargin.fn(fu as never, m.fp1 as never, m.fp2 as never, m.fm as never, m.fmz as never, m.fzc as never, m.fp4 as never);
}

/** Cc for a target phase margin by bisection in log Cc on the hand model; InfeasibleError when no Cc reaches it. */
function designCc(n: Nodes, rule: NullingRule, rz: number | undefined, target: number, o: string): number {
  const pm = (cc: number) => {
    const r = rz ?? rzFor(rule, n, cc + n.cgd6);
    return phaseMarginOf(model(n, cc, r)) ?? 90;
  };
  let lo = Math.max(1e-18, 1e-4 * n.c2);
  let hi = 1e3 * (n.c1 + n.c2);
  const best = pm(hi);
  if (best < target)
    throw new InfeasibleError(
      `the target phase margin ${target}° cannot be met: even Cc = ${fmt(hi)} F gives ${fmt(best)}° (with Rz = 0 the right-half-plane zero gm6/Cc tracks GBW = gm1/Cc, so the margin is limited to about 90° − atan(gm1/gm6); the mirror pole limits it too). Expected a lower target, a larger gm6/gm1, a nulling resistor (nulling: "cancel-zero"), or a faster mirror`,
      `${o}: frequency.compensation.targetPhaseMargin`,
    );
  if (pm(lo) >= target) return lo;
  for (let i = 0; i < 200 && hi / lo > 1 + 1e-9; i++) {
    const mid = Math.sqrt(lo * hi);
    if (pm(mid) >= target) hi = mid;
    else lo = mid;
  }
  return hi;
}

const fmt = (x: number) => (Number.isFinite(x) ? String(+x.toPrecision(4)) : String(x));

export function analyzeTwoStageFrequency(stage: Stage, analysis: StageAnalysis, spec: FrequencySpec, o: string, rec?: Derivation): FrequencyAnalysis {
  if (spec.load?.resistance !== undefined)
    throw new InputError(spec.load.resistance, "no load resistance: the output is DC-coupled (a resistive load sets the second stage's gain; model it in the circuit)", `${o}: frequency.load.resistance`, "invalid-design");
  if (spec.capacitors || spec.targets?.lowCorner !== undefined)
    throw new InputError(spec.capacitors ?? spec.targets?.lowCorner, "no coupling capacitors and no low-corner target: the amplifier is DC-coupled", `${o}: frequency`, "invalid-design");
  const rsig = spec.source?.resistance ?? 0;
  if (rsig !== 0) throw new InputError(rsig, "0 Ω: the two-stage analysis takes ideal input sources (the input poles are not modelled)", `${o}: frequency.source.resistance`, "invalid-design");
  const comp = checkCompensation(spec.compensation ?? {}, `${o}: frequency.compensation`);
  const c = stage.components as Readonly<Record<string, number | undefined>>;
  const devs = (stage.devices ?? {}) as Record<string, Stage["device"] | undefined>;
  for (const [role, d] of [["device", stage.device], ["devices.load", devs.load], ["devices.second", devs.second], ["devices.sink", devs.sink]] as const)
    if (d && !hasCapacitanceData(d.card)) throw new InputError(undefined, missingCapacitanceHelp, `${o}: ${role}.card "${d.card.name}"`, "invalid-design");
  const same = (a: number | undefined, b: number | undefined, what: string, where: string) => {
    if (a !== undefined && b !== undefined && a !== b) throw new InputError([a, b], `${what} given once (frequency section and components disagree)`, where, "invalid-design");
    return a ?? b;
  };
  const cl = same(spec.load?.capacitance, c.cload, "the load capacitance", `${o}: frequency.load.capacitance`);
  if (cl === undefined || !(cl > 0))
    throw new InputError(cl, "a load capacitance CL > 0 F (frequency.load.capacitance or components.cload): the second pole and the compensation depend on it", `${o}: frequency.load.capacitance`, "invalid-design");
  const ccGiven = same(comp.cc, c.cc, "the Miller capacitor", `${o}: frequency.compensation.cc`);
  const rzGiven = same(comp.rz, c.rz, "the nulling resistor", `${o}: frequency.compensation.rz`);
  if (ccGiven !== undefined && comp.targetPhaseMargin !== undefined) throw new InputError("both cc and targetPhaseMargin", "a Miller capacitor cc, or a target phase margin to design it for, not both", `${o}: frequency.compensation`, "invalid-design");
  if (rzGiven !== undefined && comp.nulling !== undefined) throw new InputError("both rz and nulling", "a nulling resistor rz, or a rule to choose it (nulling), not both", `${o}: frequency.compensation`, "invalid-design");
  if (ccGiven === undefined && comp.targetPhaseMargin === undefined)
    throw new InputError(undefined, "a Miller capacitor (frequency.compensation.cc or components.cc) or a target phase margin (frequency.compensation.targetPhaseMargin)", `${o}: frequency.compensation`, "invalid-design");
  const d = analysis.devices ?? {};
  const m = { M1: analysis, M2: d.M2, M3: d.M3, M4: d.M4, M5: d.M5, M6: d.M6, M7: d.M7 };
  for (const [n, x] of Object.entries(m)) if (!x) throw new Error(`internal: ${o} lacks ${n}'s analysis`);
  if (m.M5!.region !== "saturation")
    throw new InfeasibleError(`the tail cannot supply the pair: M5 is in ${m.M5!.region}, so the first stage has no defined tail current; raise the common mode away from the tail's rail or lower M5's overdrive`, `${o}: components.vcm`);
  for (const n of ["M1", "M2", "M3", "M4", "M6", "M7"] as const)
    if (m[n]!.region !== "saturation")
      throw new InfeasibleError(`${n} is in ${m[n]!.region}, not saturation: there is no amplifier to analyse. Balance the open-loop output first (inputForOutput gives the input that centres it)`, `${o}: ${n}`);
  const ts = (analysis as StageAnalysis & { twoStage: TwoStageFigures }).twoStage;
  if (rec) {
    rec.note(frequencyRecordNote, "Two-stage Miller amplifier driven differentially by ideal sources; the tail node is AC ground for the differential signal; node 1 is the first stage's output, bridged to the output by the Miller capacitor.");
    rec.input("CL", cl, "capacitance", spec.load?.capacitance !== undefined ? `${o}: frequency.load.capacitance` : `${o}: components.cload`);
    rec.assume("The device capacitances are constant at the operating point (small signal); the poles are real and one dominates.");
  }
  const cap = (dev: Stage["device"], op: StageAnalysis["op"], at: string) => deviceCapacitances(dev, op, `${o}: ${at}`, rec);
  const c1d = cap(stage.device, analysis.op, "device (M1)");
  const c2d = cap(stage.device, m.M2!.op, "device (M2)");
  const c3d = cap(devs.load!, m.M3!.op, "devices.load (M3)");
  const c4d = cap(devs.load!, m.M4!.op, "devices.load (M4)");
  const c6d = cap(devs.second!, m.M6!.op, "devices.second (M6)");
  const c7d = cap(devs.sink!, m.M7!.op, "devices.sink (M7)");
  const gm1 = analysis.smallSignal.gm;
  const gm6 = m.M6!.smallSignal.gm;
  const r1 = evaluateFormula(ff.mirrorPairOutputNode, { gds2: m.M2!.smallSignal.gds, gds4: m.M4!.smallSignal.gds }, rec, "node 1 is the five-transistor amplifier's output");
  const r2 = evaluateFormula(tf.secondStageOutputNode, { gds6: m.M6!.smallSignal.gds, gds7: m.M7!.smallSignal.gds }, rec);
  const c1 = evaluateFormula(tf.firstStageNodeCapacitance, { Cgs6: c6d.cgs, Cgb6: c6d.cgb, Cdb2i: c2d.cdb, Cds2i: c2d.cds, Cgd2i: c2d.cgd, Cdb4: c4d.cdb, Cds4: c4d.cds, Cgd4: c4d.cgd }, rec);
  const c2 = evaluateFormula(tf.outputNodeCapacitance, { CL: cl, Cdb6: c6d.cdb, Cds6: c6d.cds, Cdb7: c7d.cdb, Cds7: c7d.cds, Cgd7: c7d.cgd }, rec);
  const cmir = evaluateFormula(ff.mirrorNodeCapacitance, { Cgs3: c3d.cgs, Cgs4: c4d.cgs, Cgb3: c3d.cgb, Cgb4: c4d.cgb, Cdb3: c3d.cdb, Cdb1: c1d.cdb, Cds1: c1d.cds, Cgd1: c1d.cgd, Cgd4: c4d.cgd }, rec, "M4's gate-drain capacitance is taken to AC ground: node 1 is held by the Miller capacitor");
  const fm = evaluateFormula(ff.mirrorPole, { gm3: m.M3!.smallSignal.gm, CMIR: cmir }, rec);
  const fmz = evaluateFormula(ff.mirrorZero, { fm }, rec);
  const a0 = Math.abs(ts.gain);
  const nodes: Nodes = { gm1, gm6, r1, r2, c1, c2, cgd6: c6d.cgd, fm, fmz, a0 };
  const rule: NullingRule = comp.nulling ?? "none";
  let cc = ccGiven;
  const ccRule = evaluateFormula(tf.millerRuleOfThumb, { CL: cl }, rec);
  if (cc === undefined) {
    const target = comp.targetPhaseMargin!;
    cc = designCc(nodes, rule, rzGiven, target, o);
    rec?.note(
      "Miller capacitor for the target phase margin",
      `Cc = ${fmt(cc * 1e12)} pF gives ${fmt(target)}° on the hand model below (bisection in Cc: the margin grows with Cc as GBW falls and the second pole rises); the rule of thumb 0.22·CL gives ${fmt(ccRule * 1e12)} pF for about 60° when the zero is ≥ 10·GBW.`,
    );
  } else if (!(cc > 0)) throw new InputError(cc, "a Miller capacitor Cc > 0 F", `${o}: frequency.compensation.cc`);
  const cce = evaluateFormula(tf.millerBranchCapacitance, { Cc: cc, Cgd6: c6d.cgd }, rec);
  let rz = rzGiven ?? 0;
  if (rzGiven === undefined && rule === "cancel-zero") rz = evaluateFormula(tf.nullingCancelZero, { gm6 }, rec);
  if (rzGiven === undefined && rule === "cancel-pole") rz = evaluateFormula(tf.nullingCancelPole, { C1: c1, C2: c2, CcE: cce, gm6 }, rec);
  const fp1 = evaluateFormula(tf.millerDominantPole, { gm6, R1: r1, R2: r2, CcE: cce }, rec);
  const gbw = evaluateFormula(ff.gainBandwidth, { gm1, CO: cce }, rec, "the first stage's current charges the Miller capacitor: Cc' takes the place of the output capacitance");
  const fp2 = evaluateFormula(tf.millerSecondPole, { gm6, CcE: cce, C1: c1, C2: c2 }, rec);
  const fzc = evaluateFormula(tf.millerZero, { CcE: cce, gm6, Rz: rz }, rec, rz === 0 ? "no nulling resistor: the zero gm6/Cc' lies in the right half plane" : undefined);
  const fp4 = rz > 0 ? evaluateFormula(tf.nullingPole, { C1: c1, CcE: cce, Rz: rz }, rec) : Infinity;
  const mod: Model = { a0, fp1, gbw, fp2, fzc, fp4, fm, fmz };
  const fu = unityGainOf(mod);
  const checks: StageCheck[] = [];
  const findings: string[] = [];
  const k = twoStageConditions;
  checks.push(stageCheck("Second pole above the gain-bandwidth product (fp2/GBW ≥ 2)", fp2 / gbw, "dimensionless", { min: k.secondPoleOverGbw }, rec, "the two-pole phase-margin estimate's condition"));
  checks.push(stageCheck("Mirror pole above the gain-bandwidth product (fm/GBW ≥ 10)", fm / gbw, "dimensionless", { min: k.mirrorPoleOverGbw }, rec, "the first stage's mirror left out of the pole splitting"));
  checks.push(stageCheck("Poles split: one dominates (fp2/fp1 ≥ 10)", fp2 / fp1, "dimensionless", { min: k.poleSeparation }, rec));
  if (fzc > 0 && Number.isFinite(fzc)) checks.push(stageCheck("Right-half-plane zero above the gain-bandwidth product (fz/GBW ≥ 10)", fzc / gbw, "dimensionless", { min: k.zeroOverGbw }, rec, "else it costs phase: add a nulling resistor"));
  // The Miller zero is in the model exactly (two-node analysis), so its place is design advice, not a validity condition.
  const holds = fp2 / gbw >= k.secondPoleOverGbw && fm / gbw >= k.mirrorPoleOverGbw && fp2 / fp1 >= k.poleSeparation;
  let pm: number | undefined;
  if (fu !== undefined) {
    rec?.note("Unity-gain frequency", `|H(fu)| = 1 at fu = ${fmt(fu / 1e6)} MHz (bisection on the hand transfer function from the DC gain ${fmt(a0)}; GBW = ${fmt(gbw / 1e6)} MHz).`);
    pm = evaluateFormula(tf.millerPhaseMargin, { fu, fp1, fp2, fm, fmz, fzc, fp4 }, rec);
    const want = comp.targetPhaseMargin ?? 60;
    checks.push(stageCheck(`Phase margin in unity-gain feedback ≥ ${fmt(want)}°`, pm, "dimensionless", { min: want }, rec, comp.targetPhaseMargin !== undefined ? "the target" : "common practice for a settled step response"));
    if (pm < want) findings.push(`The phase margin in unity-gain feedback is ${fmt(pm)}° (< ${fmt(want)}°): enlarge Cc (about ${fmt(ccRule)} F is the rule of thumb for 60°), add a nulling resistor, or raise gm6.`);
  } else findings.push("The open-loop gain is below 1: there is no unity-gain frequency.");
  if (!holds) findings.push("The two-stage analysis's conditions do not all hold (see the checks): the phase margin is a rough estimate.");
  for (const f of findings) rec?.find("caution", f);
  const corner = cornerOf(mod);
  return {
    view: "two-stage",
    outputNode: "drain",
    drive: "voltage",
    capacitances: c1d,
    midbandGain: ts.gain as Ratio,
    source: { resistance: 0 as Ohms },
    load: { capacitance: cl as Farads },
    high: twoKnownPoles(fp1, fp2, { frequency: Math.abs(fzc) as Hertz, rightHalfPlane: fzc > 0 }, corner, holds),
    nodes: { rsigSeen: 0 as Ohms, rOut: r2 as Ohms, cGate: c1 as Farads, cBridge: cce as Farads, cOut: c2 as Farads, gm: gm1 },
    checks,
    findings,
    circuit: { gateCoupled: false, rs: 0, bypassToIdealSource: false },
    twoStage: {
      cc: cc as Farads,
      rz: rz as Ohms,
      ccDesigned: ccGiven === undefined,
      rzDesigned: rzGiven === undefined && rule !== "none",
      ccRuleOfThumb: ccRule as Farads,
      r1: r1 as Ohms,
      r2: r2 as Ohms,
      c1: c1 as Farads,
      c2: c2 as Farads,
      gainBandwidth: gbw as Hertz,
      dominantPole: fp1 as Hertz,
      secondPole: fp2 as Hertz,
      zero: fzc as Hertz,
      nullingPole: fp4 as Hertz,
      mirrorPole: fm as Hertz,
      mirrorZero: fmz as Hertz,
      dcGain: a0,
      ...(fu !== undefined ? { unityGain: fu as Hertz, phaseMargin: pm! } : {}),
      conditionsHold: holds,
    },
  };
}

/** −3 dB corner of the hand model (bisection from the dominant pole). */
function cornerOf(m: Model): number {
  let lo = m.fp1 * 1e-3;
  let hi = m.fp1;
  while (factors(m, hi).mag >= Math.SQRT1_2) {
    hi *= 2;
    if (hi > m.fp1 * 1e15) return Infinity;
  }
  for (let i = 0; i < 200 && hi / lo > 1 + 1e-12; i++) {
    const mid = Math.sqrt(lo * hi);
    if (factors(m, mid).mag >= Math.SQRT1_2) lo = mid;
    else hi = mid;
  }
  return Math.sqrt(lo * hi);
}

/** The hand transfer function of the two-stage amplifier at each frequency (|H| and phase in degrees, starting at the DC gain's sign). */
export function twoStageResponse(fa: FrequencyAnalysis, freqs: readonly number[]): { magnitude: number[]; phaseDeg: number[] } {
  const t = fa.twoStage!;
  const m: Model = { a0: t.dcGain, fp1: t.dominantPole, gbw: t.gainBandwidth, fp2: t.secondPole, fzc: t.zero, fp4: t.nullingPole, fm: t.mirrorPole, fmz: t.mirrorZero };
  const start = fa.midbandGain < 0 ? 180 : 0;
  const magnitude: number[] = [];
  const phaseDeg: number[] = [];
  for (const f of freqs) {
    const x = factors(m, f);
    magnitude.push(t.dcGain * x.mag);
    phaseDeg.push(start - x.lag);
  }
  return { magnitude, phaseDeg };
}
