/**
 * Frequency response by hand analysis, each formula stated once: the
 * short-circuit time constants of coupling and bypass capacitors (low-frequency
 * corner), the open-circuit time constants and the Miller approximation (upper
 * corner), the two-pole denominators of the common-source stage and of the
 * source follower with source and load, and capacitor synthesis for a corner.
 *
 * Resistances named R with a prime are Thevenin values at a node: RSP is the
 * signal source as the gate sees it (Rsig ∥ RG), RLP the total resistance at the
 * output node of a common-source stage (RD ∥ ro ∥ RL), RSL the source-node
 * resistance of a follower (RS ∥ RL ∥ ro ∥ 1/gmb).
 */
import { defineFormulas, defineSymbols } from "./define.js";

const sctc = "short-circuit time-constant method (P. E. Gray and C. L. Searle, Electronic Principles, Wiley, 1969; common practice)";
const octc = "open-circuit time-constant method (R. B. Adler, P. E. Gray, C. L. Searle; Gray & Searle, Electronic Principles, Wiley, 1969; common practice)";
const nodal = "nodal analysis of the hybrid-π model with Cgs, Cgd and the output capacitance (common practice)";
const miller = "Miller approximation (J. M. Miller, Scientific Papers of the Bureau of Standards 15(351), 1920)";

export const symbols = defineSymbols({
  // shared (identical tex and dim)
  gm: { tex: "g_{m}", dim: "conductance", meaning: "transconductance" },
  gmb: { tex: "g_{mb}", dim: "conductance", meaning: "body transconductance" },
  gds: { tex: "g_{ds}", dim: "conductance", meaning: "output conductance" },
  RG: { tex: "R_{G}", dim: "resistance", meaning: "Thevenin resistance of the gate bias" },
  RD: { tex: "R_{D}", dim: "resistance", meaning: "drain resistor" },
  RS: { tex: "R_{S}", dim: "resistance", meaning: "source resistor" },
  Rout: { tex: "R_{out}", dim: "resistance", meaning: "small-signal output resistance" },
  Cgs: { tex: "C_{gs}", dim: "capacitance", meaning: "gate-source capacitance" },
  Cgd: { tex: "C_{gd}", dim: "capacitance", meaning: "gate-drain capacitance" },
  Cgb: { tex: "C_{gb}", dim: "capacitance", meaning: "gate-body capacitance" },
  Cdb: { tex: "C_{db}", dim: "capacitance", meaning: "drain-body junction capacitance" },
  Csb: { tex: "C_{sb}", dim: "capacitance", meaning: "source-body junction capacitance" },
  Cds: { tex: "C_{ds}", dim: "capacitance", meaning: "drain-source capacitance" },
  Av: { tex: "A_{v}", dim: "dimensionless", meaning: "small-signal voltage gain" },
  // source, load, nodes
  Rsig: { tex: "R_{sig}", dim: "resistance", meaning: "signal source resistance" },
  RL: { tex: "R_{L}", dim: "resistance", meaning: "load resistance" },
  CL: { tex: "C_{L}", dim: "capacitance", meaning: "load capacitance" },
  RSP: { tex: "R_{sig}'", dim: "resistance", meaning: "signal source resistance as the gate sees it (Rsig ∥ RG)" },
  RLP: { tex: "R_{L}'", dim: "resistance", meaning: "total resistance at the output node (RD ∥ ro ∥ RL)" },
  RSL: { tex: "R_{SL}", dim: "resistance", meaning: "total resistance at the follower's source node (RS ∥ RL ∥ ro ∥ 1/gmb)" },
  RDL: { tex: "R_{D}\\parallel R_{L}", dim: "resistance", meaning: "drain resistor in parallel with the load" },
  Rx: { tex: "R_{x}", dim: "resistance", meaning: "resistance a capacitor sees (others open or shorted as the method says)" },
  CGI: { tex: "C_{gi}", dim: "capacitance", meaning: "capacitance from the gate to AC ground" },
  CGO: { tex: "C_{go}", dim: "capacitance", meaning: "capacitance from the gate to the output node" },
  CO: { tex: "C_{o}", dim: "capacitance", meaning: "total capacitance from the output node to AC ground" },
  Cx: { tex: "C_{x}", dim: "capacitance", meaning: "a coupling, bypass or device capacitance" },
  CM: { tex: "C_{M}", dim: "capacitance", meaning: "Miller input capacitance" },
  // time constants, poles
  tau: { tex: "\\tau", dim: "time", meaning: "time constant" },
  tau1: { tex: "\\tau_{1}", dim: "time", meaning: "open-circuit time constant of the gate-to-ground capacitance" },
  tau2: { tex: "\\tau_{2}", dim: "time", meaning: "open-circuit time constant of the gate-to-output capacitance" },
  tau3: { tex: "\\tau_{3}", dim: "time", meaning: "open-circuit time constant of the output capacitance" },
  Q: { tex: "Q", dim: "dimensionless", meaning: "quality factor of a complex pole pair" },
  b1: { tex: "b_{1}", dim: "time", meaning: "first-order coefficient of the denominator (sum of open-circuit time constants)" },
  b2: { tex: "b_{2}", dim: "time", meaning: "square root of the second-order coefficient of the denominator" },
  fx: { tex: "f_{x}", dim: "frequency", meaning: "a pole or corner frequency" },
  f1: { tex: "f_{1}", dim: "frequency", meaning: "first pole frequency" },
  f2: { tex: "f_{2}", dim: "frequency", meaning: "second pole frequency" },
  f3: { tex: "f_{3}", dim: "frequency", meaning: "third pole frequency" },
  fL: { tex: "f_{L}", dim: "frequency", meaning: "low-frequency −3 dB corner" },
  fH: { tex: "f_{H}", dim: "frequency", meaning: "upper −3 dB corner" },
  fp1: { tex: "f_{p1}", dim: "frequency", meaning: "dominant pole" },
  fp2: { tex: "f_{p2}", dim: "frequency", meaning: "non-dominant pole" },
  fz: { tex: "f_{z}", dim: "frequency", meaning: "zero" },
  sep: { tex: "f_{p2}/f_{p1}", dim: "dimensionless", meaning: "pole separation" },
  share: { tex: "s_{x}", dim: "dimensionless", meaning: "share of the target corner given to one capacitor" },
  // cascode stage
  gm1: { tex: "g_{m1}", dim: "conductance", meaning: "transconductance of the input device" },
  gds1: { tex: "g_{ds1}", dim: "conductance", meaning: "output conductance of the input device" },
  gm2: { tex: "g_{m2}", dim: "conductance", meaning: "transconductance of the cascode device" },
  gmb2: { tex: "g_{mb2}", dim: "conductance", meaning: "body transconductance of the cascode device (0 with its body at its source)" },
  gds2: { tex: "g_{ds2}", dim: "conductance", meaning: "output conductance of the cascode device" },
  RoutCas: { tex: "R_{out}", dim: "resistance", meaning: "resistance looking into the cascode drain" },
  RX: { tex: "R_{X}", dim: "resistance", meaning: "resistance at the node between the input and cascode devices" },
  CX: { tex: "C_{X}", dim: "capacitance", meaning: "capacitance from the node between the devices to AC ground" },
  Cdb1: { tex: "C_{db1}", dim: "capacitance", meaning: "drain junction capacitance of the input device" },
  Cds1: { tex: "C_{ds1}", dim: "capacitance", meaning: "drain-source capacitance of the input device" },
  Cgs2: { tex: "C_{gs2}", dim: "capacitance", meaning: "gate-source capacitance of the cascode device" },
  Cgd2: { tex: "C_{gd2}", dim: "capacitance", meaning: "gate-drain capacitance of the cascode device" },
  Cgb2: { tex: "C_{gb2}", dim: "capacitance", meaning: "gate-body capacitance of the cascode device" },
  Csb2: { tex: "C_{sb2}", dim: "capacitance", meaning: "source junction capacitance of the cascode device" },
  Cdb2: { tex: "C_{db2}", dim: "capacitance", meaning: "drain junction capacitance of the cascode device" },
  Cds2: { tex: "C_{ds2}", dim: "capacitance", meaning: "drain-source capacitance of the cascode device" },
  tau4: { tex: "\\tau_{4}", dim: "time", meaning: "open-circuit time constant of the capacitance across the cascode device, drain to source" },
  CDS2: { tex: "C_{ds2}'", dim: "capacitance", meaning: "capacitance across the cascode device from drain to source (Cds2, plus Cdb2 with its body at its source)" },
  gds4: { tex: "g_{ds4}", dim: "conductance", meaning: "output conductance of the mirror's output device" },
  gm3: { tex: "g_{m3}", dim: "conductance", meaning: "transconductance of the mirror's diode-connected device" },
  Cgs3: { tex: "C_{gs3}", dim: "capacitance", meaning: "gate-source capacitance of the mirror's diode device" },
  Cgs4: { tex: "C_{gs4}", dim: "capacitance", meaning: "gate-source capacitance of the mirror's output device" },
  Cgb3: { tex: "C_{gb3}", dim: "capacitance", meaning: "gate-body capacitance of the mirror's diode device" },
  Cgb4: { tex: "C_{gb4}", dim: "capacitance", meaning: "gate-body capacitance of the mirror's output device" },
  Cdb3: { tex: "C_{db3}", dim: "capacitance", meaning: "drain junction capacitance of the mirror's diode device" },
  Cdb4: { tex: "C_{db4}", dim: "capacitance", meaning: "drain junction capacitance of the mirror's output device" },
  Cgd1: { tex: "C_{gd1}", dim: "capacitance", meaning: "gate-drain capacitance of the input device on the mirror's diode side" },
  Cgd4: { tex: "C_{gd4}", dim: "capacitance", meaning: "gate-drain capacitance of the mirror's output device" },
  Cds4: { tex: "C_{ds4}", dim: "capacitance", meaning: "drain-source capacitance of the mirror's output device" },
  Cgd2i: { tex: "C_{gd2}", dim: "capacitance", meaning: "gate-drain capacitance of the input device on the output side" },
  Cdb2i: { tex: "C_{db2}", dim: "capacitance", meaning: "drain junction capacitance of the input device on the output side" },
  Cds2i: { tex: "C_{ds2}", dim: "capacitance", meaning: "drain-source capacitance of the input device on the output side" },
  CMIR: { tex: "C_{m}", dim: "capacitance", meaning: "capacitance at the mirror's gate node" },
  GBW: { tex: "GBW", dim: "frequency", meaning: "gain-bandwidth product" },
  fm: { tex: "f_{m}", dim: "frequency", meaning: "mirror pole" },
  fu: { tex: "f_{u}", dim: "frequency", meaning: "unity-gain frequency" },
  PM: { tex: "\\varphi_{m}", dim: "dimensionless", meaning: "phase margin in degrees" },
  AvX: { tex: "A_{vX}", dim: "dimensionless", meaning: "magnitude of the gain from the input gate to the node between the devices" },
});

export const formulas = defineFormulas({
  // Thevenin values
  sourceSeenByGate: { title: "Signal source as the gate sees it", result: "RSP", expr: "Rsig * RG / (Rsig + RG)", source: "Thevenin's theorem (common practice)" },
  outputNodeResistance: { title: "Total resistance at the drain output node", result: "RLP", expr: "1 / (gds + 1 / RD + 1 / RL)", source: nodal },
  followerNodeResistance: { title: "Total resistance at the follower's source node", result: "RSL", expr: "1 / (gds + gmb + 1 / RS + 1 / RL)", source: nodal },
  followerNodeResistanceUnloaded: { title: "Total resistance at the follower's source node, no load resistor", result: "RSL", expr: "1 / (gds + gmb + 1 / RS)", source: nodal },
  drainWithLoad: { title: "Drain resistor in parallel with the load", result: "RDL", expr: "RD * RL / (RD + RL)", source: "parallel resistors (common practice)" },
  // midband gain with source and load
  commonSourceMidband: { title: "Midband gain from the signal source, common source", result: "Av", expr: "-gm * RLP * RG / (Rsig + RG)", source: nodal },
  commonSourceMidbandDirect: { title: "Midband gain from the signal source, common source, gate DC-coupled", result: "Av", expr: "-gm * RLP", source: nodal },
  followerMidband: { title: "Midband gain from the signal source, source follower", result: "Av", expr: "gm * RSL / (1 + gm * RSL) * RG / (Rsig + RG)", source: nodal },
  // short-circuit time constants
  inputCouplingResistance: { title: "Resistance the input coupling capacitor sees (others shorted)", result: "Rx", expr: "Rsig + RG", source: sctc },
  outputCouplingResistance: { title: "Resistance the output coupling capacitor sees (others shorted)", result: "Rx", expr: "Rout + RL", source: sctc },
  bypassResistance: {
    title: "Resistance the source bypass capacitor sees (others shorted)",
    result: "Rx",
    expr: "1 / (1 / RS + (gm + gmb + gds) / (1 + gds * RDL))",
    source: sctc,
  },
  bypassResistanceIdeal: {
    title: "Resistance the source bypass capacitor sees, ideal current source at the source (others shorted)",
    result: "Rx",
    expr: "(1 + gds * RDL) / (gm + gmb + gds)",
    source: sctc,
  },
  timeConstant: { title: "Time constant", result: "tau", expr: "Cx * Rx", source: "RC time constant (common practice)" },
  poleOfTimeConstant: { title: "Pole of a time constant", result: "fx", expr: "1 / (2 * pi * tau)", source: "single-pole response (common practice)" },
  lowCorner: { title: "Low-frequency corner (sum of the short-circuit poles)", result: "fL", expr: "f1 + f2 + f3", source: sctc },
  capacitorForPole: { title: "Capacitor for a pole frequency", result: "Cx", expr: "1 / (2 * pi * Rx * fx)", source: "single-pole response (common practice)" },
  poleShare: { title: "Pole frequency given to one capacitor", result: "fx", expr: "share * fL", source: "dominant capacitor takes the rest, the others a twentieth of the target each, so the dominance check keeps a margin after snapping" },
  // common source: capacitances at the nodes
  gateToGround: { title: "Capacitance from the gate to AC ground (common source)", result: "CGI", expr: "Cgs + Cgb", source: nodal },
  gateToOutput: { title: "Capacitance from the gate to the output (common source)", result: "CGO", expr: "Cgd", source: nodal },
  outputCapacitance: { title: "Capacitance from the drain output node to AC ground", result: "CO", expr: "CL + Cdb + Cds", source: nodal },
  followerGateToGround: { title: "Capacitance from the gate to AC ground (follower, body at its rail)", result: "CGI", expr: "Cgd + Cgb", source: nodal },
  followerGateToOutput: { title: "Capacitance from the gate to the output (follower, body at its rail)", result: "CGO", expr: "Cgs", source: nodal },
  followerOutputCapacitance: { title: "Capacitance from the follower's source node to AC ground (body at its rail)", result: "CO", expr: "CL + Csb + Cds", source: nodal },
  followerTiedGateToGround: { title: "Capacitance from the gate to AC ground (follower, body at the source)", result: "CGI", expr: "Cgd", source: nodal },
  followerTiedGateToOutput: { title: "Capacitance from the gate to the output (follower, body at the source)", result: "CGO", expr: "Cgs + Cgb", source: nodal },
  // open-circuit time constants
  gateTimeConstant: { title: "Open-circuit time constant of the gate capacitance", result: "tau", expr: "CGI * RSP", source: octc },
  bridgeTimeConstant: { title: "Open-circuit time constant of the gate-drain capacitance", result: "tau", expr: "CGO * (RSP * (1 + gm * RLP) + RLP)", source: octc },
  outputTimeConstant: { title: "Open-circuit time constant of the output capacitance", result: "tau", expr: "CO * RLP", source: octc },
  timeConstantSum: { title: "Sum of the open-circuit time constants", result: "b1", expr: "tau1 + tau2 + tau3", source: octc },
  upperCorner: { title: "Upper corner from the open-circuit time constants", result: "fH", expr: "1 / (2 * pi * b1)", source: octc },
  // common source: two-pole denominator
  commonSourceB2: {
    title: "Second-order coefficient of the common-source denominator (as √b2)",
    result: "b2",
    expr: "sqrt(RSP * RLP * (CGI * CGO + CGI * CO + CGO * CO))",
    source: nodal,
  },
  dominantPole: { title: "Dominant pole (smaller root of 1 + b1·s + b2²·s²)", result: "fp1", expr: "(b1 - sqrt(b1^2 - 4 * b2^2)) / (4 * pi * b2^2)", source: nodal },
  nonDominantPole: { title: "Non-dominant pole (larger root of 1 + b1·s + b2²·s²)", result: "fp2", expr: "(b1 + sqrt(b1^2 - 4 * b2^2)) / (4 * pi * b2^2)", source: nodal },
  nonDominantEstimate: { title: "Non-dominant pole, widely separated poles", result: "fp2", expr: "b1 / (2 * pi * b2^2)", source: nodal },
  naturalFrequency: { title: "Natural frequency of a complex pole pair", result: "fx", expr: "1 / (2 * pi * b2)", source: nodal },
  poleQuality: { title: "Quality factor of a complex pole pair", result: "Q", expr: "b2 / b1", source: nodal },
  poleSeparation: { title: "Pole separation", result: "sep", expr: "fp2 / fp1", source: nodal },
  bridgeZero: { title: "Zero through the capacitance from the gate to the output (right half plane in a common source, left in a follower)", result: "fz", expr: "gm / (2 * pi * CGO)", source: nodal },
  // Miller
  millerCapacitance: { title: "Miller input capacitance", result: "CM", expr: "CGI + CGO * (1 + gm * RLP)", source: miller },
  millerInputPole: { title: "Input pole with the Miller capacitance", result: "f1", expr: "1 / (2 * pi * RSP * CM)", source: miller },
  millerOutputPole: { title: "Output pole with the Miller-reflected gate-drain capacitance", result: "f2", expr: "1 / (2 * pi * RLP * (CO + CGO * (1 + 1 / (gm * RLP))))", source: miller },
  // cascode stage (input M1, cascode M2, output at M2's drain)
  cascodeOutputNodeResistance: { title: "Total resistance at the cascode stage's output (RD in parallel with the cascode)", result: "RLP", expr: "1 / (1 / RD + 1 / RoutCas)", source: nodal },
  cascodeNodeResistance: {
    title: "Resistance at the node between the devices: ro1 in parallel with the cascode's source, (ro2 + RD)/(1 + (gm2 + gmb2)·ro2)",
    result: "RX",
    expr: "1 / (gds1 + (gm2 + gmb2 + gds2) / (1 + gds2 * RD))",
    source: nodal,
  },
  cascodeNodeGain: { title: "Gain from the input gate to the node between the devices (≈ gm1/gm2 when RD ≪ ro2)", result: "AvX", expr: "gm1 * RX", source: nodal },
  cascodeNodeCapacitance: { title: "Capacitance at the node between the devices, cascode body at its rail", result: "CX", expr: "Cdb1 + Cds1 + Cgs2 + Csb2", source: nodal },
  cascodeNodeCapacitanceTied: { title: "Capacitance at the node between the devices, cascode body at its source", result: "CX", expr: "Cdb1 + Cds1 + Cgs2 + Cgb2", source: nodal },

  cascodeOutputCapacitance: { title: "Capacitance at the cascode stage's output, cascode body at its rail", result: "CO", expr: "CL + Cgd2 + Cdb2", source: nodal },
  cascodeOutputCapacitanceTied: { title: "Capacitance at the cascode stage's output, cascode body at its source (Cdb2 then bridges drain and source)", result: "CO", expr: "CL + Cgd2", source: nodal },
  cascodeAcrossCapacitance: { title: "Capacitance across the cascode device, cascode body at its rail", result: "CDS2", expr: "Cds2", source: nodal },
  cascodeAcrossCapacitanceTied: { title: "Capacitance across the cascode device, cascode body at its source", result: "CDS2", expr: "Cds2 + Cdb2", source: nodal },
  cascodeAcrossTimeConstant: {
    title: "Open-circuit time constant of the capacitance across the cascode device (≈ CDS2/gm2: the cascode returns its current to the output)",
    result: "tau4",
    expr: "CDS2 * (1 + gds1 * RD) / (gm2 + gmb2 + gds1 + gds2 + gds1 * gds2 * RD)",
    source: octc,
  },
  cascodeMidband: {
    title: "Midband gain of the cascode stage: M1's current less the share ro1 takes, into the output resistance",
    result: "Av",
    expr: "-gm1 * (gm2 + gmb2 + gds2) / (gm2 + gmb2 + gds2 + gds1) * RLP",
    source: nodal,
  },
  cascodeBridgeTimeConstant: { title: "Open-circuit time constant of the input device's gate-drain capacitance, drain at the node between the devices", result: "tau", expr: "CGO * (RSP * (1 + gm1 * RX) + RX)", source: octc },
  cascodeNodeTimeConstant: { title: "Open-circuit time constant of the capacitance at the node between the devices", result: "tau", expr: "CX * RX", source: octc },
  cascodeTimeConstantSum: { title: "Sum of the open-circuit time constants (five capacitances)", result: "b1", expr: "tau1 + tau2 + tau3 + tau + tau4", source: octc },
  cascodeMillerCapacitance: { title: "Miller input capacitance of the input device, its drain at the node between the devices", result: "CM", expr: "CGI + CGO * (1 + AvX)", source: miller },
  cascodeNodePole: { title: "Pole of the node between the devices, with the Miller-reflected gate-drain capacitance", result: "f2", expr: "1 / (2 * pi * RX * (CX + CGO * (1 + 1 / AvX)))", source: miller },
  cascodeB2: {
    title: "Second-order coefficient (as √b2) that puts the two-pole denominator's roots at the open-circuit estimate and the non-dominant node pole",
    result: "b2",
    expr: "sqrt(b1 / (2 * pi * fp2))",
    source: octc,
  },
  cascodeOutputPole: { title: "Pole of the cascode stage's output node", result: "f3", expr: "1 / (2 * pi * RLP * CO)", source: nodal },
  // differential pair with a current-mirror load (M1/M2 input, M3 diode, M4 output)
  mirrorPairOutputNode: { title: "Resistance at the output of the pair with a mirror load", result: "RLP", expr: "1 / (gds2 + gds4)", source: nodal },
  mirrorPairMidband: { title: "Differential gain of the pair with a mirror load, single-ended output", result: "Av", expr: "gm1 * RLP", source: nodal },
  mirrorPairOutputCapacitance: { title: "Capacitance at the output of the pair with a mirror load (the input gates at AC ground for it)", result: "CO", expr: "CL + Cdb2i + Cds2i + Cgd2i + Cdb4 + Cds4 + Cgd4", source: nodal },
  mirrorPairOutputPole: { title: "Output (dominant) pole of the pair with a mirror load", result: "fp1", expr: "1 / (2 * pi * RLP * CO)", source: nodal },
  gainBandwidth: { title: "Gain-bandwidth product of a single-pole transconductance amplifier", result: "GBW", expr: "gm1 / (2 * pi * CO)", source: nodal },
  mirrorNodeCapacitance: {
    title: "Capacitance at the mirror's gate node (Cgd4 taken to AC ground: the output is held low by CO there)",
    result: "CMIR",
    expr: "Cgs3 + Cgs4 + Cgb3 + Cgb4 + Cdb3 + Cdb1 + Cds1 + Cgd1 + Cgd4",
    source: nodal,
  },
  mirrorPole: { title: "Mirror pole", result: "fm", expr: "gm3 / (2 * pi * CMIR)", source: nodal },
  mirrorZero: { title: "Mirror zero (left half plane: half the signal bypasses the mirror)", result: "fz", expr: "2 * fm", source: nodal },
  phaseMargin: { title: "Phase margin at the unity-gain frequency (output pole, mirror pole and zero)", result: "PM", expr: "180 - (atan(fu / fp1) + atan(fu / fm) - atan(fu / fz)) * 180 / pi", source: nodal },
  // source follower
  followerBridgeTimeConstant: {
    title: "Open-circuit time constant of the gate-source capacitance (follower)",
    result: "tau",
    expr: "CGO * (RSP + RSL) / (1 + gm * RSL)",
    source: octc,
  },
  followerOutputTimeConstant: { title: "Open-circuit time constant of the source-node capacitance (follower)", result: "tau", expr: "CO * RSL / (1 + gm * RSL)", source: octc },
  followerB2: {
    title: "Second-order coefficient of the follower denominator (as √b2)",
    result: "b2",
    expr: "sqrt(RSP * RSL * (CGI * CGO + CGI * CO + CGO * CO) / (1 + gm * RSL))",
    source: nodal,
  },
});
