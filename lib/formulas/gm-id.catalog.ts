/**
 * gm/ID sizing from a characterisation table (Silveira, Flandre & Jespers,
 * IEEE JSSC 31(9), 1264–1273, 1996): the table gives, at a chosen gm/ID, L, VDS
 * and VSB, the current per width and the per-width or per-current small-signal
 * figures; the design scales them by W. Between two characterised lengths the
 * current density is interpolated linearly in 1/L.
 */
import { defineFormulas, defineSymbols } from "./define.js";

const method = "gm/ID method (Silveira, Flandre & Jespers, IEEE JSSC 31(9), 1264–1273, 1996)";

export const symbols = defineSymbols({
  // shared with device.catalog.ts (identical tex and dim)
  ID: { tex: "I_{D}", dim: "current", meaning: "drain current" },
  W: { tex: "W", dim: "length", meaning: "channel width" },
  L: { tex: "L", dim: "length", meaning: "channel length" },
  gm: { tex: "g_{m}", dim: "conductance", meaning: "transconductance" },
  gds: { tex: "g_{ds}", dim: "conductance", meaning: "output conductance" },
  gmId: { tex: "g_{m}/I_{D}", dim: "inverseVoltageEfficiency", meaning: "transconductance efficiency" },
  VOV: { tex: "V_{OV}", dim: "voltage", meaning: "overdrive voltage VGS − Vt" },
  // gm/ID method
  JD: { tex: "I_{D}/W", dim: "currentPerWidth", meaning: "drain current per unit width at the chosen gm/ID (from the table)" },
  JD1: { tex: "(I_{D}/W)_{1}", dim: "currentPerWidth", meaning: "current per width at the shorter characterised length" },
  JD2: { tex: "(I_{D}/W)_{2}", dim: "currentPerWidth", meaning: "current per width at the longer characterised length" },
  L1: { tex: "L_{1}", dim: "length", meaning: "shorter characterised length" },
  L2: { tex: "L_{2}", dim: "length", meaning: "longer characterised length" },
  gdsId: { tex: "g_{ds}/I_{D}", dim: "inverseVoltageEfficiency", meaning: "output conductance per drain current (from the table)" },
  CggW: { tex: "C_{gg}/W", dim: "capacitancePerWidth", meaning: "total gate capacitance per unit width (from the table)" },
  Cgg: { tex: "C_{gg}", dim: "capacitance", meaning: "total gate capacitance ∂Qg/∂Vg" },
  fT: { tex: "f_{T}", dim: "frequency", meaning: "transit frequency" },
  P: { tex: "P", dim: "power", meaning: "power budget of the branch" },
  m: { tex: "m", dim: "count", meaning: "number of identical devices in parallel (the multiplier)" },
  Wunit: { tex: "W_{u}", dim: "length", meaning: "width of each of the m parallel devices (the unit device)" },
  VDD: { tex: "V_{DD}", dim: "voltage", meaning: "supply voltage across the branch" },
});

export const formulas = defineFormulas({
  currentDensityBetweenLengths: {
    title: "Current per width between two characterised lengths",
    result: "JD",
    expr: "JD1 + (JD2 - JD1) * (1 / L - 1 / L1) / (1 / L2 - 1 / L1)",
    source: "linear interpolation in 1/L: exact for a current density that scales as 1/L, and the coordinate binned BSIM4 parameters are linear in (common practice)",
  },
  widthForCurrentDensity: { title: "Width from the current per width", result: "W", expr: "ID / JD", source: method },
  widthPerDevice: {
    title: "Width of each parallel device",
    result: "Wunit",
    expr: "W / m",
    source: "common practice: m identical devices side by side carry m times the current of one, so a width above the process's maximum is drawn as m devices of W/m",
  },
  transconductanceFromEfficiency: { title: "Transconductance from gm/ID", result: "gm", expr: "gmId * ID", source: method },
  outputConductanceFromRatio: { title: "Output conductance from gds/ID", result: "gds", expr: "gdsId * ID", source: method },
  gateCapacitanceFromDensity: { title: "Gate capacitance from Cgg/W", result: "Cgg", expr: "CggW * W", source: method },
  transitFrequency: { title: "Transit frequency", result: "fT", expr: "gm / (6.283185307179586 * Cgg)", source: "common practice (fT = gm/(2π·Cgg))" },
  currentForBudget: { title: "Branch current allowed by the power budget", result: "ID", expr: "P / VDD", source: "common practice" },
  overdriveFromEfficiency: { title: "Overdrive for a gm/ID by the square law", result: "VOV", expr: "2 / gmId", source: "square law in saturation (Shichman & Hodges, IEEE JSSC SC-3(3), 1968): gm/ID = 2/VOV" },
});
