/**
 * Long-channel MOSFET formulas, each stated once. Symbols use magnitudes in the
 * device's own polarity: for a PMOS, VGS here is VSG, VDS is VSD and Vt is |Vt|
 * (the sign handling lives in device/card.ts, polaritySign).
 */
import { defineFormulas, defineSymbols } from "./define.js";

const squareLaw = "Shichman & Hodges, IEEE JSSC SC-3(3), 1968 (square law; SPICE Level 1)";
const levelOne = "SPICE Level 1 (Shichman–Hodges) as implemented in ngspice";

export const symbols = defineSymbols({
  VGS: { tex: "V_{GS}", dim: "voltage", meaning: "gate-source voltage" },
  VDS: { tex: "V_{DS}", dim: "voltage", meaning: "drain-source voltage" },
  VSB: { tex: "V_{SB}", dim: "voltage", meaning: "source-body voltage" },
  Vt: { tex: "V_{t}", dim: "voltage", meaning: "threshold voltage" },
  Vt0: { tex: "V_{t0}", dim: "voltage", meaning: "zero-bias threshold voltage" },
  VOV: { tex: "V_{OV}", dim: "voltage", meaning: "overdrive voltage VGS − Vt" },
  kp: { tex: "k'", dim: "transconductanceParameter", meaning: "process transconductance parameter µ·Cox" },
  k: { tex: "k", dim: "transconductanceParameter", meaning: "device transconductance parameter k'·W/L" },
  W: { tex: "W", dim: "length", meaning: "channel width" },
  L: { tex: "L", dim: "length", meaning: "channel length" },
  WL: { tex: "W/L", dim: "dimensionless", meaning: "aspect ratio" },
  lambda: { tex: "\\lambda", dim: "inverseVoltage", meaning: "channel-length modulation coefficient" },
  gamma: { tex: "\\gamma", dim: "sqrtVoltage", meaning: "body-effect coefficient" },
  phi: { tex: "2\\phi_{F}", dim: "voltage", meaning: "surface potential at strong inversion" },
  ID: { tex: "I_{D}", dim: "current", meaning: "drain current" },
  gm: { tex: "g_{m}", dim: "conductance", meaning: "transconductance" },
  gmb: { tex: "g_{mb}", dim: "conductance", meaning: "body transconductance" },
  gds: { tex: "g_{ds}", dim: "conductance", meaning: "output conductance" },
  ro: { tex: "r_{o}", dim: "resistance", meaning: "small-signal output resistance" },
  Ron: { tex: "R_{on}", dim: "resistance", meaning: "deep-triode on-resistance" },
  A0: { tex: "A_{0}", dim: "dimensionless", meaning: "intrinsic gain gm·ro" },
  gmId: { tex: "g_{m}/I_{D}", dim: "inverseVoltageEfficiency", meaning: "transconductance efficiency" },
  T: { tex: "T", dim: "temperature", meaning: "device temperature" },
  T0: { tex: "T_{0}", dim: "temperature", meaning: "reference temperature of the card" },
  alphaVt: { tex: "\\alpha_{V_t}", dim: "voltagePerKelvin", meaning: "threshold temperature coefficient" },
  kp0: { tex: "k'_{0}", dim: "transconductanceParameter", meaning: "k' at the reference temperature" },
  muExp: { tex: "m_{\\mu}", dim: "dimensionless", meaning: "mobility temperature exponent" },
  Ecrit: { tex: "E_{sat}", dim: "electricField", meaning: "critical field for velocity saturation" },
  Ecrit0: { tex: "E_{sat,0}", dim: "electricField", meaning: "critical field at the reference temperature" },
  UT: { tex: "U_{T}", dim: "voltage", meaning: "thermal voltage kT/q" },
  n: { tex: "n", dim: "dimensionless", meaning: "subthreshold slope factor" },
  IC: { tex: "IC", dim: "dimensionless", meaning: "inversion coefficient IF/IS (forward over specific current)" },
  IF: { tex: "I_{F}", dim: "current", meaning: "forward (saturation-equivalent) drain current" },
  ID0: { tex: "I_{D0}", dim: "current", meaning: "saturation current extrapolated to VDS = 0" },
});

export const formulas = defineFormulas({
  overdrive: { title: "Overdrive voltage", result: "VOV", expr: "VGS - Vt", source: squareLaw },
  gateSourceVoltage: { title: "Gate-source voltage for an overdrive", result: "VGS", expr: "Vt + VOV", source: squareLaw },
  deviceGain: { title: "Device transconductance parameter", result: "k", expr: "kp * W / L", source: squareLaw },
  deviceGainFromRatio: { title: "Device transconductance parameter", result: "k", expr: "kp * WL", source: squareLaw },
  bodyEffectThreshold: {
    title: "Threshold with body effect",
    result: "Vt",
    expr: "Vt0 + gamma * (sqrt(phi + VSB) - sqrt(phi))",
    source: squareLaw,
  },
  bodyEffectThresholdForward: {
    title: "Threshold under forward body bias (linearised)",
    result: "Vt",
    expr: "Vt0 + gamma * VSB / (2 * sqrt(phi))",
    source: levelOne,
  },
  triodeCurrent: {
    title: "Drain current in triode",
    result: "ID",
    expr: "k * (VOV - VDS / 2) * VDS",
    source: squareLaw,
  },
  triodeCurrentClm: {
    title: "Drain current in triode, with (1 + λ·VDS)",
    result: "ID",
    expr: "k * (VOV - VDS / 2) * VDS * (1 + lambda * VDS)",
    source: levelOne,
  },
  saturationCurrent: { title: "Drain current in saturation", result: "ID", expr: "k / 2 * VOV^2", source: squareLaw },
  // The same square law, named for what it is where it feeds the inversion level (not the drain current when λ ≠ 0 or in triode).
  forwardCurrent: { title: "Forward current (saturation-equivalent, without λ)", result: "IF", expr: "k / 2 * VOV^2", source: squareLaw },
  saturationCurrentClm: {
    title: "Drain current in saturation, with channel-length modulation",
    result: "ID",
    expr: "k / 2 * VOV^2 * (1 + lambda * VDS)",
    source: squareLaw,
  },
  transconductanceSat: {
    title: "Transconductance in saturation",
    result: "gm",
    expr: "k * VOV * (1 + lambda * VDS)",
    source: squareLaw,
  },
  transconductanceFromCurrent: {
    title: "Transconductance from drain current",
    result: "gm",
    expr: "sqrt(2 * k * ID * (1 + lambda * VDS))",
    source: squareLaw,
  },
  transconductanceFromOverdrive: {
    title: "Transconductance from current and overdrive",
    result: "gm",
    expr: "2 * ID / VOV",
    source: squareLaw,
  },
  outputConductanceSat: {
    title: "Output conductance in saturation",
    result: "gds",
    expr: "lambda * k / 2 * VOV^2",
    source: levelOne,
  },
  transconductanceTriode: {
    title: "Transconductance in triode",
    result: "gm",
    expr: "k * VDS * (1 + lambda * VDS)",
    source: levelOne,
  },
  outputConductanceTriode: {
    title: "Output conductance in triode",
    result: "gds",
    expr: "k * (VOV - VDS) * (1 + lambda * VDS) + lambda * k * (VOV - VDS / 2) * VDS",
    source: levelOne,
  },
  bodyTransconductance: {
    title: "Body transconductance",
    result: "gmb",
    expr: "gm * gamma / (2 * sqrt(phi + VSB))",
    source: squareLaw,
  },
  bodyTransconductanceForward: {
    title: "Body transconductance under forward body bias (linearised)",
    result: "gmb",
    expr: "gm * gamma / (2 * (sqrt(phi) + VSB / (2 * sqrt(phi))))",
    source: levelOne,
  },
  outputResistance: { title: "Small-signal output resistance", result: "ro", expr: "1 / gds", source: "common practice" },
  intrinsicGain: { title: "Intrinsic gain", result: "A0", expr: "gm / gds", source: "common practice" },
  transconductanceEfficiency: { title: "Transconductance efficiency", result: "gmId", expr: "gm / ID", source: "common practice" },
  onResistance: { title: "Deep-triode on-resistance", result: "Ron", expr: "1 / (k * VOV)", source: squareLaw },
  overdriveForCurrent: {
    title: "Overdrive for a drain current in saturation",
    result: "VOV",
    expr: "sqrt(2 * ID / (k * (1 + lambda * VDS)))",
    source: squareLaw,
  },
  aspectRatioForCurrent: {
    title: "Aspect ratio for a drain current at an overdrive",
    result: "WL",
    expr: "2 * ID / (kp * VOV^2 * (1 + lambda * VDS))",
    source: squareLaw,
  },
  aspectRatioForTransconductance: {
    title: "Aspect ratio for a transconductance at an overdrive",
    result: "WL",
    expr: "gm / (kp * VOV * (1 + lambda * VDS))",
    source: squareLaw,
  },
  currentForTransconductance: {
    title: "Drain current for a transconductance at an overdrive",
    result: "ID",
    expr: "gm * VOV / 2",
    source: squareLaw,
  },
  thresholdAtTemperature: {
    title: "Threshold magnitude at temperature",
    result: "Vt0",
    expr: "Vt0 + alphaVt * (T - T0)",
    source: "linear threshold drift, common practice",
  },
  mobilityAtTemperature: {
    title: "Process transconductance at temperature",
    result: "kp",
    expr: "kp0 * (T / T0)^(-muExp)",
    source: "mobility power law, common practice",
  },
  criticalFieldAtTemperature: {
    title: "Critical field for velocity saturation at temperature",
    // Esat ∝ vsat/µ with the saturation velocity held (it falls far more slowly with temperature than µ):
    // the field rises as the mobility falls. The open 180 nm NMOS (L = 1 µm) predicted from 25 °C: 7.8/8.1 % → 7.2/7.5 % RMS at −40/125 °C.
    result: "Ecrit",
    expr: "Ecrit0 * (T / T0)^muExp",
    source: "Esat ∝ vsat/µ (Tsividis & McAndrew, Operation and Modeling of the MOS Transistor, 3rd ed., 2011, from memory) with vsat independent of temperature (a first-cut choice)",
  },
  inversionCoefficient: {
    title: "Inversion coefficient",
    result: "IC",
    expr: "IF / (2 * n * k * UT^2)",
    source: "Enz, Krummenacher & Vittoz, Analog Integrated Circuits and Signal Processing 8, 1995 (EKV specific current)",
  },
  weakInversionEfficiency: {
    title: "Transconductance efficiency in weak inversion",
    result: "gmId",
    expr: "1 / (n * UT)",
    source: "Enz, Krummenacher & Vittoz, Analog Integrated Circuits and Signal Processing 8, 1995 (weak-inversion limit of gm/ID)",
  },
  lambdaFromSlope: {
    title: "Channel-length modulation from the saturation slope",
    result: "lambda",
    expr: "gds / ID0",
    source: squareLaw,
  },
  processGainFromDeviceGain: {
    title: "Process transconductance from the device value",
    result: "kp",
    expr: "k / WL",
    source: squareLaw,
  },
});
