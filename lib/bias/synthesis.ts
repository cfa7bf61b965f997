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
import type { DeviceCard } from "../device/card.js";
import { cardAt, checkCardSet, type CardSet } from "../device/card-set.js";
import type { ModelOptions } from "../device/drain-current.js";
import { defaultAmbient, partInUse, partModel, ratingChecks, recordPartInUse, type DiscretePart, type PartInUse } from "../device/discrete-part.js";
import type { Kelvin, KelvinPerWatt } from "../quantity.js";
import { analyzeStage } from "./analyze.js";
import { specFields, type SpecTopology } from "./spec-fields.js";
import type { BodyTie, StageLimits, Supplies } from "./topology.js";
import type { SynthesisResult } from "./synthesis/common.js";
import { synthesizeCurrentMirror as currentMirror, type CurrentMirrorSpec as CurrentMirrorFlat } from "./synthesis/current-mirror.js";
import { synthesizeCurrentSourceBias as currentSourceBias, type CurrentSourceBiasSpec as CurrentSourceBiasFlat } from "./synthesis/current-source-bias.js";
import { synthesizeDiodeLoad as diodeLoad, type DiodeLoadSpec as DiodeLoadFlat } from "./synthesis/diode-load.js";
import { synthesizeDrainFeedback as drainFeedback, type DrainFeedbackSpec as DrainFeedbackFlat } from "./synthesis/drain-feedback.js";
import { synthesizeFixedGate as fixedGate, type FixedGateSpec as FixedGateFlat } from "./synthesis/fixed-gate.js";
import { synthesizeFourResistor as fourResistor, type FourResistorSpec as FourResistorFlat, type FourResistorResult } from "./synthesis/four-resistor.js";
import { synthesizeSourceFollower as sourceFollower, type SourceFollowerSpec as SourceFollowerFlat } from "./synthesis/source-follower.js";
import { synthesizeDiffPair as diffPair, type DiffPairSpec as DiffPairFlat } from "./synthesis/diff-pair.js";
import { synthesizeMirrorLoadPair as mirrorLoadPair, type MirrorLoadPairSynthesisSpec as MirrorLoadPairFlat } from "./synthesis/mirror-load-pair.js";
import { synthesizeCascodeMirror as cascodeMirror, synthesizeCascodeStage as cascodeStage, type CascodeMirrorSpec as CascodeMirrorFlat, type CascodeStageSpec as CascodeStageFlat } from "./synthesis/cascode.js";

export * from "./synthesis/common.js";
export type { CorePlan, DividerTarget, DrainTarget, SourceBudget } from "./synthesis/core.js";
export type { FourResistorResult };

/** The designers' flat form (card, sizing and targets side by side); internal: callers state a {@link SynthesisSpec}. */
type FlatSpec = FourResistorFlat | FixedGateFlat | DrainFeedbackFlat | SourceFollowerFlat | CurrentSourceBiasFlat | CurrentMirrorFlat | DiodeLoadFlat | DiffPairFlat | MirrorLoadPairFlat | CascodeStageFlat | CascodeMirrorFlat;

/** The fields of one topology's specification section: everything its designer takes besides the common ones. */
type Own<S> = Omit<S, "topology" | "name" | "card" | "supplies" | "body" | "options" | "limits">;

/** One topology's specification section (the design file's `specification`), e.g. SpecificationOf<"four-resistor">. */
export type SpecificationOf<T extends FlatSpec["topology"]> = Own<Extract<FlatSpec, { topology: T }>>;

/** The device of a specification: a card (its size comes from specification.sizing), or a discrete part (its size is fixed by the part). */
export type SpecDevice = { readonly card: DeviceCard | CardSet } | { readonly part: DiscretePart; readonly ambient?: Kelvin; readonly rthCA?: KelvinPerWatt };

/** A specification section with no sizing: a discrete part fixes its own size. */
type PartOwn<S> = Omit<Own<S>, "sizing">;

/**
 * A specification in the design file's shape, the same JSON a `pinchoff op`
 * design file holds when it has a `specification` (values as SI numbers):
 * `{ topology, name?, device: { card } | { part, ambient? }, specification: { id, sizing, drain, … }, supplies, body?, options?, limits? }`.
 */
export type SynthesisSpec<S extends FlatSpec = FlatSpec> = S extends unknown
  ? {
      readonly topology: S["topology"];
      readonly name?: string;
      readonly supplies: Supplies;
      readonly body?: BodyTie;
      readonly options?: ModelOptions;
      readonly limits?: StageLimits;
    } & ({ readonly device: { readonly card: DeviceCard | CardSet }; readonly specification: Own<S> } | { readonly device: { readonly part: DiscretePart; readonly ambient?: Kelvin; readonly rthCA?: KelvinPerWatt }; readonly specification: PartOwn<S> })
  : never;

export type FourResistorSpec = SynthesisSpec<FourResistorFlat>;
export type FixedGateSpec = SynthesisSpec<FixedGateFlat>;
export type DrainFeedbackSpec = SynthesisSpec<DrainFeedbackFlat>;
export type SourceFollowerSpec = SynthesisSpec<SourceFollowerFlat>;
export type CurrentSourceBiasSpec = SynthesisSpec<CurrentSourceBiasFlat>;
export type CurrentMirrorSpec = SynthesisSpec<CurrentMirrorFlat>;
export type DiodeLoadSpec = SynthesisSpec<DiodeLoadFlat>;
export type DiffPairSpec = SynthesisSpec<DiffPairFlat>;
export type MirrorLoadPairSynthesisSpec = SynthesisSpec<MirrorLoadPairFlat>;
export type CascodeStageSpec = SynthesisSpec<CascodeStageFlat>;
export type CascodeMirrorSpec = SynthesisSpec<CascodeMirrorFlat>;

/** Any topology's specification, in the design file's shape. */
export type StageSpec = SynthesisSpec;

const commonKeys = ["topology", "name", "device", "specification", "supplies", "body", "options", "limits"] as const;
const isObject = (v: unknown): v is Record<string, unknown> => typeof v === "object" && v !== null && !Array.isArray(v);

/**
 * The one converter from the design file's shape to the designers' flat form.
 * A discrete part becomes its derived model (recorded in `rec`) and its fixed size.
 */
function flatten(spec: unknown, rec?: Derivation): { flat: FlatSpec; part?: PartInUse } {
  if (!isObject(spec)) throw new InputError(spec, "a specification { topology, device, specification, supplies, … }", "spec", "invalid-design");
  for (const k of Object.keys(spec))
    if (!(commonKeys as readonly string[]).includes(k)) throw new InputError(k, `a field of a specification (${commonKeys.join(", ")})`, `spec.${k}`, "invalid-design");
  const { device, specification, ...common } = spec;
  if (!isObject(device)) throw new InputError(device, "a device { card } or a discrete part { part, ambient? }", "spec.device", "invalid-design");
  if (!isObject(specification)) throw new InputError(specification, "the topology's specification { id, sizing, … }", "spec.specification", "invalid-design");
  const own = Object.keys(specFields[spec.topology as SpecTopology]);
  for (const k of Object.keys(specification))
    if (!own.includes(k)) throw new InputError(k, `a field of the ${String(spec.topology)} specification (${own.join(", ")})`, `spec.specification.${k}`, "invalid-design");
  if (device.part === undefined) {
    for (const k of Object.keys(device)) if (k !== "card") throw new InputError(k, "only card in device (the size comes from specification.sizing)", `spec.device.${k}`, "invalid-design");
    const sizing = specification.sizing as { l?: unknown } | undefined;
    const card = cardAtLength(device.card, sizing?.l, "spec.device.card", rec);
    // A diode-connected load may come from a card set too, at its own L.
    const load = specification.load as { card?: unknown; l?: unknown } | undefined;
    const own = isObject(load) && isObject(load.card) && load.card.kind === "card-set" ? { ...specification, load: { ...load, card: cardAtLength(load.card, load.l, "spec.specification.load.card", rec) } } : specification;
    return { flat: { ...common, card, ...own } as unknown as FlatSpec };
  }
  for (const k of Object.keys(device)) if (k !== "part" && k !== "ambient" && k !== "rthCA") throw new InputError(k, "part, ambient and rthCA in a discrete part's device", `spec.device.${k}`, "invalid-design");
  if (specification.sizing !== undefined)
    throw new InputError(specification.sizing, "no specification.sizing with a discrete part: its size is fixed by the part (W/L is absorbed in its k)", "spec.specification.sizing", "invalid-design");
  if (common.body === "rail") throw new InputError("rail", `body "source" (or omitted): the discrete part has its body tied to its source inside the package`, "spec.body", "invalid-design");
  const model = partModel(device.part as DiscretePart, rec, "device.part");
  const part = partInUse(device.part as DiscretePart, (device.ambient ?? defaultAmbient) as number, device.rthCA as number | undefined, "spec.device");
  if (rec) recordPartInUse(rec, part);
  return { flat: { ...common, card: model.card, ...specification, sizing: { w: model.w, l: model.l } } as unknown as FlatSpec, part };
}

/** A card as given, or a card set's card at the drawn length the design states (lib/device/card-set.ts), noted in the record. */
function cardAtLength(card: unknown, l: unknown, origin: string, rec?: Derivation): unknown {
  if (!isObject(card) || card.kind !== "card-set") return card;
  if (typeof l !== "number" || !(l > 0)) throw new InputError(l, "a drawn length L > 0 in m beside a card set (the card is taken at that L)", origin.replace(/card$/, "l").replace("device.l", "specification.sizing.l"), "invalid-design");
  const set = checkCardSet(card as unknown as CardSet, origin);
  const at = cardAt(set, l as never, origin);
  rec?.note("Card from the card set", `Card set "${set.name}" at L = ${+(l * 1e6).toPrecision(4)} µm: ${at.provenance ?? `the card fitted at that length ("${at.name}")`}.`);
  return at;
}

const designers = {
  "four-resistor": fourResistor,
  "fixed-gate": fixedGate,
  "drain-feedback": drainFeedback,
  "source-follower": sourceFollower,
  "current-source-bias": currentSourceBias,
  "current-mirror": currentMirror,
  "diode-load": diodeLoad,
  "diff-pair": diffPair,
  "diff-pair-mirror-load": mirrorLoadPair,
  "cascode-stage": cascodeStage,
  "cascode-mirror": cascodeMirror,
} as const;

/** Designers of netlist stages (own specification shapes, tested in test/synthesis-pairs.test.ts): on-chip devices drawn to size, not discrete parts. */
export const netlistSynthesisTopologies: readonly string[] = ["diff-pair", "diff-pair-mirror-load", "cascode-stage", "cascode-mirror"];
const onChip = netlistSynthesisTopologies;

export const synthesisTopologies = Object.keys(designers) as (keyof typeof designers)[];

/**
 * Design a stage of any supported topology from its specification, stated in
 * the design file's shape: a design file's JSON (values as SI numbers) gives
 * the same design here as through `pinchoff op`. With a discrete part, its
 * model is derived first and the chosen stage is checked against its ratings.
 */
export function synthesize(spec: StageSpec, rec?: Derivation): SynthesisResult {
  const id = isObject(spec) ? spec.topology : undefined;
  const f = typeof id === "string" ? (designers as Record<string, (s: never, r?: Derivation) => SynthesisResult<object>>)[id] : undefined;
  if (!f) throw new InputError(id, `one of the topologies with synthesis: ${synthesisTopologies.map((t) => JSON.stringify(t)).join(", ")}`, "spec.topology", "invalid-design");
  if (onChip.includes(id as string) && isObject(spec.device) && "part" in spec.device)
    throw new InputError("part", `device { card }: the ${String(id)} designer sizes drawn transistors (W and L), not a discrete part`, "spec.device.part", "invalid-design");
  const { flat, part } = flatten(spec, rec);
  const design = f(flat as never, rec) as SynthesisResult;
  if (!part) return design;
  const stage = { ...design.stage, device: { ...design.stage.device, part } };
  const analysis = analyzeStage(stage);
  ratingChecks(part, { vgs: analysis.op.vgsDevice, vds: analysis.op.vdsDevice, id: analysis.currents.drainMagnitude, power: analysis.power.transistor }, (name, value, dim, max, detail) => rec?.check(name, value, dim, { max }, detail), rec);
  return { ...design, stage, analysis };
}

/** One topology's designer, taking the design file's shape (as {@link synthesize} does). */
const one =
  <S extends StageSpec, R = SynthesisResult>() =>
  (spec: S, rec?: Derivation): R =>
    synthesize(spec, rec) as unknown as R;
export const synthesizeFourResistor = one<FourResistorSpec, FourResistorResult>();
export const synthesizeFixedGate = one<FixedGateSpec>();
export const synthesizeDrainFeedback = one<DrainFeedbackSpec>();
export const synthesizeSourceFollower = one<SourceFollowerSpec>();
export const synthesizeCurrentSourceBias = one<CurrentSourceBiasSpec>();
export const synthesizeCurrentMirror = one<CurrentMirrorSpec>();
export const synthesizeDiodeLoad = one<DiodeLoadSpec>();
export const synthesizeDiffPair = one<DiffPairSpec>();
/** The five-transistor amplifier in the design file's shape (`designMirrorLoadPair` takes its own flat form). */
export const synthesizeMirrorLoadPairSpec = one<MirrorLoadPairSynthesisSpec>();
export const synthesizeCascodeStage = one<CascodeStageSpec>();
export const synthesizeCascodeMirror = one<CascodeMirrorSpec>();
