/**
 * Design formulas: from a stage specification to ideal component values, each
 * stated once. As in bias.catalog.ts, V_G, V_S, V_D, V_DR and V_SR are node
 * voltages in the device's own polarity (negated for a PMOS), so one set of
 * equations designs both polarities. The gate divider is named by the rail each
 * half returns to: R_G,DR to the drain-side rail (RG1 of an NMOS, RG2 of a
 * PMOS), R_G,SR to the source-side rail.
 */
import { defineFormulas, defineSymbols } from "./define.js";

const kcl = "Kirchhoff's laws with the square law (Shichman & Hodges, IEEE JSSC SC-3(3), 1968)";
const smallSignal = "small-signal model gm, gmb, gds of the square law; nodal analysis (common practice)";

export const symbols = defineSymbols({
  // shared with device.catalog.ts / bias.catalog.ts (identical tex and dim)
  VGS: { tex: "V_{GS}", dim: "voltage", meaning: "gate-source voltage" },
  Vt: { tex: "V_{t}", dim: "voltage", meaning: "threshold voltage" },
  VOV: { tex: "V_{OV}", dim: "voltage", meaning: "overdrive voltage VGS − Vt" },
  ID: { tex: "I_{D}", dim: "current", meaning: "drain current" },
  gm: { tex: "g_{m}", dim: "conductance", meaning: "transconductance" },
  gmb: { tex: "g_{mb}", dim: "conductance", meaning: "body transconductance" },
  gds: { tex: "g_{ds}", dim: "conductance", meaning: "output conductance" },
  W: { tex: "W", dim: "length", meaning: "channel width" },
  L: { tex: "L", dim: "length", meaning: "channel length" },
  WL: { tex: "W/L", dim: "dimensionless", meaning: "aspect ratio" },
  VG: { tex: "V_{G}", dim: "voltage", meaning: "gate node voltage (device polarity)" },
  VS: { tex: "V_{S}", dim: "voltage", meaning: "source node voltage (device polarity)" },
  VDsat: { tex: "V_{D,sat}", dim: "voltage", meaning: "drain-source saturation voltage" },
  VD: { tex: "V_{D}", dim: "voltage", meaning: "drain node voltage (device polarity)" },
  VDR: { tex: "V_{DR}", dim: "voltage", meaning: "rail the drain side returns to (device polarity)" },
  VSR: { tex: "V_{SR}", dim: "voltage", meaning: "rail the source side returns to (device polarity)" },
  RD: { tex: "R_{D}", dim: "resistance", meaning: "drain resistor" },
  RS: { tex: "R_{S}", dim: "resistance", meaning: "source resistor" },
  Rin: { tex: "R_{in}", dim: "resistance", meaning: "small-signal input resistance" },
  RF: { tex: "R_{F}", dim: "resistance", meaning: "drain-to-gate feedback resistor" },
  P: { tex: "P", dim: "power", meaning: "power dissipated" },
  // shared with mirror.catalog.ts (identical tex and dim)
  Nm: { tex: "N", dim: "dimensionless", meaning: "mirror ratio k2/k1 ((W/L)2/(W/L)1 for one process)" },
  RREF: { tex: "R_{REF}", dim: "resistance", meaning: "reference resistor from the drain-side rail to the diode-connected transistor" },
  IREF: { tex: "I_{REF}", dim: "current", meaning: "reference current" },
  IOUT: { tex: "I_{OUT}", dim: "current", meaning: "mirror output current" },
  VGS1: { tex: "V_{GS1}", dim: "voltage", meaning: "gate-source voltage of the diode-connected reference transistor (= its VDS)" },
  VOUTmin: { tex: "V_{OUT,min}", dim: "voltage", meaning: "lowest output voltage that keeps the mirror output in saturation (device polarity)" },
  // design quantities
  VRS: { tex: "V_{RS}", dim: "voltage", meaning: "voltage across the source resistor (source-voltage budget)" },
  fRS: { tex: "f_{S}", dim: "dimensionless", meaning: "fraction of the rail span given to the source resistor" },
  Idiv: { tex: "I_{div}", dim: "current", meaning: "gate divider current" },
  nDiv: { tex: "n_{div}", dim: "dimensionless", meaning: "gate divider current as a fraction of the drain current" },
  RGDR: { tex: "R_{G,DR}", dim: "resistance", meaning: "gate divider resistor to the drain-side rail" },
  RGSR: { tex: "R_{G,SR}", dim: "resistance", meaning: "gate divider resistor to the source-side rail" },
  WL1: { tex: "(W/L)_{1}", dim: "dimensionless", meaning: "aspect ratio of the mirror's reference transistor" },
  RL: { tex: "R_{L}", dim: "resistance", meaning: "load resistor from the mirror output to the drain-side rail" },
  VOUT: { tex: "V_{OUT}", dim: "voltage", meaning: "mirror output node voltage (device polarity)" },
  Vt2: { tex: "V_{t2}", dim: "voltage", meaning: "threshold magnitude of the load transistor" },
  VOV2: { tex: "V_{OV2}", dim: "voltage", meaning: "overdrive of the diode-connected load" },
  AvMag: { tex: "|A_{v}|", dim: "dimensionless", meaning: "magnitude of the small-signal voltage gain" },
  Prated: { tex: "P_{rated}", dim: "power", meaning: "rated power of a part" },
  fDerate: { tex: "f_{derate}", dim: "dimensionless", meaning: "fraction of the rating the design may use" },
  Pmax: { tex: "P_{max}", dim: "power", meaning: "allowed dissipation after derating" },
});

export const formulas = defineFormulas({
  sourceDropFromFraction: {
    title: "Source-resistor voltage as a fraction of the rail span",
    result: "VRS",
    expr: "fRS * (VDR - VSR)",
    source: "common practice: about a quarter to a third of the supply across RS for bias stability",
  },
  sourceNodeFromDrop: { title: "Source voltage from the source-resistor drop", result: "VS", expr: "VSR + VRS", source: kcl },
  sourceResistorForDrop: { title: "Source resistor for its voltage at the drain current", result: "RS", expr: "VRS / ID", source: "Ohm's law" },
  gateNodeForDrive: { title: "Gate voltage that gives the gate-source drive", result: "VG", expr: "VS + VGS", source: kcl },
  midSwingDrain: {
    title: "Drain voltage halfway between the triode edge (VG − Vt) and the drain rail",
    result: "VD",
    expr: "(VDR + VG - Vt) / 2",
    source: "common practice: drain at mid-swing for the largest symmetric output",
  },
  midSwingDrainSaturation: {
    title: "Drain voltage halfway between the model's triode edge (VS + VDsat) and the drain rail",
    result: "VD",
    expr: "(VDR + VS + VDsat) / 2",
    source: "common practice: drain at mid-swing for the largest symmetric output; VDsat from the device model",
  },
  drainResistorForNode: { title: "Drain resistor for a drain voltage at the drain current", result: "RD", expr: "(VDR - VD) / ID", source: "Ohm's law" },
  drainResistorForGain: {
    title: "Drain resistor for a common-source gain (source at AC ground), inverse of −gm·(RD ∥ ro)",
    result: "RD",
    expr: "AvMag / (gm - AvMag * gds)",
    source: smallSignal,
  },
  drainResistorForDegeneratedGain: {
    title: "Drain resistor for a gain with source degeneration, inverse of gm·RD / (1 + (gm + gmb)·RS + gds·(RD + RS))",
    result: "RD",
    expr: "AvMag * (1 + (gm + gmb + gds) * RS) / (gm - AvMag * gds)",
    source: smallSignal,
  },
  dividerCurrentFromRatio: {
    title: "Gate divider current as a fraction of the drain current",
    result: "Idiv",
    expr: "nDiv * ID",
    source: "common practice: a divider current of about a tenth of ID",
  },
  dividerToDrainRail: { title: "Gate divider resistor to the drain-side rail", result: "RGDR", expr: "(VDR - VG) / Idiv", source: "Ohm's law" },
  dividerToSourceRail: { title: "Gate divider resistor to the source-side rail", result: "RGSR", expr: "(VG - VSR) / Idiv", source: "Ohm's law" },
  dividerToDrainRailForRin: {
    title: "Gate divider resistor to the drain-side rail for an input resistance",
    result: "RGDR",
    expr: "Rin * (VDR - VSR) / (VG - VSR)",
    source: "voltage divider with RG,DR ∥ RG,SR = Rin (common practice)",
  },
  dividerToSourceRailForRin: {
    title: "Gate divider resistor to the source-side rail for an input resistance",
    result: "RGSR",
    expr: "Rin * (VDR - VSR) / (VDR - VG)",
    source: "voltage divider with RG,DR ∥ RG,SR = Rin (common practice)",
  },
  followerMidSwing: {
    title: "Follower source voltage halfway between the source rail and the triode edge VDR − VOV",
    result: "VS",
    expr: "(VDR - VOV + VSR) / 2",
    source: "common practice: output at mid-swing for the largest symmetric swing",
  },
  sourceDropFromNode: { title: "Voltage across the source resistor", result: "VRS", expr: "VS - VSR", source: kcl },
  sourceNodeBelowGate: { title: "Source voltage below the held gate", result: "VS", expr: "VG - VGS", source: kcl },
  feedbackResistorForRin: {
    title: "Feedback resistor for an input resistance, inverse of RF/(1 − Av) with Av = (1 − gm·RF)·RD/(RF + RD + gds·RD·RF)",
    result: "RF",
    expr: "(Rin * (1 + (gm + gds) * RD) - RD) / (1 + gds * RD)",
    source: smallSignal,
  },
  mirrorMidOutput: {
    title: "Mirror output halfway between compliance and the drain rail",
    result: "VOUT",
    expr: "(VDR + VOUTmin) / 2",
    source: "common practice: output at mid-range for the largest swing either way",
  },
  referenceAspectRatio: { title: "Reference transistor aspect ratio for a mirror ratio", result: "WL1", expr: "WL / Nm", source: "square law, equal VGS and Vt (common practice)" },
  referenceResistor: {
    title: "Reference resistor for the reference current",
    result: "RREF",
    expr: "(VDR - VSR - VGS1) / IREF",
    source: kcl,
  },
  mirrorLoadResistor: { title: "Load resistor for the output voltage at the output current", result: "RL", expr: "(VDR - VOUT) / IOUT", source: "Ohm's law" },
  diodeLoadMidOutput: {
    title: "Diode-loaded output halfway between the driver's triode edge VSR + VOV and the load's conduction edge VDR − Vt2",
    result: "VOUT",
    expr: "(VSR + VOV + VDR - Vt2) / 2",
    source: "common practice: output at mid-range for the largest swing either way",
  },
  diodeLoadMidOutputSaturation: {
    title: "Diode-loaded output halfway between the driver's triode edge VSR + VDsat (its model) and the load's conduction edge VDR − Vt2",
    result: "VOUT",
    expr: "(VSR + VDsat + VDR - Vt2) / 2",
    source: "common practice: output at mid-range for the largest swing either way; VDsat from the device model",
  },
  diodeLoadOverdrive: { title: "Overdrive of the diode-connected load", result: "VOV2", expr: "VDR - VOUT - Vt2", source: kcl },
  widthForRatio: { title: "Channel width for an aspect ratio", result: "W", expr: "WL * L", source: "definition of the aspect ratio" },
  allowedPower: { title: "Allowed dissipation after derating", result: "Pmax", expr: "Prated * fDerate", source: "common practice: derate parts below their rated power" },
});
