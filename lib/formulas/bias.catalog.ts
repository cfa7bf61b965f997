/**
 * Bias-network formulas: the hand analysis of single-transistor stages, each
 * stated once. Voltages named V_G, V_S, V_D, V_DR, V_SR are node voltages in the
 * device's own polarity (for a PMOS each is the negated node voltage, so the
 * same equations serve both polarities); V_DR is the rail the drain resistor
 * returns to and V_SR the rail the source side returns to.
 */
import { defineFormulas, defineSymbols } from "./define.js";

const kcl = "Kirchhoff's laws with the square law (Shichman & Hodges, IEEE JSSC SC-3(3), 1968)";
const smallSignal = "small-signal model gm, gmb, gds of the square law; nodal analysis (common practice)";

export const symbols = defineSymbols({
  // shared with device.catalog.ts (identical tex and dim)
  VGS: { tex: "V_{GS}", dim: "voltage", meaning: "gate-source voltage" },
  VDS: { tex: "V_{DS}", dim: "voltage", meaning: "drain-source voltage" },
  Vt: { tex: "V_{t}", dim: "voltage", meaning: "threshold voltage" },
  VOV: { tex: "V_{OV}", dim: "voltage", meaning: "overdrive voltage VGS − Vt" },
  k: { tex: "k", dim: "transconductanceParameter", meaning: "device transconductance parameter k'·W/L" },
  ID: { tex: "I_{D}", dim: "current", meaning: "drain current" },
  gm: { tex: "g_{m}", dim: "conductance", meaning: "transconductance" },
  gmb: { tex: "g_{mb}", dim: "conductance", meaning: "body transconductance" },
  gds: { tex: "g_{ds}", dim: "conductance", meaning: "output conductance" },
  // supplies and nodes
  VDD: { tex: "V_{DD}", dim: "voltage", meaning: "upper supply rail" },
  VSS: { tex: "V_{SS}", dim: "voltage", meaning: "lower supply rail (0 V for a single supply)" },
  VGG: { tex: "V_{GG}", dim: "voltage", meaning: "open-circuit gate bias voltage of the divider" },
  VG: { tex: "V_{G}", dim: "voltage", meaning: "gate node voltage (device polarity)" },
  VS: { tex: "V_{S}", dim: "voltage", meaning: "source node voltage (device polarity)" },
  VD: { tex: "V_{D}", dim: "voltage", meaning: "drain node voltage (device polarity)" },
  VDR: { tex: "V_{DR}", dim: "voltage", meaning: "rail the drain side returns to (device polarity)" },
  VSR: { tex: "V_{SR}", dim: "voltage", meaning: "rail the source side returns to (device polarity)" },
  Vspan: { tex: "V_{DR}-V_{SR}", dim: "voltage", meaning: "rail-to-rail span across the stage" },
  VOV0: { tex: "V_{OV0}", dim: "voltage", meaning: "overdrive with no drop across the source side: VG − VSR − Vt" },
  VOVr: { tex: "V_{OV}'", dim: "voltage", meaning: "second root of the overdrive quadratic" },
  VDSr: { tex: "V_{DS}'", dim: "voltage", meaning: "second root of the triode quadratic in VDS" },
  VOVD: { tex: "V_{OVD}", dim: "voltage", meaning: "overdrive at the drain end VGD − Vt" },
  tqa: { tex: "a_{t}", dim: "inverseVoltage", meaning: "quadratic coefficient of the triode equation in VDS" },
  tqb: { tex: "b_{t}", dim: "dimensionless", meaning: "linear coefficient of the triode equation in VDS" },
  // components
  RG1: { tex: "R_{G1}", dim: "resistance", meaning: "gate divider resistor to VDD" },
  RG2: { tex: "R_{G2}", dim: "resistance", meaning: "gate divider resistor to VSS" },
  RG: { tex: "R_{G}", dim: "resistance", meaning: "Thevenin resistance of the gate bias" },
  RD: { tex: "R_{D}", dim: "resistance", meaning: "drain resistor" },
  RS: { tex: "R_{S}", dim: "resistance", meaning: "source resistor" },
  RF: { tex: "R_{F}", dim: "resistance", meaning: "drain-to-gate feedback resistor" },
  ISS: { tex: "I_{SS}", dim: "current", meaning: "ideal bias current source at the source" },
  R: { tex: "R", dim: "resistance", meaning: "a resistor" },
  I: { tex: "I", dim: "current", meaning: "current through a component" },
  V: { tex: "V", dim: "voltage", meaning: "voltage across a component" },
  P: { tex: "P", dim: "power", meaning: "power dissipated" },
  // metrics
  Av: { tex: "A_{v}", dim: "dimensionless", meaning: "small-signal voltage gain" },
  Rin: { tex: "R_{in}", dim: "resistance", meaning: "small-signal input resistance" },
  Rout: { tex: "R_{out}", dim: "resistance", meaning: "small-signal output resistance" },
  Vmin: { tex: "V_{min}", dim: "voltage", meaning: "lowest node voltage before a region change (device polarity)" },
  Vmax: { tex: "V_{max}", dim: "voltage", meaning: "highest node voltage before a region change (device polarity)" },
  Vsat: { tex: "V_{DS}-V_{OV}", dim: "voltage", meaning: "saturation margin" },
});

export const formulas = defineFormulas({
  dividerGate: {
    title: "Gate bias from the divider (no gate current)",
    result: "VGG",
    // Written with the ratio RG1/RG2 so that no product overflows for resistances up to the largest double.
    expr: "VSS + (VDD - VSS) / (1 + RG1 / RG2)",
    source: "voltage divider, Kirchhoff's laws (common practice)",
  },
  dividerResistance: {
    title: "Thevenin resistance of the gate divider",
    result: "RG",
    expr: "RG1 / (1 + RG1 / RG2)",
    source: "Thevenin's theorem (common practice)",
  },
  railOverdrive: { title: "Overdrive with the source at its rail", result: "VOV0", expr: "VG - VSR - Vt", source: kcl },
  feedbackRailOverdrive: {
    title: "Overdrive with the gate at the drain rail (drain feedback, ID = 0)",
    result: "VOV0",
    expr: "VDR - VSR - Vt",
    source: kcl,
  },
  degeneratedOverdrive: {
    title: "Overdrive in saturation with source degeneration (λ = 0): root of (k·RS/2)·VOV² + VOV − VOV0 = 0",
    result: "VOV",
    expr: "2 * VOV0 / (1 + sqrt(1 + 2 * k * RS * VOV0))",
    source: kcl,
  },
  degeneratedOverdriveRejected: {
    title: "Second root of the overdrive quadratic",
    result: "VOVr",
    expr: "-(1 + sqrt(1 + 2 * k * RS * VOV0)) / (k * RS)",
    source: kcl,
  },
  feedbackOverdrive: {
    title: "Overdrive in saturation with drain feedback (λ = 0): root of (k·(RD+RS)/2)·VOV² + VOV − VOV0 = 0",
    result: "VOV",
    expr: "2 * VOV0 / (1 + sqrt(1 + 2 * k * (RD + RS) * VOV0))",
    source: kcl,
  },
  feedbackOverdriveRejected: {
    title: "Second root of the drain-feedback overdrive quadratic",
    result: "VOVr",
    expr: "-(1 + sqrt(1 + 2 * k * (RD + RS) * VOV0)) / (k * (RD + RS))",
    source: kcl,
  },
  sourceNode: { title: "Source voltage from the drain current", result: "VS", expr: "VSR + ID * RS", source: kcl },
  drainNode: { title: "Drain voltage from the drain current", result: "VD", expr: "VDR - ID * RD", source: kcl },
  drainSourceVoltage: { title: "Drain-source voltage", result: "VDS", expr: "VD - VS", source: kcl },
  gateSourceVoltageNodes: { title: "Gate-source voltage", result: "VGS", expr: "VG - VS", source: kcl },
  railSpan: { title: "Rail span across the stage", result: "Vspan", expr: "VDR - VSR", source: kcl },
  triodeQuadA: {
    title: "Triode equation in VDS: quadratic coefficient",
    result: "tqa",
    expr: "k * (RS - RD) / 2",
    source: kcl,
  },
  triodeQuadB: {
    title: "Triode equation in VDS: linear coefficient",
    result: "tqb",
    expr: "1 + k * ((RD + RS) * VOV0 - RS * Vspan)",
    source: kcl,
  },
  triodeDrainSource: {
    title: "VDS in triode (λ = 0): root of a·VDS² + b·VDS − (VDR − VSR) = 0",
    result: "VDS",
    expr: "2 * Vspan / (tqb + sqrt(tqb^2 + 4 * tqa * Vspan))",
    source: kcl,
  },
  triodeDrainSourceRejected: {
    title: "Second root of the triode equation in VDS",
    result: "VDSr",
    expr: "2 * Vspan / (tqb - sqrt(tqb^2 + 4 * tqa * Vspan))",
    source: kcl,
  },
  currentFromDrainSource: {
    title: "Drain current from VDS (series RD + RS across the rails)",
    result: "ID",
    expr: "(Vspan - VDS) / (RD + RS)",
    source: kcl,
  },
  sinkOverdrive: { title: "Overdrive that carries the bias current in saturation (λ = 0)", result: "VOV", expr: "sqrt(2 * ISS / k)", source: kcl },
  sourceBelowGate: { title: "Source voltage below the gate", result: "VS", expr: "VG - Vt - VOV", source: kcl },
  drainOverdrive: { title: "Overdrive at the drain end", result: "VOVD", expr: "VG - VD - Vt", source: kcl },
  sinkTriodeDrainSource: {
    title: "VDS in triode carrying the bias current (λ = 0): root of (k/2)·VDS² + k·VOVD·VDS − ISS = 0",
    result: "VDS",
    expr: "2 * ISS / (k * VOVD + sqrt(k^2 * VOVD^2 + 2 * k * ISS))",
    source: kcl,
  },
  sinkTriodeDrainSourceRejected: {
    title: "Second root of the triode equation with a bias current",
    result: "VDSr",
    expr: "-(k * VOVD + sqrt(k^2 * VOVD^2 + 2 * k * ISS)) / k",
    source: kcl,
  },
  sourceFromDrain: { title: "Source voltage from the drain and VDS", result: "VS", expr: "VD - VDS", source: kcl },
  drainNodeSink: { title: "Drain voltage with the bias current in RD", result: "VD", expr: "VDR - ISS * RD", source: kcl },
  saturationMargin: { title: "Saturation margin", result: "Vsat", expr: "VDS - VOV", source: "square-law region boundary (Shichman & Hodges, 1968)" },
  // power
  resistorPower: { title: "Resistor dissipation", result: "P", expr: "I^2 * R", source: "Joule's law" },
  resistorPowerFromVoltage: { title: "Resistor dissipation", result: "P", expr: "V^2 / R", source: "Joule's law" },
  devicePower: { title: "Transistor dissipation", result: "P", expr: "ID * VDS", source: "common practice" },
  sourcePower: { title: "Power in an ideal current source", result: "P", expr: "I * V", source: "common practice" },
  // small-signal metrics
  commonSourceGain: { title: "Common-source gain (source at AC ground)", result: "Av", expr: "-gm * RD / (1 + gds * RD)", source: smallSignal },
  commonSourceOutput: { title: "Common-source output resistance RD ∥ ro", result: "Rout", expr: "RD / (1 + gds * RD)", source: smallSignal },
  degeneratedGain: {
    title: "Common-source gain with source degeneration",
    result: "Av",
    expr: "-gm * RD / (1 + (gm + gmb) * RS + gds * (RD + RS))",
    source: smallSignal,
  },
  degeneratedOutput: {
    title: "Output resistance with source degeneration: RD ∥ (ro·(1 + (gm + gmb)·RS) + RS)",
    result: "Rout",
    expr: "RD * (1 + (gm + gmb) * RS + gds * RS) / (1 + (gm + gmb) * RS + gds * (RS + RD))",
    source: smallSignal,
  },
  followerGain: { title: "Source-follower gain", result: "Av", expr: "gm * RS / (1 + (gm + gmb + gds) * RS)", source: smallSignal },
  followerOutput: { title: "Source-follower output resistance", result: "Rout", expr: "RS / (1 + (gm + gmb + gds) * RS)", source: smallSignal },
  commonGateGain: { title: "Common-gate gain", result: "Av", expr: "(gm + gmb + gds) * RD / (1 + gds * RD)", source: smallSignal },
  commonGateInput: { title: "Common-gate input resistance", result: "Rin", expr: "(1 + gds * RD) / (gm + gmb + gds)", source: smallSignal },
  feedbackGain: {
    title: "Drain-feedback stage gain (source at AC ground)",
    result: "Av",
    expr: "(1 - gm * RF) * RD / (RF + RD + gds * RD * RF)",
    source: smallSignal,
  },
  feedbackInput: { title: "Drain-feedback input resistance (Miller)", result: "Rin", expr: "RF / (1 - Av)", source: smallSignal },
  feedbackOutput: { title: "Drain-feedback output resistance RD ∥ RF ∥ ro", result: "Rout", expr: "RD * RF / (RD + RF + gds * RD * RF)", source: smallSignal },
  // swing
  triodeEdgeDrain: { title: "Drain at the triode edge (gate held; the swing limit toward the source rail, in device polarity)", result: "Vmin", expr: "VG - Vt", source: "square-law region boundary (common practice)" },
  followerUpperSwing: {
    title: "Highest follower output before triode (overdrive held)",
    result: "Vmax",
    expr: "VD - VOV",
    source: "square-law region boundary (common practice)",
  },
});
