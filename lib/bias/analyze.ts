/**
 * The built-in bias topologies, registered, and the entry points that dispatch
 * on a stage's topology id: analysis, and the SPICE deck.
 */
import type { Derivation } from "../record/derivation.js";
import { deckText } from "./spice.js";
import { registerTopology, topologyFor, type SpiceCircuit, type Stage, type StageAnalysis, type Topology } from "./topology.js";
import { cascodeMirror, cascodeStage } from "./topologies/cascode.js";
import { diffPair, mirrorLoadPair } from "./topologies/diff-pair.js";
import { currentSourceBias } from "./topologies/current-source-bias.js";
import { currentMirror } from "./topologies/current-mirror.js";
import { diodeLoad } from "./topologies/diode-load.js";
import { drainFeedback } from "./topologies/drain-feedback.js";
import { fixedGate } from "./topologies/fixed-gate.js";
import { fourResistor } from "./topologies/four-resistor.js";
import { sourceFollower } from "./topologies/source-follower.js";
import { twoStageMiller } from "./topologies/two-stage.js";

/** Every built-in topology, keyed by a camel-case name (the registry holds them by id). */
export const builtinTopologies = {
  fixedGate,
  fourResistor,
  drainFeedback,
  sourceFollower,
  currentSourceBias,
  currentMirror,
  diodeLoad,
  diffPair,
  mirrorLoadPair,
  cascodeStage,
  cascodeMirror,
  twoStageMiller,
} as const;
// One list: what is built in is what is registered.
for (const t of Object.values(builtinTopologies)) registerTopology(t as Topology<string, unknown>);

/**
 * Any stage: a typed one (`Stage<"four-resistor", FourResistorComponents>`, as
 * synthesis returns) or a plain one; components are looked up by name.
 */
type AnyStage = Stage<string, object>;
const plain = (stage: AnyStage): Stage => stage as Stage;

/** Solve a stage's operating point and metrics; records the reasoning when `rec` is given. */
export function analyzeStage(stage: AnyStage, rec?: Derivation): StageAnalysis {
  return topologyFor(stage?.topology, "stage.topology").analyze(plain(stage), rec);
}

/** The stage's SPICE circuit lines with an optional name prefix (for several stages in one deck). */
export function stageCircuit(stage: AnyStage, prefix = ""): SpiceCircuit {
  return topologyFor(stage?.topology, "stage.topology").spice(plain(stage), prefix);
}

/** A complete SPICE deck for the stage (Level 1 card, sources, .op). */
export function spiceDeck(stage: AnyStage): string {
  return deckText(`${stage.name ?? stage.topology} (${stage.device.card.polarity}, ${stage.device.card.name})`, stageCircuit(stage));
}
