/**
 * pinchoff numeric core: plain numbers in SI units with branded types. This
 * entry point loads no parser, typesetter or plotting library; those live in
 * "pinchoff/units", "pinchoff/render" and "pinchoff/notebook".
 */
export * from "./quantity.js";
export * from "./errors.js";
export * from "./device/card.js";
export * from "./device/card-set.js";
export * from "./device/card-file.js";
export * from "./device/region.js";
export * from "./device/threshold.js";
export * from "./device/drain-current.js";
export * from "./device/small-signal.js";
export * from "./device/inverse.js";
export { widthForCurrent, sizeByGmOverId, type EfficiencySizing } from "./device/model-inverse.js";
export * from "./device/inversion.js";
export * from "./device/temperature.js";
export * from "./device/extract.js";
export * from "./device/discrete-part.js";
export * as discreteFormulas from "./formulas/discrete.formulas.js";
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
// The two-transistor stages' own figures (mirror ratio, compliance, output curve) beyond StageAnalysis.
export { analyzeMirror, mirrorOutputCurve, type MirrorAnalysis, type MirrorFigures, type CurrentMirrorStage } from "./bias/topologies/current-mirror.js";
export { analyzeDiodeLoad, type DiodeLoadStage } from "./bias/topologies/diode-load.js";
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
  type SynthesisSpec,
  type SpecDevice,
  type SpecificationOf,
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
// Multi-transistor stages (differential pairs, cascodes), their nodal solver, and mismatch.
export { solveNetlist, smallSignalResponse, netlistSpice, compileNetlist, solveCompiled, type Netlist, type NetMosfet, type NetResistor, type NetCurrentSource, type CircuitSolution, type CircuitMethod } from "./bias/circuit.js";
export { diffPair, mirrorLoadPair, type DiffPairComponents, type MirrorLoadPairComponents, type PairFigures } from "./bias/topologies/diff-pair.js";
export { cascodeStage, cascodeMirror, type CascodeStageComponents, type CascodeMirrorComponents, type CascodeFigures, type CascodeStageFigures, type CascodeMirrorFigures } from "./bias/topologies/cascode.js";
export * from "./bias/mismatch.js";
export { designMirrorLoadPair, type MirrorLoadPairSpec, type MirrorLoadPairDesign } from "./bias/synthesis/mirror-load-pair.js";
// Pairs and cascodes from a specification (design-file shape).
export {
  synthesizeDiffPair,
  synthesizeMirrorLoadPairSpec,
  synthesizeCascodeStage,
  synthesizeCascodeMirror,
  netlistSynthesisTopologies,
  type DiffPairSpec,
  type MirrorLoadPairSynthesisSpec,
  type CascodeStageSpec,
  type CascodeMirrorSpec,
} from "./bias/synthesis.js";
// (The design file's mismatch section, lib/bias/mismatch-file.ts, reads text with units: it stays out of the numeric core.)
export * as pairFormulas from "./formulas/pair.formulas.js";
// Simulator in the loop: the SPICE home (deck writer, ngspice runner, raw files), process
// descriptions, characterisation tables, gm/ID sizing, stage verification and correction.
export { spiceIdentifier, spiceNode, spiceText, spicePath, element, modelCard, libLine, includeLine, writeDeck, type DeckParts } from "./spice/deck.js";
export { findNgspice, runDeck, runDeckSync, SimulatorError, printedValues, type SimulatorRun, type SimulatorResult } from "./spice/run.js";
export { parseRaw, column, type RawPlot } from "./spice/raw.js";
export { readProcess, checkProcess, builtinProcessFile, cornerSection, checkGeometry, snapToGrid, type ProcessDescription, type ProcessDevice } from "./process/description.js";
export { characterize, defaultGrid, defaultLengths, evenGrid, tableCsv, tableJson, tableFingerprint, cacheFolder, tableQuantities, type DeviceTable, type SweepGrid, type CharacterizeOptions } from "./process/characterize.js";
export { deviceLookup, lookupInto, emptyPoint, type DeviceLookup, type PointValues } from "./process/lookup.js";
export { simulateDevices, type DeviceBias, type SimulatedDevice } from "./process/device-check.js";
export { sizeByEfficiency, sizeByEfficiencyForProcess, squareLawCard, tableCapacitances, vgsForEfficiency, type EfficiencySpec, type EfficiencyDesign, type ProcessSizingOptions, type SquareLawDesign } from "./sizing/gm-id.js";
export type { OverlapParameters, TableCapacitances } from "./device/capacitance-card.js";
export { verifyStage, correctStage, processCircuit, type StageVerification, type DeviceVerification, type CorrectionOptions, type StageCorrection, type VerifyOptions } from "./bias/simulation-check.js";
export * as gmIdFormulas from "./formulas/gm-id.formulas.js";
export * from "./device/capacitance-card.js";
export { deviceCapacitances, diffusionGeometry, oxidePermittivity, hasCapacitanceData, type DeviceCapacitances } from "./device/capacitance.js";
export * from "./bias/frequency.js";
export { frequencyRows, type FrequencyRow } from "./bias/frequency-summary.js";
export type { MirrorFrequencyNodes } from "./bias/frequency-two-transistor.js";
export { acCircuit, acDeckText, defaultSweep, type AcCircuit, type AcSweep } from "./bias/frequency-spice.js";
export * as capacitanceFormulas from "./formulas/capacitance.formulas.js";
export * as frequencyFormulas from "./formulas/frequency.formulas.js";
// Two-stage Miller-compensated amplifier: topology, frequency response and compensation design.
export { twoStageMiller, twoStageSpec, inputForOutput, balanceTolerance, type TwoStageComponents, type TwoStageFigures, type TwoStageStage, type TwoStageAnalysis } from "./bias/topologies/two-stage.js";
export { analyzeTwoStageFrequency, checkCompensation, twoStageConditions, twoStageResponse, type CompensationSpec, type NullingRule, type TwoStageFrequency } from "./bias/frequency-two-stage.js";
export * as twoStageFormulas from "./formulas/two-stage.formulas.js";
