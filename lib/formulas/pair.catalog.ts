/**
 * Differential pairs, cascodes and device mismatch: the hand figures a
 * designer reads off, each stated once. Voltages are in the input device's
 * own polarity (negated for a PMOS input) unless a symbol says otherwise;
 * conductances and currents are magnitudes. Index 1 is an input (or bottom)
 * device, 3 a load (or mirror) device, 5 the tail; "cas" the cascode device.
 */
import { defineFormulas, defineSymbols } from "./define.js";

const smallSignal = "small-signal model gm, gmb, gds of the square law; half-circuit and nodal analysis (common practice)";
const pelgrom = "Pelgrom, Duinmaijer & Welbers, \"Matching properties of MOS transistors\", IEEE JSSC 24(5), 1433–1440, 1989";
const pelgromPropagated = `${pelgrom}; referred to the input by small-signal analysis about the solved point (common practice)`;
const regionEdge = "square-law saturation condition VDS ≥ VGS − Vt of every device (common practice)";

export const symbols = defineSymbols({
  // shared with device.catalog.ts / mirror.catalog.ts (identical tex and dim)
  Vt: { tex: "V_{t}", dim: "voltage", meaning: "threshold voltage" },
  VOV: { tex: "V_{OV}", dim: "voltage", meaning: "overdrive voltage VGS − Vt" },
  VDR: { tex: "V_{DR}", dim: "voltage", meaning: "rail the drain side returns to (device polarity)" },
  VSR: { tex: "V_{SR}", dim: "voltage", meaning: "rail the source side returns to (device polarity)" },
  // pair and cascode quantities
  gmIn: { tex: "g_{m1}", dim: "conductance", meaning: "transconductance of an input device" },
  gdsIn: { tex: "g_{ds1}", dim: "conductance", meaning: "output conductance of an input device" },
  gmLd: { tex: "g_{m3}", dim: "conductance", meaning: "transconductance of a load (mirror) device" },
  gdsLd: { tex: "g_{ds3}", dim: "conductance", meaning: "output conductance of a load (mirror) device" },
  gTail: { tex: "g_{SS}", dim: "conductance", meaning: "output conductance of the tail current source (0 for an ideal source)" },
  RDp: { tex: "R_{D}", dim: "resistance", meaning: "load resistor of each side of the pair" },
  Adm: { tex: "A_{dm}", dim: "dimensionless", meaning: "differential gain, output over differential input" },
  Acm: { tex: "A_{cm}", dim: "dimensionless", meaning: "common-mode gain of a single-ended output" },
  Avc: { tex: "A_{v}", dim: "dimensionless", meaning: "small-signal voltage gain" },
  CMRR: { tex: "\\mathrm{CMRR}", dim: "dimensionless", meaning: "common-mode rejection ratio |Adm/Acm|" },
  ITAIL: { tex: "I_{SS}", dim: "current", meaning: "tail current of the pair" },
  CL: { tex: "C_{L}", dim: "capacitance", meaning: "load capacitance at the output" },
  SR: { tex: "SR", dim: "slewRate", meaning: "slew rate of the output" },
  VOVtail: { tex: "V_{OV5}", dim: "voltage", meaning: "overdrive (saturation voltage) of the tail device; 0 for an ideal tail" },
  VtIn: { tex: "V_{t1}", dim: "voltage", meaning: "threshold magnitude of an input device, with body effect" },
  VOVin: { tex: "V_{OV1}", dim: "voltage", meaning: "overdrive of an input device at balance" },
  VtLd: { tex: "V_{t3}", dim: "voltage", meaning: "threshold magnitude of a load (mirror) device" },
  VOVld: { tex: "V_{OV3}", dim: "voltage", meaning: "overdrive of a load (mirror) device" },
  VICmin: { tex: "V_{IC,min}", dim: "voltage", meaning: "lowest input common-mode voltage with every device saturated (device polarity)" },
  VICmax: { tex: "V_{IC,max}", dim: "voltage", meaning: "highest input common-mode voltage with every device saturated (device polarity)" },
  VIC: { tex: "V_{IC}", dim: "voltage", meaning: "input common-mode voltage (device polarity)" },
  VOmin: { tex: "V_{O,min}", dim: "voltage", meaning: "lowest output voltage with every device saturated (device polarity)" },
  VOmax: { tex: "V_{O,max}", dim: "voltage", meaning: "highest output voltage with every device saturated (device polarity)" },
  gdsLow: { tex: "g_{ds1}", dim: "conductance", meaning: "output conductance of the lower (input or mirror) device under a cascode" },
  gmCas: { tex: "g_{m2}", dim: "conductance", meaning: "transconductance of the cascode device" },
  gmbCas: { tex: "g_{mb2}", dim: "conductance", meaning: "body transconductance of the cascode device" },
  gdsCas: { tex: "g_{ds2}", dim: "conductance", meaning: "output conductance of the cascode device" },
  RoutCas: { tex: "R_{out}", dim: "resistance", meaning: "small-signal output resistance looking into the cascode drain" },
  VGcas: { tex: "V_{G,cas}", dim: "voltage", meaning: "gate voltage of the output cascode device (device polarity)" },
  VtCas: { tex: "V_{t,cas}", dim: "voltage", meaning: "threshold magnitude of the cascode device, with body effect" },
  VOUTcmp: { tex: "V_{OUT,c}", dim: "voltage", meaning: "output compliance: lowest output voltage with the cascode saturated (device polarity)" },
  VGSref: { tex: "V_{GS,cas}", dim: "voltage", meaning: "gate-source voltage of the cascode device" },
  VGSlow: { tex: "V_{GS1}", dim: "voltage", meaning: "gate-source voltage of the lower (mirror) device" },
  VCASmax: { tex: "V_{CAS,max}", dim: "voltage", meaning: "highest wide-swing cascode gate bias that keeps the reference cascode saturated (device polarity)" },
  VCASws: { tex: "V_{CAS}", dim: "voltage", meaning: "wide-swing cascode gate bias (device polarity)" },
  lambdaN: { tex: "\\lambda_{1}", dim: "inverseVoltage", meaning: "channel-length modulation of the input devices" },
  lambdaP: { tex: "\\lambda_{3}", dim: "inverseVoltage", meaning: "channel-length modulation of the load devices" },
  AvTarget: { tex: "A_{v}^{*}", dim: "dimensionless", meaning: "target differential gain" },
  VICmaxT: { tex: "V_{IC,max}^{*}", dim: "voltage", meaning: "highest input common mode the specification asks for (device polarity)" },
  VICminT: { tex: "V_{IC,min}^{*}", dim: "voltage", meaning: "lowest input common mode the specification asks for (device polarity)" },
  // mismatch
  AVT: { tex: "A_{V_t}", dim: "voltageLength", meaning: "Pelgrom threshold-mismatch coefficient" },
  ABETA: { tex: "A_{\\beta}", dim: "length", meaning: "Pelgrom current-factor mismatch coefficient" },
  Wm: { tex: "W", dim: "length", meaning: "channel width of each device of the matched pair" },
  Lm: { tex: "L", dim: "length", meaning: "channel length of each device of the matched pair" },
  sVt: { tex: "\\sigma_{\\Delta V_t}", dim: "voltage", meaning: "standard deviation of the threshold difference of a matched pair" },
  sBeta: { tex: "\\sigma_{\\Delta\\beta/\\beta}", dim: "dimensionless", meaning: "standard deviation of the relative current-factor difference of a matched pair" },
  sVtIn: { tex: "\\sigma_{\\Delta V_{t1}}", dim: "voltage", meaning: "σ(ΔVt) of the input pair" },
  sBetaIn: { tex: "\\sigma_{\\Delta\\beta_{1}}", dim: "dimensionless", meaning: "σ(Δβ/β) of the input pair" },
  sVtLd: { tex: "\\sigma_{\\Delta V_{t3}}", dim: "voltage", meaning: "σ(ΔVt) of the load mirror" },
  sBetaLd: { tex: "\\sigma_{\\Delta\\beta_{3}}", dim: "dimensionless", meaning: "σ(Δβ/β) of the load mirror" },
  gmIdIn: { tex: "(g_m/I_D)_{1}", dim: "inverseVoltageEfficiency", meaning: "transconductance efficiency of an input device" },
  gmIdMr: { tex: "g_m/I_D", dim: "inverseVoltageEfficiency", meaning: "transconductance efficiency of the mirror devices" },
  sVos: { tex: "\\sigma_{V_{OS}}", dim: "voltage", meaning: "standard deviation of the input-referred offset" },
  sIerr: { tex: "\\sigma_{\\Delta I/I}", dim: "dimensionless", meaning: "standard deviation of the relative output-current error of a mirror" },
  // the two-stage amplifier's second stage and bias mirror (σ's are each device's own pair σ by Pelgrom's law)
  sVt5: { tex: "\\sigma_{\\Delta V_{t5}}", dim: "voltage", meaning: "σ(ΔVt) by Pelgrom's law at the tail M5's area" },
  sBeta5: { tex: "\\sigma_{\\Delta\\beta_{5}}", dim: "dimensionless", meaning: "σ(Δβ/β) by Pelgrom's law at the tail M5's area" },
  sVt6: { tex: "\\sigma_{\\Delta V_{t6}}", dim: "voltage", meaning: "σ(ΔVt) by Pelgrom's law at the second-stage device M6's area" },
  sBeta6: { tex: "\\sigma_{\\Delta\\beta_{6}}", dim: "dimensionless", meaning: "σ(Δβ/β) by Pelgrom's law at M6's area" },
  sVt7: { tex: "\\sigma_{\\Delta V_{t7}}", dim: "voltage", meaning: "σ(ΔVt) by Pelgrom's law at the current sink M7's area" },
  sBeta7: { tex: "\\sigma_{\\Delta\\beta_{7}}", dim: "dimensionless", meaning: "σ(Δβ/β) by Pelgrom's law at M7's area" },
  sVt8: { tex: "\\sigma_{\\Delta V_{t8}}", dim: "voltage", meaning: "σ(ΔVt) by Pelgrom's law at the reference diode M8's area" },
  sBeta8: { tex: "\\sigma_{\\Delta\\beta_{8}}", dim: "dimensionless", meaning: "σ(Δβ/β) by Pelgrom's law at M8's area" },
  gmIdLd: { tex: "(g_m/I_D)_{3}", dim: "inverseVoltageEfficiency", meaning: "transconductance efficiency of a load device M3, M4" },
  gmId5: { tex: "(g_m/I_D)_{5}", dim: "inverseVoltageEfficiency", meaning: "transconductance efficiency of the tail M5" },
  gmId6: { tex: "(g_m/I_D)_{6}", dim: "inverseVoltageEfficiency", meaning: "transconductance efficiency of the second-stage device M6" },
  gmId7: { tex: "(g_m/I_D)_{7}", dim: "inverseVoltageEfficiency", meaning: "transconductance efficiency of the current sink M7" },
  gmId8: { tex: "(g_m/I_D)_{8}", dim: "inverseVoltageEfficiency", meaning: "transconductance efficiency of the reference diode M8" },
  A1: { tex: "|A_{1}|", dim: "dimensionless", meaning: "magnitude of the first stage's gain, vid to o1" },
  sVos1: { tex: "\\sigma_{V_{OS,1}}", dim: "voltage", meaning: "σ of the input-referred offset from the first stage's devices" },
  sG6: { tex: "\\sigma_{V_{GS6}}", dim: "voltage", meaning: "σ of the gate voltage M6 needs to carry M7's current" },
  sG3: { tex: "\\sigma_{V_{GS3}}", dim: "voltage", meaning: "σ of the load's gate level, set by the tail current" },
  sG8: { tex: "\\sigma_{V_{GS8}}", dim: "voltage", meaning: "σ of the reference M8's share, which M5 and M7 both mirror" },
  WLmin: { tex: "(W L)_{min}", dim: "area", meaning: "smallest gate area W·L of each input device for the target offset" },
  sVosTarget: { tex: "\\sigma_{V_{OS}}^{*}", dim: "voltage", meaning: "target standard deviation of the input-referred offset" },
});

export const formulas = defineFormulas({
  // --- gains ---
  pairDifferentialGain: {
    title: "Differential gain of the resistively loaded pair (differential output over differential input)",
    result: "Adm",
    expr: "gmIn / (1 / RDp + gdsIn)",
    source: smallSignal,
  },
  pairCommonModeGain: {
    title: "Common-mode gain to one output of the resistively loaded pair (λ neglected in the pair)",
    result: "Acm",
    expr: "-gmIn * RDp * gTail / (gTail + 2 * gmIn)",
    source: smallSignal,
  },
  pairRejection: {
    title: "CMRR of the resistively loaded pair, one output: (Adm/2)/|Acm| with ro ≫ RD",
    result: "CMRR",
    expr: "(gTail + 2 * gmIn) / (2 * gTail)",
    source: smallSignal,
  },
  mirrorLoadGain: {
    title: "Differential gain of the pair with a current-mirror load (single-ended output)",
    result: "Adm",
    expr: "gmIn / (gdsIn + gdsLd)",
    source: smallSignal,
  },
  mirrorLoadCommonModeGain: {
    title: "Common-mode gain of the pair with a current-mirror load (the mirror cancels all but the tail's share)",
    result: "Acm",
    expr: "-gTail / (2 * gmLd)",
    source: smallSignal,
  },
  mirrorLoadRejection: {
    title: "CMRR of the pair with a current-mirror load",
    result: "CMRR",
    expr: "2 * gmIn * gmLd / (gTail * (gdsIn + gdsLd))",
    source: smallSignal,
  },
  slewRate: { title: "Slew rate: the whole tail current charging the load capacitance", result: "SR", expr: "ITAIL / CL", source: "charge balance at the output node (common practice)" },
  // --- ranges ---
  pairCommonModeMin: {
    title: "Lowest input common mode: tail saturated under an input device at balance",
    result: "VICmin",
    expr: "VSR + VOVtail + VtIn + VOVin",
    source: regionEdge,
  },
  pairCommonModeMaxResistive: {
    title: "Highest input common mode with resistive loads: the input device stays saturated while its gate is below its drain plus Vt",
    result: "VICmax",
    expr: "VDR - RDp * ITAIL / 2 + VtIn",
    source: regionEdge,
  },
  pairCommonModeMaxMirror: {
    title: "Highest input common mode with a mirror load: the input drain sits one load VGS below the rail",
    result: "VICmax",
    expr: "VDR - VtLd - VOVld + VtIn",
    source: regionEdge,
  },
  mirrorLoadOutputMax: { title: "Highest output with the mirror load device saturated", result: "VOmax", expr: "VDR - VOVld", source: regionEdge },
  pairOutputMin: { title: "Lowest output with the input device saturated", result: "VOmin", expr: "VIC - VtIn", source: regionEdge },
  // --- cascode ---
  cascodeOutputResistance: {
    title: "Output resistance looking into the cascode drain, ro1 + ro2 + (gm2 + gmb2)·ro1·ro2 in conductances",
    result: "RoutCas",
    expr: "(gdsLow + gdsCas + gmCas + gmbCas) / (gdsLow * gdsCas)",
    source: smallSignal,
  },
  cascodeGain: {
    title: "Gain of the common-source stage with a cascode device, RD in parallel with the cascode's output resistance",
    result: "Avc",
    expr: "-gmIn / (1 / RDp + 1 / RoutCas)",
    source: smallSignal,
  },
  cascodeCompliance: {
    title: "Output compliance of a cascode: the cascode device leaves saturation one threshold below its gate",
    result: "VOUTcmp",
    expr: "VGcas - VtCas",
    source: regionEdge,
  },
  wideSwingBias: {
    title: "Wide-swing cascode gate bias: the lower device sits exactly at its saturation edge",
    result: "VCASws",
    expr: "VSR + VOV + VGSref",
    source: regionEdge,
  },
  wideSwingBiasMax: {
    title: "Highest wide-swing cascode gate bias: the reference cascode, whose drain is the lower devices' gate, stays saturated",
    result: "VCASmax",
    expr: "VSR + VGSlow + VtCas",
    source: regionEdge,
  },
  // --- design of the five-transistor amplifier ---
  mirrorLoadOverdriveForGain: {
    title: "Input overdrive for a target gain: Adm = gm1/(gds2 + gds4) = 2/(VOV1·(λ1 + λ3)) with equal currents",
    result: "VOVin",
    expr: "2 / (AvTarget * (lambdaN + lambdaP))",
    source: smallSignal,
  },
  mirrorLoadOverdriveForRange: {
    title: "Largest load overdrive that keeps the highest input common mode: from VIC,max = VDR − Vt3 − VOV3 + Vt1",
    result: "VOVld",
    expr: "VDR - VtLd + VtIn - VICmaxT",
    source: regionEdge,
  },
  tailOverdriveForRange: {
    title: "Largest tail overdrive that keeps the lowest input common mode: from VIC,min = VSR + VOV5 + Vt1 + VOV1",
    result: "VOVtail",
    expr: "VICminT - VSR - VtIn - VOVin",
    source: regionEdge,
  },
  // --- mismatch ---
  pelgromThreshold: { title: "Threshold mismatch of a pair by Pelgrom's law", result: "sVt", expr: "AVT / sqrt(Wm * Lm)", source: pelgrom },
  pelgromCurrentFactor: { title: "Current-factor mismatch of a pair by Pelgrom's law", result: "sBeta", expr: "ABETA / sqrt(Wm * Lm)", source: pelgrom },
  pairOffset: {
    title: "Input-referred offset of the pair from its own mismatch (ΔVt plus Δβ/β over gm/ID)",
    result: "sVos",
    expr: "sqrt(sVtIn^2 + (sBetaIn / gmIdIn)^2)",
    source: pelgrom,
  },
  pairOffsetMirrorLoad: {
    title: "Input-referred offset of the pair with a mirror load: the load's current error referred through gm1",
    result: "sVos",
    expr: "sqrt(sVtIn^2 + (sBetaIn / gmIdIn)^2 + (gmLd / gmIn)^2 * sVtLd^2 + (sBetaLd / gmIdIn)^2)",
    source: pelgrom,
  },
  secondStageGateSpread: {
    title: "Spread of the gate voltage M6 needs to carry the current M7 sinks (each device's own σ is its pair σ/√2)",
    result: "sG6",
    expr: "sqrt((sVt6^2 + (sBeta6^2 + sBeta7^2 + (gmId7 * sVt7)^2) / gmId6^2) / 2)",
    source: pelgromPropagated,
  },
  loadLevelSpread: {
    title: "Spread of the load's gate level that the second stage must match: the tail current's error through M3, M4 and the load pair's common part",
    result: "sG3",
    expr: "sqrt((sBeta5^2 + (gmId5 * sVt5)^2) / (2 * gmIdLd^2) + (sVtLd^2 + (sBetaLd / gmIdLd)^2) / 4)",
    source: pelgromPropagated,
  },
  referenceShare: {
    title: "Share of the reference M8, which M5 and M7 both mirror: it cancels when M6 and M3 match at equal gm/ID",
    result: "sG8",
    expr: "abs(gmId7 / gmId6 - gmId5 / gmIdLd) * sqrt((sVt8^2 + (sBeta8 / gmId8)^2) / 2)",
    source: pelgromPropagated,
  },
  twoStageOffset: {
    title: "Input-referred offset of the two-stage amplifier: the first stage's, plus the second stage's gate and the load's level mismatch divided by the first stage's gain",
    result: "sVos",
    expr: "sqrt(sVos1^2 + (sG6^2 + sG3^2 + sG8^2) / A1^2)",
    source: pelgromPropagated,
  },
  mirrorCurrentError: {
    title: "Relative output-current error of a mirror: Δβ/β plus gm/ID·ΔVt",
    result: "sIerr",
    expr: "sqrt(sBeta^2 + (gmIdMr * sVt)^2)",
    source: pelgrom,
  },
  offsetGateArea: {
    title: "Gate area W·L of each input device for a target offset σ (input pair only)",
    result: "WLmin",
    expr: "(AVT^2 + (ABETA / gmIdIn)^2) / sVosTarget^2",
    source: pelgrom,
  },
});
