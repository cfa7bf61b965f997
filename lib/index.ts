/**
 * pinchoff numeric core: plain numbers in SI units with branded types. This
 * entry point loads no parser, typesetter or plotting library; those live in
 * "pinchoff/units", "pinchoff/render" and "pinchoff/notebook".
 */
export * from "./quantity.js";
export * from "./errors.js";
export * from "./device/card.js";
export * from "./device/region.js";
export * from "./device/threshold.js";
export * from "./device/drain-current.js";
export * from "./device/small-signal.js";
export * from "./device/inverse.js";
export * from "./device/inversion.js";
export * from "./device/temperature.js";
export * from "./device/extract.js";
export { Derivation, unitOf, derivationSchemaVersion } from "./record/derivation.js";
export type * from "./record/derivation.js";
export type { Formula, FormulaSpec, SymbolSpec } from "./formulas/define.js";
export * as deviceFormulas from "./formulas/device.formulas.js";
// Bias networks (added for the notebook templates; the bias module may widen this).
export * from "./bias/topology.js";
export * from "./bias/analyze.js";
export * from "./bias/synthesis/four-resistor.js";
export * from "./bias/eseries.js";
