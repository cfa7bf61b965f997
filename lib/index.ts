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
export * from "./device/discrete-part.js";
export * as discreteFormulas from "./formulas/discrete.formulas.js";
export { Derivation, unitOf, derivationSchemaVersion } from "./record/derivation.js";
export type * from "./record/derivation.js";
export type { Formula, FormulaSpec, SymbolSpec } from "./formulas/define.js";
export * as deviceFormulas from "./formulas/device.formulas.js";
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
export { toleranceChecks, idBandCheckName, type CheckYield, type ToleranceChecks } from "./bias/check-yield.js";
export type { ToleranceSection } from "./bias/tolerance-file.js";
export * from "./bias/dissipation.js";
export * as synthesisFormulas from "./formulas/synthesis.formulas.js";
export * as mirrorFormulas from "./formulas/mirror.formulas.js";
export * from "./device/capacitance-card.js";
export { deviceCapacitances, diffusionGeometry, oxidePermittivity, hasCapacitanceData, type DeviceCapacitances } from "./device/capacitance.js";
export * from "./bias/frequency.js";
export { acCircuit, acDeckText, defaultSweep, type AcCircuit, type AcSweep } from "./bias/frequency-spice.js";
export * as capacitanceFormulas from "./formulas/capacitance.formulas.js";
export * as frequencyFormulas from "./formulas/frequency.formulas.js";
