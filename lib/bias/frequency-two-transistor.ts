/**
 * Upper corner and poles of the two-transistor stages, mapped onto the common
 * source's gate node, gate-to-output bridge and output node so that the same
 * open-circuit time constants, two-pole denominator, zero, Miller approximation
 * and dominance checks apply (`highFrequency` in lib/bias/frequency.ts):
 *
 * - Current mirror (`current-mirror` with a load resistor): driven by an ideal
 *   signal current into the reference (gate) node; the gate node resistance is
 *   Rm = 1/(gm1 + gds1 + 1/RREF) with the diode device's and the output device's
 *   gate capacitances on it (the mirror pole 1/(2π·Rm·Cgate)), Cgd of the output
 *   device bridges to the output, and RLOAD ∥ ro2 with Cdb2 + Cds2 + CL sets the
 *   output pole. The response is the transimpedance vout/iin (V/A). An output
 *   held by an ideal source (`vout`) has no output pole and is refused.
 * - Common source with a diode-connected load (`diode-load`): the driver's gate
 *   DC-coupled in series with its bias source, the load device a resistance
 *   1/(gmL + gmbL + gdsL) whose own capacitances load the output node (which of
 *   them depends on its type and body tie; the record names them).
 *
 * Both stages are DC-coupled: a load resistor, coupling capacitors or a
 * low-corner target are refused with an InputError (no low corner exists).
 * Small-signal values are the DC analysis's (public `StageAnalysis.devices`),
 * so a different device model in the solver carries through. Not on a hot
 * path; allocates its result.
 */
import { deviceCapacitances, evaluateFormula } from "../device/capacitance.js";
import { InputError } from "../errors.js";
import * as bf from "../formulas/bias.formulas.js";
import * as ff from "../formulas/frequency.formulas.js";
import type { Farads, Hertz, Ohms, Ratio } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { highFrequency, type FrequencyAnalysis, type FrequencyNodes, type FrequencySpec, frequencyRecordNote } from "./frequency.js";
import type { Stage, StageAnalysis, StageCheck } from "./topology.js";

/** The mirror's gate node: its resistance, capacitance and own pole. */
export interface MirrorFrequencyNodes {
  readonly gateResistance: Ohms;
  readonly gateCapacitance: Farads;
  /** 1/(2π·Rm·Cgate): the mirror pole without the Miller share of Cgd2. */
  readonly mirrorPole: Hertz;
  /** The output node's pole with the Miller-reflected Cgd2. */
  readonly outputPole: Hertz;
}

function refuseCoupling(spec: FrequencySpec, o: string, what: string): void {
  if (spec.load?.resistance !== undefined)
    throw new InputError(spec.load.resistance, `no load resistance: the ${what}'s output is DC-coupled (fold a resistive load into the stage's own load)`, `${o}: frequency.load.resistance`, "invalid-design");
  if (spec.capacitors || spec.targets?.lowCorner !== undefined)
    throw new InputError(spec.capacitors ?? spec.targets?.lowCorner, `no coupling or bypass capacitors and no low-corner target: the ${what} is DC-coupled, so it has no low corner`, `${o}: frequency`, "invalid-design");
}

function second(stage: Stage, analysis: StageAnalysis, role: string, o: string) {
  const dev = (stage.devices as Record<string, Stage["device"]> | undefined)?.[role];
  const an = analysis.devices?.[role];
  if (!dev || !an) throw new Error(`internal: ${o} has no ${role} device analysis`);
  if (an.region !== "saturation") throw new InputError(an.region, `the ${role} device in saturation`, `${o}: devices.${role}`, "invalid-design");
  return { dev, an };
}

export function analyzeMirrorFrequency(stage: Stage, analysis: StageAnalysis, spec: FrequencySpec, o: string, rec?: Derivation): FrequencyAnalysis {
  refuseCoupling(spec, o, "current mirror");
  if (spec.source !== undefined)
    throw new InputError(spec.source, "no signal source resistance: the mirror is driven by an ideal signal current into its reference node (RREF and the diode device set the node's resistance)", `${o}: frequency.source`, "invalid-design");
  const c = stage.components as Record<string, number | undefined>;
  if (c.rload === undefined)
    throw new InputError(c.vout, "a load resistor (components.rload): an output held by an ideal voltage source has no output pole to analyse", `${o}: components.vout`, "invalid-design");
  const { dev: refDev, an: ref } = second(stage, analysis, "reference", o);
  const cl = spec.load?.capacitance ?? 0;
  const { gm, gds } = analysis.smallSignal;
  const findings: string[] = [];
  const checks: StageCheck[] = [];
  if (rec) {
    rec.note(frequencyRecordNote, "Current mirror driven by a signal current into the reference node (the gates of both devices); output at the output device's drain, loaded by RLOAD. Sources and bodies sit at the rail, so there is no body effect. Small-signal values at the operating point.");
    rec.input("CL", cl, "capacitance", spec.load?.capacitance !== undefined ? `${o}: frequency.load.capacitance` : `${o}: no load capacitance given`);
    rec.assume("The signal current source is ideal; the device capacitances are constant at the operating point (small signal).");
  }
  const c1 = deviceCapacitances(refDev, ref.op, `${o}: devices.reference`, rec);
  const c2 = deviceCapacitances(stage.device, analysis.op, `${o}: device`, rec);
  const Rm = evaluateFormula(ff.mirrorNodeResistance, { gm3: ref.smallSignal.gm, gds3: ref.smallSignal.gds, RREF: c.rref! }, rec, "the diode device, its ro and RREF all return the gate node to AC ground");
  const RLP = evaluateFormula(bf.commonSourceOutput, { RD: c.rload, gds }, rec, "RLOAD in the place of RD");
  const av = evaluateFormula(ff.mirrorTransimpedance, { gm, Rm, RLP }, rec);
  const CGI = evaluateFormula(ff.mirrorGateCapacitance, { Cgs3: c1.cgs, Cgb3: c1.cgb, Cdb3: c1.cdb, Cds3: c1.cds, Cgs4: c2.cgs, Cgb4: c2.cgb }, rec, "subscript 3 the reference device, 4 the output device");
  const CGO = evaluateFormula(ff.gateToOutput, { Cgd: c2.cgd }, rec, "the output device's gate-drain capacitance");
  const CO = evaluateFormula(ff.outputCapacitance, { CL: cl, Cdb: c2.cdb, Cds: c2.cds }, rec);
  const fm = evaluateFormula(ff.mirrorGatePole, { Rm, CGI }, rec);
  rec?.note("Upper corner", "The gate node plays the common source's input node with Rsig' = Rm: the same open-circuit time constants and two-pole denominator follow.");
  const nodes: FrequencyNodes = { rsigSeen: Rm as Ohms, rOut: RLP as Ohms, cGate: CGI as Farads, cBridge: CGO as Farads, cOut: CO as Farads, gm };
  const high = highFrequency(nodes, false, { gm, gmb: 0, gds, ...(rec ? { rec } : {}) }, checks, findings);
  for (const f of findings) rec?.find("caution", f);
  return {
    view: "current-mirror",
    outputNode: "drain",
    capacitances: c2,
    midbandGain: av as Ratio,
    drive: "current",
    source: { resistance: Infinity as Ohms },
    load: { capacitance: cl as Farads },
    high,
    nodes,
    mirror: { gateResistance: Rm as Ohms, gateCapacitance: CGI as Farads, mirrorPole: fm as Hertz, outputPole: (high.miller?.outputPole ?? Infinity) as Hertz },
    checks,
    findings,
    circuit: { gateCoupled: false, rs: 0, bypassToIdealSource: false },
  };
}

export function analyzeDiodeLoadFrequency(stage: Stage, analysis: StageAnalysis, spec: FrequencySpec, o: string, rec?: Derivation): FrequencyAnalysis {
  refuseCoupling(spec, o, "diode-load stage");
  const { dev: loadDev, an: load } = second(stage, analysis, "load", o);
  const rsig = spec.source?.resistance ?? 0;
  const cl = spec.load?.capacitance ?? 0;
  const sameType = loadDev.card.polarity === stage.device.card.polarity;
  const bodyRail = sameType && stage.body === "rail";
  const { gm, gds } = analysis.smallSignal;
  const findings: string[] = [];
  const checks: StageCheck[] = [];
  if (rec) {
    rec.note(
      frequencyRecordNote,
      `Common source with a diode-connected ${sameType ? "same-type" : "complementary"} load: input at the driver's gate (signal source in series with its bias), output at the driver's drain; the load is a resistance 1/(gmL + gmbL + gdsL)${bodyRail ? " with its body effect (body at the rail)" : ""}. Small-signal values at the operating point.`,
    );
    rec.input("Rsig", rsig, "resistance", spec.source ? `${o}: frequency.source.resistance` : `${o}: no source given (ideal voltage source)`);
    rec.input("CL", cl, "capacitance", spec.load?.capacitance !== undefined ? `${o}: frequency.load.capacitance` : `${o}: no load capacitance given`);
    rec.assume("The device capacitances are constant at the operating point (small signal).");
  }
  const c1 = deviceCapacitances(stage.device, analysis.op, `${o}: device`, rec);
  const cL = deviceCapacitances(loadDev, load.op, `${o}: devices.load`, rec);
  const gmbL = bodyRail ? load.smallSignal.gmb : 0;
  const Rdl = evaluateFormula(ff.diodeLoadResistance, { gmL: load.smallSignal.gm, gmbL, gdsL: load.smallSignal.gds }, rec, bodyRail ? "body at the rail: the source moves, so gmb adds" : "no body effect on the load");
  const RLP = evaluateFormula(bf.commonSourceOutput, { RD: Rdl, gds }, rec, "the load's resistance in the place of RD");
  const av = evaluateFormula(ff.commonSourceMidbandDirect, { gm, RLP }, rec);
  const CLD = !sameType
    ? evaluateFormula(ff.diodeLoadCapacitanceComplementary, { CgsL: cL.cgs, CgbL: cL.cgb, CdbL: cL.cdb, CdsL: cL.cds }, rec)
    : bodyRail
      ? evaluateFormula(ff.diodeLoadCapacitanceSameRail, { CgsL: cL.cgs, CdsL: cL.cds, CsbL: cL.csb }, rec)
      : evaluateFormula(ff.diodeLoadCapacitanceSameTied, { CgsL: cL.cgs, CdsL: cL.cds, CgbL: cL.cgb, CdbL: cL.cdb }, rec);
  const CGI = evaluateFormula(ff.gateToGround, { Cgs: c1.cgs, Cgb: c1.cgb }, rec, "the driver's source and body at AC ground");
  const CGO = evaluateFormula(ff.gateToOutput, { Cgd: c1.cgd }, rec);
  const CO = evaluateFormula(ff.diodeLoadOutputCapacitance, { CL: cl, Cdb: c1.cdb, Cds: c1.cds, CLD }, rec);
  const nodes: FrequencyNodes = { rsigSeen: rsig as Ohms, rOut: RLP as Ohms, cGate: CGI as Farads, cBridge: CGO as Farads, cOut: CO as Farads, gm };
  const high = highFrequency(nodes, false, { gm, gmb: 0, gds, ...(rec ? { rec } : {}) }, checks, findings);
  for (const f of findings) rec?.find("caution", f);
  return {
    view: "diode-load",
    outputNode: "drain",
    capacitances: c1,
    midbandGain: av as Ratio,
    drive: "voltage",
    source: { resistance: rsig as Ohms },
    load: { capacitance: cl as Farads },
    high,
    nodes,
    checks,
    findings,
    circuit: { gateCoupled: false, rs: 0, bypassToIdealSource: false },
  };
}
