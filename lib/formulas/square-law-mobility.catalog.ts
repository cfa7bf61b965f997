/**
 * The square law with mobility degradation and velocity saturation, in the
 * device's own polarity (magnitudes for a PMOS, as in device.catalog.ts).
 * Mobility falls with the gate field as µeff = µ0/(1 + θ·VOV); the carrier
 * velocity saturates with the lateral field, which divides the triode current by
 * (1 + VDS/(Esat·L)). VDsat is where that current peaks (∂ID/∂VDS = 0), so ID
 * and gds are continuous there; beyond it the current is held at its peak times
 * (1 + λ·VDS). Threshold and body effect are the square law's (device.catalog.ts).
 */
import { defineFormulas, defineSymbols } from "./define.js";

const velocitySaturation =
  "velocity-saturation form of Sodini, Ko & Moll, IEEE Trans. Electron Devices 31(10), 1984, as restated in Tsividis & McAndrew, Operation and Modeling of the MOS Transistor, 3rd ed., Oxford 2011 (from memory)";
const mobilityDegradation = "µeff = µ0/(1 + θ·VOV), Tsividis & McAndrew, Operation and Modeling of the MOS Transistor, 3rd ed., Oxford 2011 (from memory)";

export const symbols = defineSymbols({
  VOV: { tex: "V_{OV}", dim: "voltage", meaning: "overdrive voltage VGS − Vt" },
  VDS: { tex: "V_{DS}", dim: "voltage", meaning: "drain-source voltage" },
  L: { tex: "L", dim: "length", meaning: "channel length" },
  k: { tex: "k", dim: "transconductanceParameter", meaning: "device transconductance parameter k'·W/L" },
  ID: { tex: "I_{D}", dim: "current", meaning: "drain current" },
  lambda: { tex: "\\lambda", dim: "inverseVoltage", meaning: "channel-length modulation coefficient" },
  theta: { tex: "\\theta", dim: "inverseVoltage", meaning: "mobility degradation coefficient" },
  Ecrit: { tex: "E_{sat}", dim: "electricField", meaning: "critical field for velocity saturation" },
  keff: { tex: "k_{eff}", dim: "transconductanceParameter", meaning: "device transconductance parameter with mobility degradation" },
  VDsat: { tex: "V_{D,sat}", dim: "voltage", meaning: "drain-source saturation voltage" },
});

export const formulas = defineFormulas({
  degradedDeviceGain: {
    title: "Device transconductance parameter with mobility degradation",
    result: "keff",
    expr: "k / (1 + theta * VOV)",
    source: mobilityDegradation,
  },
  velocitySaturationVoltage: {
    title: "Drain saturation voltage with velocity saturation",
    // VOV·Esat·L·(√(1 + 2·VOV/(Esat·L)) − 1)/VOV rationalised: exact, and finite when Esat → ∞ (VDsat → VOV).
    result: "VDsat",
    expr: "2 * VOV / (1 + sqrt(1 + 2 * VOV / (Ecrit * L)))",
    source: velocitySaturation,
  },
  velocitySaturatedTriodeCurrent: {
    title: "Drain current below VDsat, with velocity saturation",
    result: "ID",
    expr: "keff * (VOV - VDS / 2) * VDS * (1 + lambda * VDS) / (1 + VDS / (Ecrit * L))",
    source: velocitySaturation,
  },
  velocitySaturatedCurrent: {
    title: "Drain current beyond VDsat, with velocity saturation",
    result: "ID",
    expr: "keff * (VOV - VDsat / 2) * VDsat * (1 + lambda * VDS) / (1 + VDsat / (Ecrit * L))",
    source: velocitySaturation,
  },
});
