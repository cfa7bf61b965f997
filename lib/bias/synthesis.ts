/**
 * Synthesis: from what an engineer states (supplies, drain current, overdrive
 * or W/L, a drain voltage or a gain, a gate-bias current or input resistance,
 * a source-voltage budget) to component values. Three stages, all recorded:
 *
 * 1. ideal values from the design formulas (lib/formulas/synthesis.catalog.ts);
 * 2. standard values chosen as a set (snap.ts), each combination scored by
 *    re-solving the stage with the analysis solver;
 * 3. the chosen stage re-solved once more, with its deviation from the
 *    specification reported in numbers.
 *
 * One module per topology in ./synthesis/; `synthesize` dispatches on the
 * specification's topology id. Hand analysis is approximate: verify the chosen
 * design by simulation and measurement, and respect the device ratings.
 */
import { InputError } from "../errors.js";
import type { Derivation } from "../record/derivation.js";
import type { SynthesisResult } from "./synthesis/common.js";
import { synthesizeCurrentMirror, type CurrentMirrorSpec } from "./synthesis/current-mirror.js";
import { synthesizeCurrentSourceBias, type CurrentSourceBiasSpec } from "./synthesis/current-source-bias.js";
import { synthesizeDiodeLoad, type DiodeLoadSpec } from "./synthesis/diode-load.js";
import { synthesizeDrainFeedback, type DrainFeedbackSpec } from "./synthesis/drain-feedback.js";
import { synthesizeFixedGate, type FixedGateSpec } from "./synthesis/fixed-gate.js";
import { synthesizeFourResistor, type FourResistorSpec } from "./synthesis/four-resistor.js";
import { synthesizeSourceFollower, type SourceFollowerSpec } from "./synthesis/source-follower.js";

export * from "./synthesis/common.js";
export type { CorePlan, DividerTarget, DrainTarget, SourceBudget } from "./synthesis/core.js";
export { synthesizeDiodeLoad, synthesizeCurrentMirror, synthesizeCurrentSourceBias, synthesizeDrainFeedback, synthesizeFixedGate, synthesizeFourResistor, synthesizeSourceFollower };
export type { DiodeLoadSpec, CurrentMirrorSpec, CurrentSourceBiasSpec, DrainFeedbackSpec, FixedGateSpec, FourResistorSpec, SourceFollowerSpec };
export type { FourResistorResult } from "./synthesis/four-resistor.js";

export type StageSpec = FourResistorSpec | FixedGateSpec | DrainFeedbackSpec | SourceFollowerSpec | CurrentSourceBiasSpec | CurrentMirrorSpec | DiodeLoadSpec;

const designers = {
  "four-resistor": synthesizeFourResistor,
  "fixed-gate": synthesizeFixedGate,
  "drain-feedback": synthesizeDrainFeedback,
  "source-follower": synthesizeSourceFollower,
  "current-source-bias": synthesizeCurrentSourceBias,
  "current-mirror": synthesizeCurrentMirror,
  "diode-load": synthesizeDiodeLoad,
} as const;

export const synthesisTopologies = Object.keys(designers) as (keyof typeof designers)[];

/** Design a stage of any supported topology from its specification. */
export function synthesize(spec: StageSpec, rec?: Derivation): SynthesisResult {
  const id = (spec as { topology?: unknown } | null)?.topology;
  const f = typeof id === "string" ? (designers as Record<string, (s: never, r?: Derivation) => SynthesisResult<object>>)[id] : undefined;
  if (!f) throw new InputError(id, `one of the topologies with synthesis: ${synthesisTopologies.map((t) => JSON.stringify(t)).join(", ")}`, "spec.topology", "invalid-design");
  return f(spec as never, rec) as SynthesisResult;
}
