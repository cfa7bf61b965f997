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
 *   output pole. The response is the transimpedance vout/iin (V/A). RLOAD is
 *   `components.rload` where the bias network holds the load resistor; with the
 *   output held at `vout` by a source it is `frequency.load.resistance`,
 *   returned to that source (as in the cascode mirror), and it is required.
 * - Common source with a diode-connected load (`diode-load`): the driver's gate
 *   DC-coupled in series with its bias source, the load device a resistance
 *   1/(gmL + gmbL + gdsL) whose own capacitances load the output node (which of
 *   them depends on its type and body tie; the record names them).
 *
 * - Cascode current mirror (`cascode-mirror`, stacked or wide-swing): driven by an
 *   ideal signal current into node A (where IREF enters), loaded by RLOAD
 *   (`frequency.load.resistance`, returned to the source that holds vout) and CL;
 *   exact nodal transimpedance, node poles and their time-constant sum
 *   (`analyzeCascodeMirrorFrequency`).
 *
 * All three are DC-coupled: coupling capacitors or a low-corner target are
 * refused with an InputError (no low corner exists), and so is an outside load
 * resistor on the diode-load stage (its load device is the load).
 * Small-signal values are the DC analysis's (public `StageAnalysis.devices`),
 * so a different device model in the solver carries through. Not on a hot
 * path; allocates its result.
 */
import { deviceCapacitances, evaluateFormula } from "../device/capacitance.js";
import { InputError } from "../errors.js";
import * as bf from "../formulas/bias.formulas.js";
import * as ff from "../formulas/frequency.formulas.js";
import * as pf from "../formulas/pair.formulas.js";
import type { Farads, Hertz, Ohms, Ratio, Seconds } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { dominanceRatio, highCornerOf, highFrequency, type FrequencyAnalysis, type FrequencyNodes, type FrequencySpec, type HighFrequencyResponse, frequencyRecordNote } from "./frequency.js";
import { stageCheck } from "./metrics.js";
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

/**
 * The load resistance a mirror's output drives, in one place for both mirrors: the bias network's own resistor
 * (`components.rload`, simple mirror) where it has one, else `frequency.load.resistance`, returned to the source
 * that holds the DC output at vout. Both at once, or neither, is refused naming the field.
 */
export function mirrorLoadResistance(stage: Stage, spec: FrequencySpec, o: string): { readonly value: Ohms; readonly origin: string; readonly external: boolean } {
  const own = (stage.components as Record<string, number | undefined>).rload;
  const ext = spec.load?.resistance;
  if (own !== undefined) {
    if (ext !== undefined)
      throw new InputError(ext, `no frequency.load.resistance: this mirror's bias network already holds its load resistor (components.rload = ${own} Ω), which is the load the frequency analysis uses; give one load there`, `${o}: frequency.load.resistance`, "invalid-design");
    return { value: own as Ohms, origin: `${o}: components.rload`, external: false };
  }
  if (ext === undefined)
    throw new InputError(undefined, "a load resistance (frequency.load.resistance, RLOAD returned to the source that holds vout): with the output held by an ideal source there is no output pole to analyse", `${o}: frequency.load.resistance`, "invalid-design");
  return { value: ext, origin: `${o}: frequency.load.resistance`, external: true };
}

export function analyzeMirrorFrequency(stage: Stage, analysis: StageAnalysis, spec: FrequencySpec, o: string, rec?: Derivation): FrequencyAnalysis {
  refuseCoupling(spec, o, "current mirror");
  if (spec.source !== undefined)
    throw new InputError(spec.source, "no signal source resistance: the mirror is driven by an ideal signal current into its reference node (RREF and the diode device set the node's resistance)", `${o}: frequency.source`, "invalid-design");
  const c = stage.components as Record<string, number | undefined>;
  const rl = mirrorLoadResistance(stage, spec, o);
  const { dev: refDev, an: ref } = second(stage, analysis, "reference", o);
  const cl = spec.load?.capacitance ?? 0;
  const { gm, gds } = analysis.smallSignal;
  const findings: string[] = [];
  const checks: StageCheck[] = [];
  if (rec) {
    rec.note(
      frequencyRecordNote,
      `Current mirror driven by a signal current into the reference node (the gates of both devices); output at the output device's drain, loaded by RLOAD ${rl.external ? "returned to the source that holds the DC output at vout" : "to the drain-side rail"}. Sources and bodies sit at the rail, so there is no body effect. Small-signal values at the operating point.`,
    );
    rec.input("RLOAD", rl.value, "resistance", rl.origin);
    rec.input("CL", cl, "capacitance", spec.load?.capacitance !== undefined ? `${o}: frequency.load.capacitance` : `${o}: no load capacitance given`);
    rec.assume("The signal current source is ideal; the device capacitances are constant at the operating point (small signal).");
  }
  const c1 = deviceCapacitances(refDev, ref.op, `${o}: devices.reference`, rec);
  const c2 = deviceCapacitances(stage.device, analysis.op, `${o}: device`, rec);
  const Rm = evaluateFormula(ff.mirrorNodeResistance, { gm3: ref.smallSignal.gm, gds3: ref.smallSignal.gds, RREF: c.rref! }, rec, "the diode device, its ro and RREF all return the gate node to AC ground");
  const RLP = evaluateFormula(bf.commonSourceOutput, { RD: rl.value, gds }, rec, "RLOAD in the place of RD");
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
    // An outside load (returned to the output's source) is the AC deck's to place; components.rload is in the DC deck.
    load: { ...(rl.external ? { resistance: rl.value } : {}), capacitance: cl as Farads },
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
  if (spec.load?.resistance !== undefined)
    throw new InputError(spec.load.resistance, "no load resistance: the diode-load stage's output is DC-coupled (fold a resistive load into the stage's own load)", `${o}: frequency.load.resistance`, "invalid-design");
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

/** The cascode mirror's nodes beyond the lower gate node (`FrequencyAnalysis.mirror` holds that one and the output pole). */
export interface CascodeMirrorFrequencyNodes {
  readonly bias: "stacked" | "wide-swing";
  /** Stacked mirror only: driving-point resistance and pole of node A (the cascode gates, where the signal enters). */
  readonly nodeA?: { readonly resistance: Ohms; readonly capacitance: Farads; readonly pole: Hertz };
  /** The node X between M2 and M4. */
  readonly nodeX: { readonly resistance: Ohms; readonly capacitance: Farads; readonly pole: Hertz };
  /** Resistance looking into M4's drain. */
  readonly cascodeResistance: Ohms;
}

/**
 * Cascode current mirror (`cascode-mirror`, stacked or wide-swing) driven by an ideal signal current into its
 * reference node A (where IREF enters), loaded by RLOAD (`frequency.load.resistance`, returned to the bias source
 * that holds the DC output at vout) and CL. Midband transimpedance by exact nodal analysis of the four-device
 * hybrid-π model; node poles (lower gate node, stacked node A with M4's Cgd Miller-multiplied, node X, output),
 * each node's capacitances taken to AC ground. The lowest is the dominant pole where the next lies a decade above
 * (checked); the two lowest form the two-pole hand response.
 */
export function analyzeCascodeMirrorFrequency(stage: Stage, analysis: StageAnalysis, spec: FrequencySpec, o: string, rec?: Derivation): FrequencyAnalysis {
  refuseCoupling(spec, o, "cascode mirror");
  if (spec.source !== undefined)
    throw new InputError(spec.source, "no signal source resistance: the cascode mirror is driven by an ideal signal current into its reference node", `${o}: frequency.source`, "invalid-design");
  const rl = mirrorLoadResistance(stage, spec, o).value;
  const dv = analysis.devices ?? {};
  const m = (n: "M1" | "M2" | "M3" | "M4") => {
    // M2 is the stage's main device: its analysis is the stage's own.
    const an = n === "M2" ? { region: analysis.region, op: analysis.op, smallSignal: analysis.smallSignal } : dv[n];
    if (!an) throw new Error(`internal: ${o} has no ${n} analysis`);
    if (an.region !== "saturation") throw new InputError(an.region, `${n} in saturation`, `${o}: devices.${n}`, "invalid-design");
    return an;
  };
  const [a1, a2, a3, a4] = [m("M1"), m("M2"), m("M3"), m("M4")];
  const cas = (stage.devices as Record<string, Stage["device"]> | undefined)?.cascode;
  if (!cas) throw new Error(`internal: ${o} has no cascode device`);
  const wide = (stage.components as Record<string, number | undefined>).vcas !== undefined;
  const rail = stage.body === "rail";
  const cl = spec.load?.capacitance ?? 0;
  const findings: string[] = [];
  const checks: StageCheck[] = [];
  if (rec) {
    rec.note(
      frequencyRecordNote,
      `${wide ? "Wide-swing" : "Stacked"} cascode current mirror driven by a signal current into the reference node A (${wide ? "M1/M2's gates and M3's drain; the cascode gates held at vcas, AC ground" : "the cascode gates; M3 passes the signal current down to M1"}); output at M4's drain, loaded by RLOAD returned to the source that holds the DC output. M1/M2 at the rail; M3/M4 bodies ${rail ? "at the rail (body effect)" : "at their sources"}. Small-signal values at the operating point.`,
    );
    rec.input("RLOAD", rl, "resistance", `${o}: frequency.load.resistance`);
    rec.input("CL", cl, "capacitance", spec.load?.capacitance !== undefined ? `${o}: frequency.load.capacitance` : `${o}: no load capacitance given`);
    rec.assume("The signal current source is ideal; the device capacitances are constant at the operating point (small signal); each node's capacitances are taken to AC ground (the bridges between low-impedance nodes are small).");
  }
  const c1 = deviceCapacitances(stage.device, a1.op, `${o}: device (M1)`, rec);
  const c2 = deviceCapacitances(stage.device, a2.op, `${o}: device (M2)`, rec);
  const c3 = deviceCapacitances(cas, a3.op, `${o}: devices.cascode (M3)`, rec);
  const c4 = deviceCapacitances(cas, a4.op, `${o}: devices.cascode (M4)`, rec);
  const s1 = a1.smallSignal, s2 = a2.smallSignal, s3 = a3.smallSignal, s4 = a4.smallSignal;
  const gmbM3 = rail ? s3.gmb : 0;
  const gmbM4 = rail ? s4.gmb : 0;
  const RGM = wide
    ? evaluateFormula(ff.cascodeMirrorGateResistanceWide, { gmM1: s1.gm, gdsM1: s1.gds, gmM3: s3.gm, gmbM3, gdsM3: s3.gds }, rec)
    : evaluateFormula(ff.cascodeMirrorGateResistanceStacked, { gmM1: s1.gm, gdsM1: s1.gds }, rec);
  const ZA = wide ? 0 : evaluateFormula(ff.cascodeMirrorNodeA, { RGM, gmbM3, gmM3: s3.gm, gdsM3: s3.gds }, rec);
  if (wide) rec?.note("Node A", "The wide-swing mirror's cascode gates sit at vcas: ZA = 0.");
  const ZX = evaluateFormula(ff.cascodeMirrorNodeX, { gmM4: s4.gm, ZA, gmM2: s2.gm, RGM, gdsM4: s4.gds, RLOAD: rl, gdsM2: s2.gds, gmbM4 }, rec);
  const zt = evaluateFormula(ff.cascodeMirrorTransimpedance, { RLOAD: rl, gmM2: s2.gm, RGM, gdsM2: s2.gds, ZX }, rec);
  const RoutM = evaluateFormula(pf.cascodeOutputResistance, { gdsLow: s2.gds, gdsCas: s4.gds, gmCas: s4.gm, gmbCas: gmbM4 }, rec, "M2 under the output cascode M4");
  const RLM = evaluateFormula(ff.cascodeOutputNodeResistance, { RD: rl, RoutCas: RoutM }, rec, "RLOAD in the place of RD");
  const RXM = evaluateFormula(ff.cascodeMirrorNodeXResistance, { ZX, RLOAD: rl, Zt: zt }, rec, wide ? undefined : "the stacked mirror's X follows node A, so its capacitance takes more of the output current than 1/gm4 suggests");
  // Node capacitances to AC ground, named in the record.
  const sum = (title: string, parts: Record<string, number>) => {
    const v = Object.values(parts).reduce((x, y) => x + y, 0);
    rec?.note(title, `${Object.entries(parts).map(([k, x]) => `${k} ${fmt(x)} F`).join(" + ")} = ${fmt(v)} F`);
    return v;
  };
  const CGM = wide
    ? // Wide swing: a capacitor from A to M (Cgd1, Cds3, and Cdb3 with M3's body at its source) feeds M (≈ 1/gm3),
      // whose current M3 returns to A: it does not load A.
      sum("Capacitance at node A (lower gates)", { Cgs1: c1.cgs, Cgb1: c1.cgb, Cgs2: c2.cgs, Cgb2: c2.cgb, Cgd2: c2.cgd, Cgd3: c3.cgd, ...(rail ? { Cdb3: c3.cdb } : {}) })
    : sum("Capacitance at the lower gate node M", { Cgs1: c1.cgs, Cgb1: c1.cgb, Cdb1: c1.cdb, Cds1: c1.cds, Cgs2: c2.cgs, Cgb2: c2.cgb, Cgd2: c2.cgd, ...(rail ? { Csb3: c3.csb } : {}) });
  // M4's drain-source capacitance (and, body at its source, its drain junction) returns its current to the output
  // through M4's channel: it sits on X (≈ C/gm4), not on the output.
  const CXM = sum("Capacitance at node X", { Cdb2: c2.cdb, Cds2: c2.cds, Cgd2: c2.cgd, Cgs4: c4.cgs, Cds4: c4.cds, ...(rail ? { Csb4: c4.csb } : { Cgb4: c4.cgb, Cdb4: c4.cdb }) });
  const COM = rail
    ? evaluateFormula(ff.cascodeMirrorOutputCapacitance, { CL: cl, Cdb: c4.cdb, CgdM4: c4.cgd }, rec)
    : evaluateFormula(ff.cascodeMirrorOutputCapacitanceTied, { CL: cl, CgdM4: c4.cgd }, rec);
  const fG = evaluateFormula(ff.cascodeMirrorGatePole, { RGM, CGM }, rec);
  let nodeA: CascodeMirrorFrequencyNodes["nodeA"];
  if (!wide) {
    // Capacitors from A to M (Cgs3, Cds3; Cgb3 and Cdb3 with M3's body at its source) pass the signal to M, where it goes anyway.
    const CjM = sum("Capacitance at node A (cascode gates), before the Miller share of Cgd4", { Cgs4: c4.cgs, Cgb4: c4.cgb, ...(rail ? { Cgb3: c3.cgb, Cdb3: c3.cdb } : {}) });
    const CAM = evaluateFormula(ff.cascodeMirrorNodeACapacitance, { CjM, CgdM4: c4.cgd, Zt: zt, ZA }, rec);
    const fA = evaluateFormula(ff.cascodeMirrorNodeAPole, { ZA, CAM }, rec);
    nodeA = { resistance: ZA as Ohms, capacitance: CAM as Farads, pole: fA as Hertz };
  }
  const fX = evaluateFormula(ff.cascodeMirrorNodeXPole, { RXM, CXM }, rec);
  const fO = evaluateFormula(ff.cascodeMirrorOutputPole, { RLP: RLM, COM }, rec);
  const poles = [fG, fX, fO, ...(nodeA ? [nodeA.pole] : [])].sort((x, y) => x - y);
  const tau = (f: number) => 1 / (2 * Math.PI * f);
  rec?.note("Open-circuit time constants", "Each node's RC; their sum is the denominator's first coefficient, the open-circuit time-constant estimate of the corner.");
  const taus = { tauG: tau(fG), tauA: nodeA ? tau(nodeA.pole) : 0, tauX: tau(fX), tauO: tau(fO) };
  const b1 = evaluateFormula(ff.cascodeMirrorTimeConstantSum, taus, rec);
  const fOctc = evaluateFormula(ff.upperCorner, { b1 }, rec);
  const b2 = evaluateFormula(ff.cascodeMirrorB2, taus, rec);
  const p1 = evaluateFormula(ff.dominantPole, { b1, b2 }, rec);
  const p2 = evaluateFormula(ff.nonDominantPole, { b1, b2 }, rec);
  // The method's condition, as for every view: the denominator's poles a decade apart, so one node sets the corner.
  const sep = evaluateFormula(ff.poleSeparation, { fp2: p2, fp1: p1 }, rec);
  const holds = sep >= dominanceRatio;
  checks.push(stageCheck("Upper poles: one dominates (fp2/fp1 ≥ 10)", sep, "dimensionless", { min: dominanceRatio }, rec, "the node-pole estimate's own assumption: one node sets the corner"));
  if (!holds) findings.push(`The upper poles ${fmt(p1)} Hz and ${fmt(p2)} Hz lie within a decade (lowest node poles ${fmt(poles[0]!)} Hz and ${fmt(poles[1]!)} Hz): the nodes interact and the estimates are rough; verify by simulation.`);
  const corner = highCornerOf(b1, b2, Infinity, false);
  const low = poles[0]!;
  rec?.note("Upper corner", `Lowest node pole ${fmt(low)} Hz (${low === fO ? "the output" : low === fG ? "the lower gate node" : low === fX ? "node X" : "node A"}); dominant pole of the denominator ${fmt(p1)} Hz; −3 dB corner ${fmt(corner)} Hz.`);
  for (const f of findings) rec?.find("caution", f);
  const high: HighFrequencyResponse = {
    timeConstants: { gate: (taus.tauG + taus.tauA) as Seconds, bridge: taus.tauX as Seconds, output: taus.tauO as Seconds },
    b1: b1 as Seconds,
    b2: b2 as Seconds,
    octcCorner: fOctc as Hertz,
    dominantPole: p1 as Hertz,
    nonDominantPole: p2 as Hertz,
    zero: { frequency: Infinity as Hertz, rightHalfPlane: false },
    corner: corner as Hertz,
    dominantPoleHolds: holds,
  };
  return {
    view: "cascode-mirror",
    outputNode: "drain",
    capacitances: c4,
    midbandGain: zt as Ratio,
    drive: "current",
    source: { resistance: Infinity as Ohms },
    load: { resistance: rl as Ohms, capacitance: cl as Farads },
    high,
    nodes: { rsigSeen: RGM as Ohms, rOut: RLM as Ohms, cGate: CGM as Farads, cBridge: (wide ? 0 : c4.cgd) as Farads, cOut: COM as Farads, gm: s2.gm },
    mirror: { gateResistance: RGM as Ohms, gateCapacitance: CGM as Farads, mirrorPole: fG as Hertz, outputPole: fO as Hertz },
    cascodeMirror: { bias: wide ? "wide-swing" : "stacked", ...(nodeA ? { nodeA } : {}), nodeX: { resistance: RXM as Ohms, capacitance: CXM as Farads, pole: fX as Hertz }, cascodeResistance: RoutM as Ohms },
    checks,
    findings,
    circuit: { gateCoupled: false, rs: 0, bypassToIdealSource: false },
  };
}

const fmt = (x: number) => (Number.isFinite(x) ? String(+x.toPrecision(4)) : String(x));
