/**
 * pinchoff numeric core: plain numbers in SI units with branded types. This
 * entry point loads no parser, typesetter or plotting library; those live in
 * "pinchoff/units", "pinchoff/render" and "pinchoff/notebook".
 */
export * from "./quantity.js";
export * from "./errors.js";
export * from "./device/card.js";
export * from "./device/card-set.js";
export * from "./device/region.js";
export * from "./device/threshold.js";
export * from "./device/drain-current.js";
export * from "./device/small-signal.js";
export * from "./device/inverse.js";
export { widthForCurrent, sizeByGmOverId, type EfficiencySizing } from "./device/model-inverse.js";
export * from "./device/inversion.js";
export * from "./device/temperature.js";
export * from "./device/extract.js";
export * from "./device/model.js";
export * from "./device/models/index.js";
export { squareLaw, channelCurrent } from "./device/models/square-law.js";
export { squareLawMobility, mobilityChannelCurrent, mobilitySaturationVoltage } from "./device/models/mobility.js";
export { ekv, ekvChannelCurrent, ekvInversionCoefficient, defaultEkvCriticalField } from "./device/models/ekv.js";
export { Derivation, unitOf, derivationSchemaVersion } from "./record/derivation.js";
export type * from "./record/derivation.js";
export type { Formula, FormulaSpec, SymbolSpec } from "./formulas/define.js";
export * as deviceFormulas from "./formulas/device.formulas.js";
export * as mobilityFormulas from "./formulas/square-law-mobility.formulas.js";
export * as ekvFormulas from "./formulas/ekv.formulas.js";
// Bias networks: topologies, solver, SPICE export, standard values, synthesis, tolerance, dissipation.
export * from "./bias/topology.js";
export * from "./bias/analyze.js";
export { solveNetwork, newSolution, hasClosedForm, type BiasNetwork, type NetworkSolution } from "./bias/solve.js";
export { spiceNumber, deckText } from "./bias/spice.js";
export * as biasFormulas from "./formulas/bias.formulas.js";
export * from "./bias/eseries.js";
export { snapToSeries, maxCombinations, type SnapProblem, type SnapResult, type SnappedComponent, type SnapObjective } from "./bias/snap.js";
export {
  synthesize,
  synthesisTopologies,
  synthesizeFourResistor,
  synthesizeFixedGate,
  synthesizeDrainFeedback,
  synthesizeSourceFollower,
  synthesizeCurrentSourceBias,
  synthesizeCurrentMirror,
  synthesizeDiodeLoad,
  type CurrentMirrorSpec,
  type DiodeLoadSpec,
  type StageSpec,
  type SpecBase,
  type Sizing,
  type SynthesisResult,
  type SpecDeviation,
  type FigureDeviation,
  type DrainTarget,
  type SourceBudget,
  type DividerTarget,
  type FixedGateSpec,
  type DrainFeedbackSpec,
  type SourceFollowerSpec,
  type CurrentSourceBiasSpec,
  type FourResistorSpec,
  type FourResistorResult,
} from "./bias/synthesis.js";
export * from "./bias/tolerance.js";
export * from "./bias/dissipation.js";
export * as synthesisFormulas from "./formulas/synthesis.formulas.js";
export * as mirrorFormulas from "./formulas/mirror.formulas.js";
