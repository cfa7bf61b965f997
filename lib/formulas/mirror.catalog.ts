/**
 * Two-transistor stages: the current mirror with a reference resistor and the
 * common-source stage with a diode-connected load, each formula stated once.
 * As in bias.catalog.ts, node voltages are in the driving (or output) device's
 * own polarity (negated for a PMOS), V_DR is the rail its drain side returns to
 * and V_SR the rail its source sits at. Index 1 is the reference (mirror) or
 * driver (diode load) transistor, index 2 the output (mirror) or load transistor.
 */
import { defineFormulas, defineSymbols } from "./define.js";

const kcl = "Kirchhoff's laws with the square law (Shichman & Hodges, IEEE JSSC SC-3(3), 1968)";
const levelOne = "SPICE Level 1 (Shichman–Hodges) as implemented in ngspice";
const smallSignal = "small-signal model gm, gmb, gds of the square law; nodal analysis (common practice)";

export const symbols = defineSymbols({
  // shared with device.catalog.ts / bias.catalog.ts (identical tex and dim)
  Vt: { tex: "V_{t}", dim: "voltage", meaning: "threshold voltage" },
  VOV: { tex: "V_{OV}", dim: "voltage", meaning: "overdrive voltage VGS − Vt" },
  VDS: { tex: "V_{DS}", dim: "voltage", meaning: "drain-source voltage" },
  VSB: { tex: "V_{SB}", dim: "voltage", meaning: "source-body voltage" },
  Vt0: { tex: "V_{t0}", dim: "voltage", meaning: "zero-bias threshold voltage" },
  lambda: { tex: "\\lambda", dim: "inverseVoltage", meaning: "channel-length modulation coefficient" },
  gamma: { tex: "\\gamma", dim: "sqrtVoltage", meaning: "body-effect coefficient" },
  phi: { tex: "2\\phi_{F}", dim: "voltage", meaning: "surface potential at strong inversion" },
  VD: { tex: "V_{D}", dim: "voltage", meaning: "drain node voltage (device polarity)" },
  VDR: { tex: "V_{DR}", dim: "voltage", meaning: "rail the drain side returns to (device polarity)" },
  VSR: { tex: "V_{SR}", dim: "voltage", meaning: "rail the source side returns to (device polarity)" },
  Vspan: { tex: "V_{DR}-V_{SR}", dim: "voltage", meaning: "rail-to-rail span across the stage" },
  Av: { tex: "A_{v}", dim: "dimensionless", meaning: "small-signal voltage gain" },
  Rout: { tex: "R_{out}", dim: "resistance", meaning: "small-signal output resistance" },
  Vmin: { tex: "V_{min}", dim: "voltage", meaning: "lowest node voltage before a region change (device polarity)" },
  Vmax: { tex: "V_{max}", dim: "voltage", meaning: "highest node voltage before a region change (device polarity)" },
  // two-transistor quantities
  k1: { tex: "k_{1}", dim: "transconductanceParameter", meaning: "k'·W/L of transistor 1 (mirror reference, or driver)" },
  k2: { tex: "k_{2}", dim: "transconductanceParameter", meaning: "k'·W/L of transistor 2 (mirror output, or load)" },
  Nm: { tex: "N", dim: "dimensionless", meaning: "mirror ratio k2/k1 ((W/L)2/(W/L)1 for one process)" },
  RREF: { tex: "R_{REF}", dim: "resistance", meaning: "reference resistor from the drain-side rail to the diode-connected transistor" },
  IREF: { tex: "I_{REF}", dim: "current", meaning: "reference current" },
  IOUT: { tex: "I_{OUT}", dim: "current", meaning: "mirror output current" },
  VGS1: { tex: "V_{GS1}", dim: "voltage", meaning: "gate-source voltage of the diode-connected reference transistor (= its VDS)" },
  VGS1r: { tex: "V_{GS1}'", dim: "voltage", meaning: "second root of the reference-branch quadratic" },
  VDS2: { tex: "V_{DS2}", dim: "voltage", meaning: "drain-source voltage of transistor 2" },
  VDSr: { tex: "V_{DS}'", dim: "voltage", meaning: "second root of the triode quadratic in VDS" },
  VOV1: { tex: "V_{OV1}", dim: "voltage", meaning: "overdrive of the driver" },
  Vt2: { tex: "V_{t2}", dim: "voltage", meaning: "threshold magnitude of the load transistor" },
  VOUTmin: { tex: "V_{OUT,min}", dim: "voltage", meaning: "lowest output voltage that keeps the mirror output in saturation (device polarity)" },
  gm1: { tex: "g_{m1}", dim: "conductance", meaning: "transconductance of the driver" },
  gm2: { tex: "g_{m2}", dim: "conductance", meaning: "transconductance of the load" },
  gmb2: { tex: "g_{mb2}", dim: "conductance", meaning: "body transconductance of the load (0 when its source is at its body)" },
  gds1: { tex: "g_{ds1}", dim: "conductance", meaning: "output conductance of the driver" },
  gds2: { tex: "g_{ds2}", dim: "conductance", meaning: "output conductance of the load" },
  eta: { tex: "\\eta", dim: "dimensionless", meaning: "body-effect ratio gmb/gm" },
  VDsat: { tex: "V_{D,sat}", dim: "voltage", meaning: "drain-source saturation voltage" },
  yL: { tex: "y_{L}", dim: "sqrtVoltage", meaning: "√(2φF + VSB) of the load at the output where it stops conducting" },
});

export const formulas = defineFormulas({
  // --- current mirror: reference branch ---
  referenceOverdriveAtRail: {
    title: "Reference overdrive if RREF dropped nothing",
    result: "VOV",
    expr: "Vspan - Vt",
    source: kcl,
  },
  referenceGateSource: {
    title: "Mirror VGS from the reference branch (λ = 0): root of (k₁·RREF/2)·(VGS − Vt)² + VGS − (VDR − VSR) = 0 with VGS > Vt",
    result: "VGS1",
    expr: "Vt + 2 * (Vspan - Vt) / (1 + sqrt(1 + 2 * k1 * RREF * (Vspan - Vt)))",
    source: kcl,
  },
  referenceGateSourceRejected: {
    title: "Second root of the reference-branch quadratic",
    result: "VGS1r",
    expr: "Vt - (1 + sqrt(1 + 2 * k1 * RREF * (Vspan - Vt))) / (k1 * RREF)",
    source: kcl,
  },
  referenceCurrent: {
    title: "Reference current through RREF",
    result: "IREF",
    expr: "(Vspan - VGS1) / RREF",
    source: kcl,
  },
  referenceCurrentDiode: {
    title: "Reference current in the diode-connected transistor (VDS = VGS, always saturated)",
    result: "IREF",
    expr: "k1 / 2 * (VGS1 - Vt)^2 * (1 + lambda * VGS1)",
    source: kcl,
  },
  // --- current mirror: output ---
  mirrorRatio: { title: "Mirror ratio", result: "Nm", expr: "k2 / k1", source: "square law, equal VGS and Vt (common practice)" },
  mirrorOutputCurrent: {
    title: "Mirror output current in saturation, with channel-length modulation",
    result: "IOUT",
    expr: "IREF * Nm * (1 + lambda * VDS2) / (1 + lambda * VGS1)",
    source: kcl,
  },
  mirrorCompliance: {
    title: "Output compliance: lowest output voltage with the output transistor saturated",
    result: "VOUTmin",
    expr: "VSR + VOV",
    source: "square-law region boundary (common practice)",
  },
  mirrorComplianceSaturation: {
    title: "Output compliance with the output transistor's model: lowest output voltage with it saturated",
    result: "VOUTmin",
    expr: "VSR + VDsat",
    source: "the device model's own drain saturation voltage (velocity-saturated square law or EKV; common practice)",
  },
  mirrorOutputCurrentTriode: {
    title: "Mirror output current below compliance (output transistor in triode, with (1 + λ·VDS))",
    result: "IOUT",
    expr: "k2 * (VOV - VDS2 / 2) * VDS2 * (1 + lambda * VDS2)",
    source: levelOne,
  },
  // --- common source with a diode-connected load ---
  diodeLoadOutputVoltage: {
    title: "Output of the diode-loaded stage, driver saturated (λ = 0, no body effect): equal currents (k₁/2)·VOV1² = (k₂/2)·(VDR − VD − Vt2)²",
    result: "VD",
    expr: "VDR - Vt2 - sqrt(k1 / k2) * VOV1",
    source: kcl,
  },
  diodeLoadTriodeDrainSource: {
    title: "Driver VDS in triode (λ = 0, no body effect): smaller root of ((k₁+k₂)/2)·VDS² − (k₁·VOV1 + k₂·(VDR − VSR − Vt2))·VDS + (k₂/2)·(VDR − VSR − Vt2)² = 0",
    result: "VDS",
    expr: "k2 * (Vspan - Vt2)^2 / (k1 * VOV1 + k2 * (Vspan - Vt2) + sqrt((k1 * VOV1 + k2 * (Vspan - Vt2))^2 - (k1 + k2) * k2 * (Vspan - Vt2)^2))",
    source: kcl,
  },
  diodeLoadTriodeDrainSourceRejected: {
    title: "Larger root of the driver's triode equation",
    result: "VDSr",
    expr: "(k1 * VOV1 + k2 * (Vspan - Vt2) + sqrt((k1 * VOV1 + k2 * (Vspan - Vt2))^2 - (k1 + k2) * k2 * (Vspan - Vt2)^2)) / (k1 + k2)",
    source: kcl,
  },
  diodeLoadIdleOutput: {
    title: "Output with the driver cut off: the load diode stops conducting one threshold from its rail",
    result: "VD",
    expr: "VDR - Vt2",
    source: kcl,
  },
  diodeLoadIdleRoot: {
    title: "√(2φF + VSB) of a body-affected load where it stops conducting: root of y² + γ·y − (2φF + VDR − VSR − Vt0 + γ·√(2φF)) = 0",
    result: "yL",
    expr: "(sqrt(gamma^2 + 4 * (phi + Vspan - Vt0 + gamma * sqrt(phi))) - gamma) / 2",
    source: kcl,
  },
  diodeLoadIdleBodyBias: {
    title: "Load source-body voltage where it stops conducting",
    result: "VSB",
    expr: "yL^2 - phi",
    source: kcl,
  },
  diodeLoadGain: {
    title: "Gain with a diode-connected load, ro of both devices included",
    result: "Av",
    expr: "-gm1 / (gm2 + gmb2 + gds1 + gds2)",
    source: smallSignal,
  },
  diodeLoadGainNoRo: {
    title: "Gain with a diode-connected load, ro neglected",
    result: "Av",
    expr: "-gm1 / (gm2 + gmb2)",
    source: smallSignal,
  },
  diodeLoadGainSizing: {
    title: "Gain with a diode-connected load from the sizes (λ = 0, equal currents)",
    result: "Av",
    expr: "-sqrt(k1 / k2) / (1 + eta)",
    source: smallSignal,
  },
  bodyEffectRatio: {
    title: "Body-effect ratio gmb/gm",
    result: "eta",
    expr: "gamma / (2 * sqrt(phi + VSB))",
    source: "Shichman & Hodges, IEEE JSSC SC-3(3), 1968 (body effect)",
  },
  diodeLoadOutputResistance: {
    title: "Output resistance with a diode-connected load: 1/(gm2 + gmb2) ∥ ro1 ∥ ro2",
    result: "Rout",
    expr: "1 / (gm2 + gmb2 + gds1 + gds2)",
    source: smallSignal,
  },
  diodeLoadLowerSwing: {
    title: "Lowest output with the driver saturated (λ = 0, no body effect): driver at its triode edge, VD − VSR = VOV1",
    result: "Vmin",
    expr: "(sqrt(k2) * (VDR - Vt2) + sqrt(k1) * VSR) / (sqrt(k1) + sqrt(k2))",
    source: kcl,
  },
});
