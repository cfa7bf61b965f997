/**
 * A discrete MOSFET from its datasheet: the square-law device parameter k and
 * threshold Vt derived from the typical figures a datasheet states (forward
 * transconductance at a current, threshold at a current, on-resistance at a
 * gate drive), and the thermal figures its ratings are checked with. Device
 * polarity magnitudes, as in device.catalog.ts.
 */
import { defineFormulas, defineSymbols } from "./define.js";

const squareLaw = "Shichman & Hodges, IEEE JSSC SC-3(3), 1968 (square law), applied to datasheet typical values (common practice)";
const thermal = "steady-state junction temperature from the thermal resistance (common practice; JEDEC JESD51 defines RθJA)";

export const symbols = defineSymbols({
  // shared with device.catalog.ts (identical tex and dim)
  k: { tex: "k", dim: "transconductanceParameter", meaning: "device transconductance parameter k'·W/L" },
  Vt: { tex: "V_{t}", dim: "voltage", meaning: "threshold voltage" },
  VOV: { tex: "V_{OV}", dim: "voltage", meaning: "overdrive voltage VGS − Vt" },
  Ron: { tex: "R_{on}", dim: "resistance", meaning: "deep-triode on-resistance" },
  P: { tex: "P", dim: "power", meaning: "power dissipated" },
  // datasheet figures
  gfs: { tex: "g_{fs}", dim: "conductance", meaning: "forward transconductance stated on the datasheet" },
  IDfs: { tex: "I_{D,fs}", dim: "current", meaning: "drain current at which gfs is stated" },
  VGSth: { tex: "V_{GS(th)}", dim: "voltage", meaning: "gate threshold voltage stated on the datasheet" },
  IDth: { tex: "I_{D,th}", dim: "current", meaning: "drain current at which VGS(th) is stated" },
  RDSon: { tex: "R_{DS(on)}", dim: "resistance", meaning: "on-resistance stated on the datasheet" },
  ronRatio: { tex: "R_{on}/R_{DS(on)}", dim: "dimensionless", meaning: "model on-resistance over the stated one" },
  // thermal
  Ta: { tex: "T_{A}", dim: "temperature", meaning: "ambient temperature" },
  Tj: { tex: "T_{J}", dim: "temperature", meaning: "junction temperature" },
  Tjmax: { tex: "T_{J(max)}", dim: "temperature", meaning: "maximum junction temperature rating" },
  Tpd: { tex: "T_{PD}", dim: "temperature", meaning: "temperature at which the power rating PD is stated" },
  PD: { tex: "P_{D}", dim: "power", meaning: "power dissipation rating at its stated temperature" },
  PDat: { tex: "P_{D}(T_{A})", dim: "power", meaning: "power rating derated to the ambient temperature" },
  RthJA: { tex: "R_{\\theta JA}", dim: "thermalResistance", meaning: "junction-to-ambient thermal resistance" },
  RthJC: { tex: "R_{\\theta JC}", dim: "thermalResistance", meaning: "junction-to-case thermal resistance (datasheet)" },
  RthCA: { tex: "R_{\\theta CA}", dim: "thermalResistance", meaning: "case-to-ambient thermal resistance: the interface and the heat sink" },
});

export const formulas = defineFormulas({
  kFromForwardTransconductance: {
    title: "Device parameter from the forward transconductance (gfs = √(2·k·ID) in saturation)",
    result: "k",
    expr: "gfs^2 / (2 * IDfs)",
    source: squareLaw,
  },
  thresholdFromGateThreshold: {
    title: "Threshold from the gate threshold voltage (VGS(th) = Vt + √(2·ID/k) at its stated current)",
    result: "Vt",
    expr: "VGSth - sqrt(2 * IDth / k)",
    source: squareLaw,
  },
  onResistanceRatio: { title: "Model on-resistance against the datasheet's", result: "ronRatio", expr: "Ron / RDSon", source: "common practice" },
  junctionTemperature: { title: "Junction temperature", result: "Tj", expr: "Ta + P * RthJA", source: thermal },
  junctionTemperatureThroughCase: {
    title: "Junction temperature through the case and its heat sink (series thermal path)",
    result: "Tj",
    expr: "Ta + P * (RthJC + RthCA)",
    source: "steady-state junction temperature through the series path junction–case–ambient (common practice; the free-air path in parallel is left out, which errs high)",
  },
  deratedPowerRating: {
    title: "Power rating derated linearly from its stated temperature to the maximum junction temperature",
    result: "PDat",
    expr: "PD * (Tjmax - Ta) / (Tjmax - Tpd)",
    source: "linear derating to zero at TJ(max) (common practice on power MOSFET datasheets)",
  },
});
