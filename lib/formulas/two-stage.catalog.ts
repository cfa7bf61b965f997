/**
 * The two-stage Miller-compensated amplifier: a five-transistor first stage
 * (its figures in pair.catalog.ts), a common-source second stage M6 with a
 * current-sink load M7, both currents mirrored from one reference M8, and a
 * Miller capacitor Cc (optionally in series with a nulling resistor Rz) from
 * the first stage's output to the amplifier's output. Voltages in the input
 * device's polarity; conductances, currents and capacitances as magnitudes.
 * Node 1 is the first stage's output, node 2 the amplifier's output.
 */
import { defineFormulas, defineSymbols } from "./define.js";

const smallSignal = "small-signal model gm, gds of the square law; nodal analysis (common practice)";
const regionEdge = "square-law saturation condition VDS ≥ VGS − Vt of every device (common practice)";
const poleSplit = "two-node nodal analysis with the Miller capacitor (pole splitting; Gray & Meyer, IEEE JSSC 17(6), 969–982, 1982, from memory)";
const nulling = "nulling resistor in series with the Miller capacitor (common practice; Allen & Holberg, CMOS Analog Circuit Design, 2nd ed., §6.2, from memory)";
const balance = "second stage's current matched to the first stage's mirror so VGS6 = VGS4 (Allen & Holberg, CMOS Analog Circuit Design, 2nd ed., §6.3, from memory)";

export const symbols = defineSymbols({
  // shared (identical tex and dim)
  VDR: { tex: "V_{DR}", dim: "voltage", meaning: "rail the drain side returns to (device polarity)" },
  VSR: { tex: "V_{SR}", dim: "voltage", meaning: "rail the source side returns to (device polarity)" },
  ITAIL: { tex: "I_{SS}", dim: "current", meaning: "tail current of the pair" },
  CL: { tex: "C_{L}", dim: "capacitance", meaning: "load capacitance at the output" },
  SR: { tex: "SR", dim: "slewRate", meaning: "slew rate of the output" },
  IREF: { tex: "I_{REF}", dim: "current", meaning: "reference current" },
  VDD: { tex: "V_{DD}", dim: "voltage", meaning: "upper supply rail" },
  VSS: { tex: "V_{SS}", dim: "voltage", meaning: "lower supply rail (0 V for a single supply)" },
  P: { tex: "P", dim: "power", meaning: "power drawn from the supplies" },
  gm1: { tex: "g_{m1}", dim: "conductance", meaning: "transconductance of the input device" },
  Cgd4: { tex: "C_{gd4}", dim: "capacitance", meaning: "gate-drain capacitance of the mirror's output device" },
  Cdb4: { tex: "C_{db4}", dim: "capacitance", meaning: "drain junction capacitance of the mirror's output device" },
  Cds4: { tex: "C_{ds4}", dim: "capacitance", meaning: "drain-source capacitance of the mirror's output device" },
  Cgd2i: { tex: "C_{gd2}", dim: "capacitance", meaning: "gate-drain capacitance of the input device on the output side" },
  Cdb2i: { tex: "C_{db2}", dim: "capacitance", meaning: "drain junction capacitance of the input device on the output side" },
  Cds2i: { tex: "C_{ds2}", dim: "capacitance", meaning: "drain-source capacitance of the input device on the output side" },
  fp1: { tex: "f_{p1}", dim: "frequency", meaning: "dominant pole" },
  fp2: { tex: "f_{p2}", dim: "frequency", meaning: "non-dominant pole" },
  fm: { tex: "f_{m}", dim: "frequency", meaning: "mirror pole" },
  fz: { tex: "f_{z}", dim: "frequency", meaning: "zero" },
  fu: { tex: "f_{u}", dim: "frequency", meaning: "unity-gain frequency" },
  PM: { tex: "\\varphi_{m}", dim: "dimensionless", meaning: "phase margin in degrees" },
  // the second stage
  gm6: { tex: "g_{m6}", dim: "conductance", meaning: "transconductance of the second stage's common-source device M6" },
  gds6: { tex: "g_{ds6}", dim: "conductance", meaning: "output conductance of M6" },
  gds7: { tex: "g_{ds7}", dim: "conductance", meaning: "output conductance of the second stage's current sink M7" },
  Av1: { tex: "A_{v1}", dim: "dimensionless", meaning: "gain of the first stage (differential input to node 1)" },
  Av2: { tex: "A_{v2}", dim: "dimensionless", meaning: "magnitude of the gain of the second stage (node 1 to the output)" },
  Av0: { tex: "A_{v0}", dim: "dimensionless", meaning: "DC open-loop gain of the amplifier" },
  VOV6: { tex: "V_{OV6}", dim: "voltage", meaning: "overdrive of M6" },
  VOV7: { tex: "V_{OV7}", dim: "voltage", meaning: "overdrive of M7" },
  VOmin2: { tex: "V_{O,min}", dim: "voltage", meaning: "lowest output voltage with the current sink M7 saturated (device polarity)" },
  I7: { tex: "I_{7}", dim: "current", meaning: "second stage's current (M6 and M7)" },
  Cc: { tex: "C_{c}", dim: "capacitance", meaning: "Miller compensation capacitor from node 1 to the output" },
  SRint: { tex: "SR_{1}", dim: "slewRate", meaning: "slew rate set by the tail current charging Cc" },
  SRout: { tex: "SR_{2}", dim: "slewRate", meaning: "slew rate set by the second stage's current charging Cc and CL" },
  S4: { tex: "(W/L)_{4}", dim: "dimensionless", meaning: "aspect ratio of the mirror's output device M4" },
  S5: { tex: "(W/L)_{5}", dim: "dimensionless", meaning: "aspect ratio of the tail device M5" },
  S6: { tex: "(W/L)_{6}", dim: "dimensionless", meaning: "aspect ratio of the second stage's device M6" },
  S7: { tex: "(W/L)_{7}", dim: "dimensionless", meaning: "aspect ratio of the current sink M7" },
  kBal: { tex: "k_{bal}", dim: "dimensionless", meaning: "systematic-balance ratio, 1 when the second stage's current matches the mirror" },
  // the Miller-compensated response
  R1: { tex: "R_{1}", dim: "resistance", meaning: "resistance at node 1 (the first stage's output)" },
  R2: { tex: "R_{2}", dim: "resistance", meaning: "resistance at the output node" },
  C1: { tex: "C_{1}", dim: "capacitance", meaning: "capacitance from node 1 to AC ground" },
  C2: { tex: "C_{2}", dim: "capacitance", meaning: "capacitance from the output node to AC ground, load included" },
  CcE: { tex: "C_{c}'", dim: "capacitance", meaning: "capacitance from node 1 to the output: Cc plus M6's gate-drain capacitance" },
  Cgd6: { tex: "C_{gd6}", dim: "capacitance", meaning: "gate-drain capacitance of M6" },
  Cgs6: { tex: "C_{gs6}", dim: "capacitance", meaning: "gate-source capacitance of M6" },
  Cgb6: { tex: "C_{gb6}", dim: "capacitance", meaning: "gate-body capacitance of M6" },
  Cdb6: { tex: "C_{db6}", dim: "capacitance", meaning: "drain junction capacitance of M6" },
  Cds6: { tex: "C_{ds6}", dim: "capacitance", meaning: "drain-source capacitance of M6" },
  Cdb7: { tex: "C_{db7}", dim: "capacitance", meaning: "drain junction capacitance of M7" },
  Cds7: { tex: "C_{ds7}", dim: "capacitance", meaning: "drain-source capacitance of M7" },
  Cgd7: { tex: "C_{gd7}", dim: "capacitance", meaning: "gate-drain capacitance of M7 (its gate is AC ground)" },
  Rz: { tex: "R_{z}", dim: "resistance", meaning: "nulling resistor in series with the Miller capacitor" },
  fzc: { tex: "f_{zc}", dim: "frequency", meaning: "zero of the Miller branch, positive in the right half plane, negative in the left" },
  fmz: { tex: "f_{mz}", dim: "frequency", meaning: "left-half-plane zero of the mirror (twice its pole)" },
  fp4: { tex: "f_{p4}", dim: "frequency", meaning: "pole of the nulling resistor with the capacitance at node 1" },
  CcMin: { tex: "C_{c,min}", dim: "capacitance", meaning: "smallest Miller capacitor for about 60° by the rule of thumb" },
});

export const formulas = defineFormulas({
  // --- DC figures ---
  secondStageGain: { title: "Gain of the common-source second stage M6 with its current-sink load M7 (magnitude)", result: "Av2", expr: "gm6 / (gds6 + gds7)", source: smallSignal },
  twoStageGain: { title: "DC open-loop gain: the product of the stages' gains", result: "Av0", expr: "Av1 * Av2", source: smallSignal },
  secondStageOutputMin: { title: "Lowest output with the current sink M7 saturated", result: "VOmin2", expr: "VSR + VOV7", source: regionEdge },
  slewInternal: { title: "Slew rate of the internal node: the tail current charging the Miller capacitor", result: "SRint", expr: "ITAIL / Cc", source: "charge balance on Cc (common practice)" },
  slewOutput: { title: "Slew rate of the output: the second stage's current charging the Miller and load capacitors", result: "SRout", expr: "I7 / (Cc + CL)", source: "charge balance at the output node (common practice)" },
  systematicBalance: { title: "Systematic-balance ratio: (W/L)6/(W/L)4 over 2·(W/L)7/(W/L)5 (1 with no systematic offset)", result: "kBal", expr: "S6 * S5 / (2 * S4 * S7)", source: balance },
  twoStagePower: { title: "Power drawn from the supplies: the reference, the tail and the second stage", result: "P", expr: "(VDD - VSS) * (IREF + ITAIL + I7)", source: "common practice" },
  // --- frequency response ---
  secondStageOutputNode: { title: "Resistance at the output node: ro6 ∥ ro7", result: "R2", expr: "1 / (gds6 + gds7)", source: smallSignal },
  firstStageNodeCapacitance: {
    title: "Capacitance from node 1 to AC ground: M6's input, and the drains of M2 and M4 (Cgd6 is counted with Cc)",
    result: "C1",
    expr: "Cgs6 + Cgb6 + Cdb2i + Cds2i + Cgd2i + Cdb4 + Cds4 + Cgd4",
    source: poleSplit,
  },
  outputNodeCapacitance: { title: "Capacitance from the output to AC ground: the load and the drains of M6 and M7", result: "C2", expr: "CL + Cdb6 + Cds6 + Cdb7 + Cds7 + Cgd7", source: poleSplit },
  millerBranchCapacitance: { title: "Capacitance bridging node 1 and the output: Cc with M6's gate-drain capacitance beside it", result: "CcE", expr: "Cc + Cgd6", source: poleSplit },
  millerDominantPole: { title: "Dominant pole: node 1 loaded by the Miller-multiplied Cc", result: "fp1", expr: "1 / (2 * pi * gm6 * R1 * R2 * CcE)", source: poleSplit },
  millerSecondPole: { title: "Second pole after pole splitting (with the loading of Cc)", result: "fp2", expr: "gm6 * CcE / (2 * pi * (C1 * C2 + CcE * (C1 + C2)))", source: poleSplit },
  millerZero: { title: "Zero of the Miller branch: gm6/Cc in the right half plane, moved by the nulling resistor", result: "fzc", expr: "1 / (2 * pi * CcE * (1 / gm6 - Rz))", source: nulling },
  nullingPole: { title: "Pole of the nulling resistor with node 1's capacitance in series with the Miller branch (the output held by C2)", result: "fp4", expr: "(C1 + CcE) / (2 * pi * Rz * C1 * CcE)", source: nulling },
  millerPhaseMargin: {
    title: "Phase margin at the unity-gain frequency: dominant, second, mirror and nulling poles, the mirror zero and the Miller zero",
    result: "PM",
    expr: "180 - (atan(fu / fp1) + atan(fu / fp2) + atan(fu / fm) - atan(fu / fmz) + atan(fu / fzc) + atan(fu / fp4)) * 180 / pi",
    source: poleSplit,
  },
  // --- compensation design ---
  nullingCancelZero: { title: "Nulling resistor that moves the Miller zero to infinity", result: "Rz", expr: "1 / gm6", source: nulling },
  nullingCancelPole: {
    title: "Nulling resistor that places the zero (left half plane) on the second pole",
    result: "Rz",
    expr: "(1 + (C1 * C2 + CcE * (C1 + C2)) / CcE^2) / gm6",
    source: nulling,
  },
  millerRuleOfThumb: {
    title: "Rule of thumb for about 60° with the zero ≥ 10·GBW: Cc ≥ 0.22·CL (second pole ≥ 2.2·GBW)",
    result: "CcMin",
    expr: "0.22 * CL",
    source: "Allen & Holberg, CMOS Analog Circuit Design, 2nd ed., §6.2 (from memory; common practice)",
  },
});
