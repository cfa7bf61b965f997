/**
 * The bias-network framework: what a stage is (plain JSON data), what its
 * analysis returns, and the registry of topologies keyed by id.
 *
 * A stage is data: a topology id, one device card with W and L, component
 * values and supplies, all plain SI numbers. Each topology module turns that
 * into a solved operating point (lib/bias/solve.ts does the numerics) and a
 * SPICE deck (lib/bias/spice.ts).
 *
 * Rail conventions, the same for NMOS and PMOS:
 * - `vdd` is the upper rail, `vss` the lower rail (0 V, ground, when omitted;
 *   negative for split rails). vdd > vss always.
 * - A resistor named `rd` goes from the drain to the device's drain-side rail,
 *   `rs` from the source to its source-side rail: for an NMOS the drain side is
 *   vdd and the source side vss; for a PMOS the other way round.
 * - A gate divider `rg1`/`rg2` is physical: `rg1` from the gate to vdd, `rg2`
 *   from the gate to vss, for both polarities.
 * - Body "rail" means the body is tied to the source-side rail (vss for an
 *   NMOS, vdd for a PMOS), so VSB ≠ 0 whenever the source sits off that rail
 *   and the body effect applies. Body "source" ties body to source (VSB = 0).
 */
import type { DeviceCard, Polarity } from "../device/card.js";
import type { DiffusionGeometry } from "../device/capacitance-card.js";
import type { PartInUse } from "../device/discrete-part.js";
import type { ModelOptions, OperatingPoint } from "../device/drain-current.js";
import type { Region } from "../device/region.js";
import { InputError } from "../errors.js";
import type { Amperes, Meters, Ohms, Ratio, Siemens, Volts, Watts } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";

/** Supplies: single rail (vss omitted → 0 V) or split rails (vss < 0). */
export interface Supplies {
  readonly vdd: Volts;
  readonly vss?: Volts;
}

export const bodyTies = ["source", "rail"] as const;
/** Where the body (bulk) terminal goes; see the module comment. */
export type BodyTie = (typeof bodyTies)[number];

/** One transistor of a stage: a device card plus drawn W and L, as JSON data. */
export interface StageDevice {
  readonly card: DeviceCard;
  readonly w: Meters;
  readonly l: Meters;
  /** Drain and source diffusion areas and perimeters, for junction capacitances (default rule in lib/device/capacitance.ts). */
  readonly diffusion?: DiffusionGeometry;
  /** A discrete part: its datasheet card (the card above is derived from it) and ambient; its ratings are checked in every analysis. */
  readonly part?: PartInUse;
}

/** Design limits a stage is checked against; all optional. */
export interface StageLimits {
  /** Largest allowed transistor dissipation. */
  readonly maxDevicePower?: Watts;
  /** Largest allowed total supply power. */
  readonly maxTotalPower?: Watts;
  /** Smallest acceptable VDS − VOV in saturation (device polarity). */
  readonly minSaturationMargin?: Volts;
  /** Smallest acceptable overdrive (device polarity). */
  readonly minOverdrive?: Volts;
  /** Smallest acceptable headroom for an ideal current source/sink (current-source-bias). */
  readonly minSourceHeadroom?: Volts;
}

/** Components of the fixed-gate stage: gate held at `vg` (an absolute node voltage), drain resistor, optional source resistor. */
export interface FixedGateComponents {
  readonly vg: Volts;
  readonly rd: Ohms;
  readonly rs?: Ohms;
}

/** Components of the four-resistor stage: gate divider rg1 (to vdd) / rg2 (to vss), rd, rs. */
export interface FourResistorComponents {
  readonly rg1: Ohms;
  readonly rg2: Ohms;
  readonly rd: Ohms;
  readonly rs: Ohms;
}

/** Components of the drain-feedback stage: rf from drain to gate (VG = VD at DC), rd, optional rs. */
export interface DrainFeedbackComponents {
  readonly rf: Ohms;
  readonly rd: Ohms;
  readonly rs?: Ohms;
}

/** Components of the source follower: divider gate bias, source resistor load, drain to its rail directly (rd omitted or 0) or via rd. */
export interface SourceFollowerComponents {
  readonly rg1: Ohms;
  readonly rg2: Ohms;
  readonly rs: Ohms;
  readonly rd?: Ohms;
}

/**
 * Components of the current-source-biased stage: gate held at `vg`, source fed by
 * an ideal current sink (NMOS; to vss) or source (PMOS; from vdd) of magnitude
 * `iss`, e.g. half of a differential-pair tail; drain resistor `rd`.
 */
export interface CurrentSourceBiasComponents {
  readonly vg: Volts;
  readonly iss: Amperes;
  readonly rd: Ohms;
}

/**
 * Components of the current mirror: reference resistor `rref` from the drain-side
 * rail to the diode-connected reference transistor (`devices.reference`); the
 * output transistor (`device`) drives either an ideal voltage `vout` (absolute)
 * or a load resistor `rload` to the drain-side rail. Exactly one of vout, rload.
 */
export interface CurrentMirrorComponents {
  readonly rref: Ohms;
  readonly vout?: Volts;
  readonly rload?: Ohms;
}

/** Components of the common-source stage with a diode-connected load (`devices.load`): driver gate held at `vg`. */
export interface DiodeLoadComponents {
  readonly vg: Volts;
}

/** Component values by topology id, for the built-in topologies. */
export interface ComponentsByTopology {
  "fixed-gate": FixedGateComponents;
  "four-resistor": FourResistorComponents;
  "drain-feedback": DrainFeedbackComponents;
  "source-follower": SourceFollowerComponents;
  "current-source-bias": CurrentSourceBiasComponents;
  "current-mirror": CurrentMirrorComponents;
  "diode-load": DiodeLoadComponents;
}

export type BuiltinTopologyId = keyof ComponentsByTopology;

/**
 * A stage as data. `components` holds plain SI numbers keyed by the
 * topology's component names. Two-transistor topologies put further devices
 * in `devices` (keyed by their role, e.g. "reference").
 */
export interface Stage<Id extends string = string, C = Readonly<Record<string, number>>> {
  readonly topology: Id;
  readonly name?: string;
  readonly device: StageDevice;
  readonly devices?: Readonly<Record<string, StageDevice>>;
  readonly components: C;
  readonly supplies: Supplies;
  /** Body tie; "source" when omitted. */
  readonly body?: BodyTie;
  readonly options?: ModelOptions;
  readonly limits?: StageLimits;
}

/** A stage of one of the built-in topologies, typed by its id. */
export type BuiltinStage = { [K in BuiltinTopologyId]: Stage<K, ComponentsByTopology[K]> }[BuiltinTopologyId];

/** Small-signal parameters at the operating point (device polarity, all ≥ 0). */
export interface StageSmallSignal {
  readonly gm: Siemens;
  readonly gmb: Siemens;
  readonly gds: Siemens;
  /** 1/gds; Infinity when λ = 0 in saturation. */
  readonly ro: Ohms;
}

export const amplifierKinds = ["common-source", "common-source-degenerated", "source-follower", "common-gate", "differential", "common-mode", "cascode"] as const;
export type AmplifierKind = (typeof amplifierKinds)[number];

/** One small-signal view of the stage: where the signal goes in and comes out. */
export interface AmplifierMetrics {
  readonly kind: AmplifierKind;
  readonly inputNode: string;
  readonly outputNode: string;
  /** Small-signal voltage gain vout/vin (signed: negative for an inverting stage); unloaded. */
  readonly gain: Ratio;
  /** Input resistance seen by the signal source (Infinity for an ideal gate with no bias resistors). */
  readonly rin: Ohms;
  /** Output resistance seen by a load. */
  readonly rout: Ohms;
  /** What the figures include or neglect. */
  readonly note: string;
}

/** Output swing limits of one node, as absolute node voltages. */
export interface SwingLimits {
  readonly node: string;
  readonly quiescent: Volts;
  /** Highest voltage before the device leaves its region or the node reaches a rail. */
  readonly upper: Volts;
  readonly lower: Volts;
  /** upper − quiescent and quiescent − lower (≥ 0 when the stage is biased inside its range). */
  readonly headroomUp: Volts;
  readonly headroomDown: Volts;
  /** What limits each end, in words. */
  readonly upperLimit: string;
  readonly lowerLimit: string;
}

/** A pass/fail check with its margin, in the value's unit. */
export interface StageCheck {
  readonly name: string;
  readonly passed: boolean;
  readonly value: number;
  readonly unit: string;
  readonly min?: number;
  readonly max?: number;
  readonly margin: number;
}

export interface StageMetrics {
  readonly amplifiers: readonly AmplifierMetrics[];
  readonly swing: readonly SwingLimits[];
  readonly checks: readonly StageCheck[];
}

/** Power per component: resistors by name, the transistor, ideal sources; plus supply totals. */
export interface StagePower {
  readonly components: Readonly<Record<string, Watts>>;
  readonly transistor: Watts;
  /** Power delivered by the supplies (= sum of all dissipations). */
  readonly total: Watts;
}

export type SolveMethod = "closed-form" | "bracketed-newton" | "bracketed-regula-falsi" | "direct" | "newton" | "newton-gmin-stepping" | "newton-source-stepping";

export interface SolverReport {
  readonly method: SolveMethod;
  readonly iterations: number;
  /** Largest final step or bracket width in the unknown, in its unit. */
  readonly tolerance: number;
  /** The unknown that was solved for. */
  readonly unknown: "drain current" | "source voltage" | "output voltage" | "node voltages" | "none";
}

/** A further transistor of a two-transistor stage, in `StageAnalysis.devices` keyed by its role. */
export interface StageDeviceAnalysis {
  readonly polarity: Polarity;
  readonly region: Region;
  /** Absolute voltages at its gate, source, drain and body. */
  readonly terminals: { readonly gate: Volts; readonly source: Volts; readonly drain: Volts; readonly body: Volts };
  readonly op: OperatingPoint;
  readonly smallSignal: StageSmallSignal;
  /** Its dissipation, included in `power.total`. */
  readonly power: Watts;
}

/** Node voltages every topology reports, plus any of its own. */
export type StageNodes = Readonly<Record<"gate" | "source" | "drain" | "body" | "vdd" | "vss", Volts> & Record<string, Volts>>;
/** Branch currents every topology reports (the channel current's magnitude and the supply current), plus its components'. */
export type StageCurrents = Readonly<Record<"drainMagnitude" | "supply", Amperes> & Record<string, Amperes>>;

/** The analysis of a stage at its DC operating point. */
export interface StageAnalysis {
  readonly topology: string;
  readonly name?: string;
  readonly polarity: Polarity;
  readonly region: Region;
  /** Absolute node voltages: gate, source, drain, body, vdd, vss always; further nodes by name. */
  readonly nodes: StageNodes;
  /**
   * Branch currents, magnitudes (≥ 0) in the conventional direction of normal
   * operation: `drainMagnitude` is |channel current| (the signed drain-terminal
   * current is `op.id`); `supply` the current drawn from vdd; resistor currents
   * by component name.
   */
  readonly currents: StageCurrents;
  /** The device operating point at the solved terminal voltages. */
  readonly op: OperatingPoint;
  readonly smallSignal: StageSmallSignal;
  readonly metrics: StageMetrics;
  readonly power: StagePower;
  readonly solver: SolverReport;
  /** Cautions for the reader: approximations, near-edge regions, ideal-source assumptions. */
  readonly findings: readonly string[];
  /** Two-transistor stages: the further transistors by role (e.g. "reference", "load"); `op` is the main device. */
  readonly devices?: Readonly<Record<string, StageDeviceAnalysis>>;
}

/** What a topology module provides to the registry. */
export interface ComponentField {
  readonly name: string;
  readonly dim: "resistance" | "voltage" | "current" | "capacitance";
  readonly required: boolean;
  readonly meaning: string;
}

export interface Topology<Id extends string = string, C = Readonly<Record<string, number>>> {
  readonly id: Id;
  readonly title: string;
  readonly description: string;
  readonly components: readonly ComponentField[];
  /** Solve the DC operating point and its metrics; records the reasoning when `rec` is given. */
  analyze(stage: Stage<Id, C>, rec?: Derivation): StageAnalysis;
  /** A self-contained SPICE deck (Level 1 card, sources, .op) for a cross-check in any simulator. */
  spice(stage: Stage<Id, C>, prefix?: string): SpiceCircuit;
}

/** SPICE circuit lines of one stage with the node names used, so several can share a deck. */
export interface SpiceCircuit {
  /** Element and .model lines, no title, .control or .end. */
  readonly lines: readonly string[];
  /** Node names in the deck for gate, source, drain, body (and any others). */
  readonly nodes: Readonly<Record<string, string>>;
  /** The name of the voltage source whose current is the drain current (0 V ammeter in the drain lead). */
  readonly drainAmmeter: string;
  /** The MOSFET instance name. */
  readonly instance: string;
  /** Two-transistor stages: instance names by role ("reference", "load") and their ammeters. */
  readonly instances?: Readonly<Record<string, string>>;
  readonly ammeters?: Readonly<Record<string, string>>;
  /** The `.model` names the lines define, with their polarity, so a process library's devices can replace them. */
  readonly models?: Readonly<Record<string, "nmos" | "pmos">>;
}

const registry = new Map<string, Topology<string, any>>();

/** Add a topology; ids are unique. */
export function registerTopology<Id extends string, C>(t: Topology<Id, C>): Topology<Id, C> {
  if (registry.has(t.id) && registry.get(t.id) !== t) throw new InputError(t.id, "a topology id not yet registered", "registerTopology");
  registry.set(t.id, t as Topology<string, any>);
  return t;
}

/** The topology for an id, or an error listing the known ids. */
export function topologyFor(id: unknown, origin = "topology"): Topology<string, any> {
  const t = typeof id === "string" ? registry.get(id) : undefined;
  if (!t) throw new InputError(id, `one of the topology ids ${[...registry.keys()].map((k) => JSON.stringify(k)).join(", ")}`, origin, "invalid-design");
  return t;
}

export function topologyIds(): string[] {
  return [...registry.keys()];
}
