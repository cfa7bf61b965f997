/**
 * Gain-bandwidth product, mirror pole and phase margin of the differential
 * pair with a current-mirror load (`diff-pair-mirror-load`), driven
 * differentially (in1 = +vid/2, in2 = −vid/2 around the common mode, ideal
 * sources) with a load capacitance at the single-ended output.
 *
 * Method (catalog formulas, lib/formulas/frequency.catalog.ts): the output
 * pole 1/(2π·RLP·CO) is the dominant one, GBW = gm1/(2π·CO); the mirror's gate
 * node gives the non-dominant pole gm3/(2π·Cm) with a left-half-plane zero at
 * twice it (half the signal current reaches the output without the mirror);
 * the unity-gain frequency is the crossing of 1 by the hand transfer function
 * (bisection) and the phase margin follows from the two poles and the zero.
 * Assumption checked: the mirror pole at least a decade above the output pole.
 * The tail node is AC ground for a differential signal (symmetric pair).
 * No two-stage topology exists, so there is no Miller-compensated phase margin
 * here. Not on a hot path; allocates its result.
 */
import { deviceCapacitances, evaluateFormula } from "../device/capacitance.js";
import { InputError } from "../errors.js";
import * as ff from "../formulas/frequency.formulas.js";
import type { Farads, Hertz, Ohms, Ratio } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { dominanceRatio, highCornerOf, twoKnownPoles, type FrequencyAnalysis, type FrequencySpec, frequencyRecordNote } from "./frequency.js";
import { stageCheck } from "./metrics.js";
import type { Stage, StageAnalysis, StageCheck } from "./topology.js";

/** Figures of the pair with a mirror load. */
export interface MirrorPairFrequency {
  readonly gainBandwidth: Hertz;
  readonly outputPole: Hertz;
  readonly mirrorPole: Hertz;
  readonly mirrorZero: Hertz;
  readonly mirrorCapacitance: Farads;
  /** Unity-gain frequency of the hand transfer function (undefined when the gain stays below 1). */
  readonly unityGain?: Hertz;
  /** Phase margin in degrees at the unity-gain frequency. */
  readonly phaseMargin?: number;
}

/** |H(f)| / |H(0)| of (1 + s/ωz)/((1 + s/ωp1)(1 + s/ωm)). */
function relMag(f: number, fp1: number, fm: number, fz: number): number {
  return Math.hypot(1, f / fz) / (Math.hypot(1, f / fp1) * Math.hypot(1, f / fm));
}

export function analyzeMirrorPairFrequency(stage: Stage, analysis: StageAnalysis, spec: FrequencySpec, o: string, rec?: Derivation): FrequencyAnalysis {
  if (spec.load?.resistance !== undefined)
    throw new InputError(spec.load.resistance, "no load resistance: the pair's output is DC-coupled and high-impedance (a resistive load sets its gain; model it in the circuit)", `${o}: frequency.load.resistance`, "invalid-design");
  if (spec.capacitors || spec.targets?.lowCorner !== undefined)
    throw new InputError(spec.capacitors ?? spec.targets?.lowCorner, "no coupling capacitors and no low-corner target: the pair is DC-coupled", `${o}: frequency`, "invalid-design");
  const d = analysis.devices ?? {};
  const [m2, m3, m4] = [d.M2, d.M3, d.M4];
  const load = (stage.devices as Record<string, Stage["device"]> | undefined)?.load;
  if (!m2 || !m3 || !m4 || !load) throw new Error(`internal: ${o} lacks the pair's device analyses`);
  for (const [n, m] of [["M2", m2], ["M3", m3], ["M4", m4]] as const)
    if (m.region !== "saturation") throw new InputError(m.region, `${n} in saturation (the pair must be balanced near vid = 0)`, `${o}: ${n}`, "invalid-design");
  const rsig = spec.source?.resistance ?? 0;
  if (rsig !== 0) throw new InputError(rsig, "0 Ω: the pair's frequency analysis takes ideal input sources (the input poles are not modelled)", `${o}: frequency.source.resistance`, "invalid-design");
  const cl = spec.load?.capacitance ?? 0;
  if (rec) {
    rec.note(frequencyRecordNote, "Differential pair with a current-mirror load, driven differentially by ideal sources; the tail node is AC ground for the differential signal; output at M2/M4.");
    rec.input("CL", cl, "capacitance", spec.load?.capacitance !== undefined ? `${o}: frequency.load.capacitance` : `${o}: no load capacitance given`);
    rec.assume("The device capacitances are constant at the operating point (small signal).");
  }
  const c1 = deviceCapacitances(stage.device, analysis.op, `${o}: device (M1)`, rec);
  const c2 = deviceCapacitances(stage.device, m2.op, `${o}: device (M2)`, rec);
  const c3 = deviceCapacitances(load, m3.op, `${o}: devices.load (M3)`, rec);
  const c4 = deviceCapacitances(load, m4.op, `${o}: devices.load (M4)`, rec);
  const gm1 = analysis.smallSignal.gm;
  const RLP = evaluateFormula(ff.mirrorPairOutputNode, { gds2: m2.smallSignal.gds, gds4: m4.smallSignal.gds }, rec);
  const av = evaluateFormula(ff.mirrorPairMidband, { gm1, RLP }, rec, "the mirror copies M1's signal current to the output, doubling it");
  const CO = evaluateFormula(ff.mirrorPairOutputCapacitance, { CL: cl, Cdb2i: c2.cdb, Cds2i: c2.cds, Cgd2i: c2.cgd, Cdb4: c4.cdb, Cds4: c4.cds, Cgd4: c4.cgd }, rec);
  const fp1 = evaluateFormula(ff.mirrorPairOutputPole, { RLP, CO }, rec);
  const gbw = evaluateFormula(ff.gainBandwidth, { gm1, CO }, rec);
  const CMIR = evaluateFormula(ff.mirrorNodeCapacitance, { Cgs3: c3.cgs, Cgs4: c4.cgs, Cgb3: c3.cgb, Cgb4: c4.cgb, Cdb3: c3.cdb, Cdb1: c1.cdb, Cds1: c1.cds, Cgd1: c1.cgd, Cgd4: c4.cgd }, rec);
  const fm = evaluateFormula(ff.mirrorPole, { gm3: m3.smallSignal.gm, CMIR }, rec, "the non-dominant pole");
  const fz = evaluateFormula(ff.mirrorZero, { fm }, rec);
  const checks: StageCheck[] = [];
  const findings: string[] = [];
  const sep = fm / fp1;
  checks.push(stageCheck("Upper poles: one dominates (fp2/fp1 ≥ 10)", sep, "dimensionless", { min: dominanceRatio }, rec, "the output pole dominant, the mirror pole above it"));
  let fu: number | undefined;
  let pm: number | undefined;
  const a0 = Math.abs(av);
  if (a0 > 1) {
    let lo = fp1;
    let hi = fp1 * a0 * 10;
    for (let i = 0; i < 200 && hi / lo > 1 + 1e-12; i++) {
      const mid = Math.sqrt(lo * hi);
      if (a0 * relMag(mid, fp1, fm, fz) > 1) lo = mid;
      else hi = mid;
    }
    fu = Math.sqrt(lo * hi);
    rec?.note("Unity-gain frequency", `|H(fu)| = 1 at fu = ${+fu.toPrecision(4)} Hz (bisection on the hand transfer function; GBW = ${+gbw.toPrecision(4)} Hz when the mirror pole is far above).`);
    pm = evaluateFormula(ff.phaseMargin, { fu, fp1, fm, fz }, rec);
    checks.push(stageCheck("Phase margin in unity-gain feedback ≥ 60°", pm, "dimensionless", { min: 60 }, rec, "common practice for a settled step response"));
    if (pm < 60) findings.push(`The phase margin in unity-gain feedback is ${+pm.toPrecision(3)}°: the mirror pole (${+fm.toPrecision(4)} Hz) is too close to the unity-gain frequency (${+fu.toPrecision(4)} Hz); add load capacitance or speed up the mirror.`);
  } else findings.push("The differential gain is below 1: there is no unity-gain frequency.");
  if (sep < dominanceRatio) findings.push(`The mirror pole is within a decade of the output pole (${+sep.toPrecision(3)}×): the single-pole GBW is rough.`);
  for (const f of findings) rec?.find("caution", f);
  const w1 = 2 * Math.PI * fp1;
  const wm = 2 * Math.PI * fm;
  const b1 = 1 / w1 + 1 / wm;
  const b2 = Math.sqrt(1 / (w1 * wm));
  const corner = highCornerOf(b1, b2, fz, false);
  return {
    view: "differential-pair",
    outputNode: "drain",
    capacitances: c1,
    midbandGain: av as Ratio,
    source: { resistance: 0 as Ohms },
    load: { capacitance: cl as Farads },
    high: twoKnownPoles(fp1, fm, { frequency: fz as Hertz, rightHalfPlane: false }, corner, sep >= dominanceRatio),
    nodes: { rsigSeen: 0 as Ohms, rOut: RLP as Ohms, cGate: 0 as Farads, cBridge: CMIR as Farads, cOut: CO as Farads, gm: gm1 },
    pair: { gainBandwidth: gbw as Hertz, outputPole: fp1 as Hertz, mirrorPole: fm as Hertz, mirrorZero: fz as Hertz, mirrorCapacitance: CMIR as Farads, ...(fu !== undefined ? { unityGain: fu as Hertz, phaseMargin: pm! } : {}) },
    checks,
    findings,
    drive: "voltage",
    circuit: { gateCoupled: false, rs: 0, bypassToIdealSource: false },
  };
}
