/**
 * Device capacitances, each stated once: the Meyer gate-charge model with the
 * overlap capacitances of a SPICE Level 1 card (TOX, CGSO, CGDO, CGBO), the
 * junction capacitances from CJ, MJ, PB, CJSW, MJSW, FC with the drain and
 * source areas and perimeters (AD, AS, PD, PS), and the conversion of a discrete
 * part's datasheet Ciss, Crss, Coss into terminal capacitances.
 *
 * Meyer's region forms are written as SPICE evaluates them (the smoothed
 * transition through weak inversion, VOV between −2φF and 0), so the numbers
 * agree with the capacitances ngspice reports for a Level 1 device.
 */
import { defineFormulas, defineSymbols } from "./define.js";

const meyer = "J. E. Meyer, \"MOS models and circuit simulation\", RCA Review 32, 1971, pp. 42–63; region forms as in SPICE2 / ngspice Level 1";
const junction = "depletion capacitance of a graded junction, with the linear extension above FC·PB used by SPICE2 / ngspice Level 1";
const table = "the simulator's small-signal capacitances of the foundry device (BSIM4 Cgg, Cgs, Cgd) per width, interpolated in the characterisation table (lib/process/lookup.ts)";
const bsim4Overlap = "BSIM4 capMod = 2 bias-dependent overlap capacitance, without the smoothing of Vgx near 0 (BSIM4.5.0 MOSFET Model User's Manual, UC Berkeley, 2005, chapter on capacitance modelling; from memory)";
const datasheet = "datasheet capacitances of a discrete MOSFET: Ciss = Cgs + Cgd, Crss = Cgd, Coss = Cds + Cgd (common practice)";

export const symbols = defineSymbols({
  // shared with device.catalog.ts (identical tex and dim)
  W: { tex: "W", dim: "length", meaning: "channel width" },
  L: { tex: "L", dim: "length", meaning: "channel length" },
  VDS: { tex: "V_{DS}", dim: "voltage", meaning: "drain-source voltage" },
  VOV: { tex: "V_{OV}", dim: "voltage", meaning: "overdrive voltage VGS − Vt" },
  phi: { tex: "2\\phi_{F}", dim: "voltage", meaning: "surface potential at strong inversion" },
  // oxide and overlap
  epsox: { tex: "\\varepsilon_{ox}", dim: "capacitancePerWidth", meaning: "permittivity of the gate oxide (3.9·ε0)" },
  tox: { tex: "t_{ox}", dim: "length", meaning: "gate oxide thickness (SPICE TOX)" },
  Cox: { tex: "C_{ox}", dim: "capacitancePerArea", meaning: "gate oxide capacitance per area" },
  Cch: { tex: "C_{ox}WL", dim: "capacitance", meaning: "gate oxide capacitance over the channel" },
  CGSO: { tex: "C_{GSO}", dim: "capacitancePerWidth", meaning: "gate-source overlap capacitance per channel width (SPICE CGSO)" },
  CGDO: { tex: "C_{GDO}", dim: "capacitancePerWidth", meaning: "gate-drain overlap capacitance per channel width (SPICE CGDO)" },
  CGBO: { tex: "C_{GBO}", dim: "capacitancePerWidth", meaning: "gate-body overlap capacitance per channel length (SPICE CGBO)" },
  Cgs: { tex: "C_{gs}", dim: "capacitance", meaning: "gate-source capacitance" },
  Cgd: { tex: "C_{gd}", dim: "capacitance", meaning: "gate-drain capacitance" },
  Cgb: { tex: "C_{gb}", dim: "capacitance", meaning: "gate-body capacitance" },
  Cds: { tex: "C_{ds}", dim: "capacitance", meaning: "drain-source capacitance" },
  // junctions
  CJ: { tex: "C_{J}", dim: "capacitancePerArea", meaning: "zero-bias bottom junction capacitance per area (SPICE CJ)" },
  CJSW: { tex: "C_{JSW}", dim: "capacitancePerWidth", meaning: "zero-bias sidewall junction capacitance per perimeter (SPICE CJSW)" },
  MJ: { tex: "M_{J}", dim: "dimensionless", meaning: "bottom junction grading coefficient (SPICE MJ)" },
  MJSW: { tex: "M_{JSW}", dim: "dimensionless", meaning: "sidewall junction grading coefficient (SPICE MJSW)" },
  PB: { tex: "\\phi_{B}", dim: "voltage", meaning: "junction built-in potential (SPICE PB)" },
  FC: { tex: "F_{C}", dim: "dimensionless", meaning: "forward-bias depletion capacitance coefficient (SPICE FC)" },
  AD: { tex: "A_{D}", dim: "area", meaning: "drain diffusion area" },
  AS: { tex: "A_{S}", dim: "area", meaning: "source diffusion area" },
  PerD: { tex: "P_{D}", dim: "length", meaning: "drain diffusion perimeter" },
  PerS: { tex: "P_{S}", dim: "length", meaning: "source diffusion perimeter" },
  Ldif: { tex: "L_{dif}", dim: "length", meaning: "length of the drain or source diffusion (layout)" },
  VBD: { tex: "V_{BD}", dim: "voltage", meaning: "body-drain voltage (device polarity)" },
  VBS: { tex: "V_{BS}", dim: "voltage", meaning: "body-source voltage (device polarity)" },
  Cdb: { tex: "C_{db}", dim: "capacitance", meaning: "drain-body junction capacitance" },
  Csb: { tex: "C_{sb}", dim: "capacitance", meaning: "source-body junction capacitance" },
  // datasheet
  // characterisation table (foundry device), per width at the operating point
  CGXO: { tex: "C_{GxO}", dim: "capacitancePerWidth", meaning: "bias-independent overlap capacitance per width of one side (BSIM4 CGSO or CGDO)" },
  CGXL: { tex: "C_{GxL}", dim: "capacitancePerWidth", meaning: "bias-dependent overlap capacitance per width of one side (BSIM4 CGSL or CGDL)" },
  CKAPPA: { tex: "C_{KAPPA}", dim: "voltage", meaning: "overlap-region coefficient of one side (BSIM4 CKAPPAS or CKAPPAD)" },
  Vgx: { tex: "V_{gx}", dim: "voltage", meaning: "gate voltage over the overlapped diffusion (VGS or VGD, device polarity)" },
  CovW: { tex: "C_{ov}/W", dim: "capacitancePerWidth", meaning: "small-signal overlap capacitance per width of one side" },
  CgsW: { tex: "C_{gs}/W", dim: "capacitancePerWidth", meaning: "gate-source capacitance per width from the characterisation table" },
  CgdW: { tex: "C_{gd}/W", dim: "capacitancePerWidth", meaning: "gate-drain capacitance per width from the characterisation table" },
  CggW: { tex: "C_{gg}/W", dim: "capacitancePerWidth", meaning: "total gate capacitance per unit width (from the table)" },
  Ciss: { tex: "C_{iss}", dim: "capacitance", meaning: "input capacitance, drain shorted to source (datasheet)" },
  Crss: { tex: "C_{rss}", dim: "capacitance", meaning: "reverse transfer capacitance (datasheet)" },
  Coss: { tex: "C_{oss}", dim: "capacitance", meaning: "output capacitance, gate shorted to source (datasheet)" },
});

export const formulas = defineFormulas({
  oxideCapacitance: { title: "Gate oxide capacitance per area", result: "Cox", expr: "epsox / tox", source: "parallel-plate capacitor (common practice)" },
  channelCapacitance: { title: "Gate oxide capacitance over the channel", result: "Cch", expr: "Cox * W * L", source: meyer },
  gateSourceSaturation: { title: "Gate-source capacitance in saturation", result: "Cgs", expr: "2/3 * Cch + CGSO * W", source: meyer },
  gateDrainOverlap: { title: "Gate-drain capacitance (overlap only)", result: "Cgd", expr: "CGDO * W", source: meyer },
  gateSourceOverlap: { title: "Gate-source capacitance (overlap only)", result: "Cgs", expr: "CGSO * W", source: meyer },
  gateBodyOverlap: { title: "Gate-body capacitance (overlap only)", result: "Cgb", expr: "CGBO * L", source: meyer },
  gateSourceTriode: {
    title: "Gate-source capacitance in triode",
    result: "Cgs",
    expr: "2/3 * Cch * (1 - (VOV - VDS)^2 / (2 * VOV - VDS)^2) + CGSO * W",
    source: meyer,
  },
  gateDrainTriode: {
    title: "Gate-drain capacitance in triode",
    result: "Cgd",
    expr: "2/3 * Cch * (1 - VOV^2 / (2 * VOV - VDS)^2) + CGDO * W",
    source: meyer,
  },
  gateBodyAccumulation: { title: "Gate-body capacitance below −2φF (accumulation)", result: "Cgb", expr: "Cch + CGBO * L", source: meyer },
  gateBodyDepletion: { title: "Gate-body capacitance in depletion (−2φF < VOV ≤ 0)", result: "Cgb", expr: "-VOV / phi * Cch + CGBO * L", source: meyer },
  gateSourceWeak: {
    title: "Gate-source capacitance near threshold (−φF < VOV ≤ 0)",
    result: "Cgs",
    expr: "(2/3 + 4/3 * VOV / phi) * Cch + CGSO * W",
    source: meyer,
  },
  drainJunction: {
    title: "Drain-body junction capacitance (reverse or weak forward bias)",
    result: "Cdb",
    expr: "CJ * AD * (1 - VBD / PB)^(-MJ) + CJSW * PerD * (1 - VBD / PB)^(-MJSW)",
    source: junction,
  },
  drainJunctionForward: {
    title: "Drain-body junction capacitance above FC·PB (linear extension)",
    result: "Cdb",
    expr: "CJ * AD * (1 - FC)^(-1 - MJ) * (1 - FC * (1 + MJ) + MJ * VBD / PB) + CJSW * PerD * (1 - FC)^(-1 - MJSW) * (1 - FC * (1 + MJSW) + MJSW * VBD / PB)",
    source: junction,
  },
  sourceJunction: {
    title: "Source-body junction capacitance (reverse or weak forward bias)",
    result: "Csb",
    expr: "CJ * AS * (1 - VBS / PB)^(-MJ) + CJSW * PerS * (1 - VBS / PB)^(-MJSW)",
    source: junction,
  },
  sourceJunctionForward: {
    title: "Source-body junction capacitance above FC·PB (linear extension)",
    result: "Csb",
    expr: "CJ * AS * (1 - FC)^(-1 - MJ) * (1 - FC * (1 + MJ) + MJ * VBS / PB) + CJSW * PerS * (1 - FC)^(-1 - MJSW) * (1 - FC * (1 + MJSW) + MJSW * VBS / PB)",
    source: junction,
  },
  drainAreaDefault: { title: "Drain area from the diffusion length", result: "AD", expr: "W * Ldif", source: "rectangular diffusion W × Ldif (common practice)" },
  drainPerimeterDefault: { title: "Drain perimeter from the diffusion length", result: "PerD", expr: "2 * (W + Ldif)", source: "rectangular diffusion W × Ldif, all four sides (common practice; SPICE Level 1 counts the whole perimeter)" },
  sourceAreaDefault: { title: "Source area from the diffusion length", result: "AS", expr: "W * Ldif", source: "rectangular diffusion W × Ldif (common practice)" },
  sourcePerimeterDefault: { title: "Source perimeter from the diffusion length", result: "PerS", expr: "2 * (W + Ldif)", source: "rectangular diffusion W × Ldif, all four sides (common practice; SPICE Level 1 counts the whole perimeter)" },
  tableGateSource: { title: "Gate-source capacitance from the characterisation table", result: "Cgs", expr: "CgsW * W", source: table },
  tableGateDrain: { title: "Gate-drain capacitance from the characterisation table", result: "Cgd", expr: "CgdW * W", source: table },
  overlapAccumulated: { title: "Overlap capacitance per width, overlapped diffusion accumulated (Vgx ≥ 0)", result: "CovW", expr: "CGXO + CGXL", source: bsim4Overlap },
  overlapDepleted: { title: "Overlap capacitance per width, overlapped diffusion depleted (Vgx < 0)", result: "CovW", expr: "CGXO + CGXL * (1 - 1 / sqrt(1 - 4 * Vgx / CKAPPA))", source: bsim4Overlap },
  tableGateSourceOverlap: { title: "Gate-source capacitance: the table's intrinsic Cgs/W and the source-side overlap, times W", result: "Cgs", expr: "(CgsW + CovW) * W", source: table },
  tableGateDrainOverlap: { title: "Gate-drain capacitance: the table's intrinsic Cgd/W and the drain-side overlap, times W", result: "Cgd", expr: "(CgdW + CovW) * W", source: table },
  tableGateBody: { title: "Gate-body capacitance from the characterisation table (the rest of Cgg)", result: "Cgb", expr: "(CggW - CgsW - CgdW) * W", source: table },
  datasheetGateSource: { title: "Gate-source capacitance from the datasheet", result: "Cgs", expr: "Ciss - Crss", source: datasheet },
  datasheetGateDrain: { title: "Gate-drain capacitance from the datasheet", result: "Cgd", expr: "Crss", source: datasheet },
  datasheetDrainSource: { title: "Drain-source capacitance from the datasheet", result: "Cds", expr: "Coss - Crss", source: datasheet },
});
