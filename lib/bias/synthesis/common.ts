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
 * Hand analysis is approximate: verify the chosen design by simulation and
 * measurement, and respect the device ratings.
 */
import type { DeviceCard } from "../../device/card.js";
import { checkCard, polaritySign } from "../../device/card.js";
import type { ModelOptions } from "../../device/drain-current.js";
import { InputError, requirePositive } from "../../errors.js";
import type { Amperes, Meters, Ratio, Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import type { Formula } from "../../formulas/define.js";
import type { DissipationLimits, DissipationReport } from "../dissipation.js";
import { seriesNames, type SeriesName } from "../eseries.js";
import type { SnapResult } from "../snap.js";
import { specFields, type SpecTopology } from "../spec-fields.js";
import type { BodyTie, Stage, StageAnalysis, StageLimits, Supplies } from "../topology.js";

/** Either the overdrive (W follows from ID, with L given) or the drawn W and L (VOV follows). */
export type Sizing = { readonly vov: Volts; readonly l: Meters } | { readonly w: Meters; readonly l: Meters };

/** What every single-transistor specification states. */
export interface SpecBase {
  readonly name?: string;
  readonly card: DeviceCard;
  readonly supplies: Supplies;
  /** Target drain current magnitude. */
  readonly id: Amperes;
  readonly sizing: Sizing;
  /** Body tie; "source" when omitted (a discrete MOSFET's body is tied to its source). */
  readonly body?: BodyTie;
  readonly options?: ModelOptions;
  readonly limits?: StageLimits;
  /** Series for the resistors; "exact" keeps the ideal values (E24 when omitted). */
  readonly series?: SeriesName | "exact";
  /** Standard values tried per resistor (2 when omitted: the neighbours either side). */
  readonly candidates?: number;
  /** Resistor and transistor power limits to check the chosen design against. */
  readonly dissipation?: DissipationLimits;
}

/** One specified figure against what the chosen design achieves. */
export interface FigureDeviation {
  readonly target: number;
  readonly achieved: number;
  /** achieved − target, in the figure's unit. */
  readonly error: number;
  /** (achieved − target)/|target|. */
  readonly relative: number;
}

export interface SpecDeviation {
  readonly id: FigureDeviation;
  /** Drain (or, for a follower, source) node voltage, absolute. */
  readonly output: FigureDeviation;
  readonly gain?: FigureDeviation;
  readonly vov: Volts;
  readonly saturationMargin: Volts;
  readonly inSaturation: boolean;
}

export interface SynthesisResult<C = Readonly<Record<string, number>>> {
  readonly topology: string;
  /** Ideal values and the design quantities behind them (node voltages absolute). */
  readonly ideal: {
    readonly components: C;
    readonly vg: Volts;
    readonly vs: Volts;
    readonly vd: Volts;
    readonly vov: Volts;
    readonly vt: Volts;
    readonly wl: Ratio;
    readonly w: Meters;
    readonly l: Meters;
  };
  /** The stage with the chosen (standard) values. */
  readonly stage: Stage<string, C>;
  readonly idealStage: Stage<string, C>;
  readonly snap?: SnapResult;
  /** The chosen stage re-solved by the analysis solver. */
  readonly analysis: StageAnalysis;
  readonly deviation: SpecDeviation;
  readonly dissipation?: DissipationReport;
}

/** Rails in the device's own polarity: the drain side is the higher one for both polarities. */
export function deviceRails(card: DeviceCard, supplies: Supplies): { vdr: Volts; vsr: Volts; s: 1 | -1 } {
  const s = polaritySign(card);
  const vss = supplies.vss ?? 0;
  return s > 0 ? { vdr: supplies.vdd, vsr: vss as Volts, s } : { vdr: -vss as Volts, vsr: -supplies.vdd as Volts, s };
}

/** Fields every specification may carry besides its topology's own (spec-fields.ts leaves these out). */
const sharedSpecKeys = ["name", "card", "supplies", "body", "options", "limits"] as const;

/** Validate the parts every specification shares (any card model: the square law designs by its closed forms, the others through ./model-device.ts). */
export function checkSpecBase(spec: SpecBase, origin: string): void {
  if (!spec || typeof spec !== "object") throw new InputError(spec, "a specification object", origin);
  // Known fields: the shared ones and the topology's own (spec-fields.ts, the table the design file also reads).
  const topology = (spec as { topology?: string }).topology;
  const own = topology && topology in specFields ? Object.keys(specFields[topology as SpecTopology]) : [];
  const known = new Set<string>(["topology", ...sharedSpecKeys, ...own]);
  for (const key of Object.keys(spec))
    if (!known.has(key)) throw new InputError(key, `a field of the ${topology ?? "stage"} specification (${[...known].join(", ")})`, `${origin}.${key}`, "invalid-design");
  if (!spec.supplies || typeof spec.supplies !== "object") throw new InputError(spec.supplies, "supplies { vdd, vss? } in V", `${origin}.supplies`);
  const vdd = spec.supplies.vdd;
  const vss = spec.supplies.vss ?? 0;
  if (typeof vdd !== "number" || !Number.isFinite(vdd)) throw new InputError(vdd, "a finite VDD in V", `${origin}.supplies.vdd`);
  if (typeof vss !== "number" || !Number.isFinite(vss) || vss >= vdd)
    throw new InputError(vss, `a finite VSS in V below VDD = ${vdd} V`, `${origin}.supplies.vss`);
  requirePositive(spec.id, `${origin}.id`, "a target drain current > 0 in A");
  // Any model: the square law designs by its closed forms, the others through ./model-device.ts.
  checkCard(spec.card, `${origin}.card`);
  const z = spec.sizing as Record<string, unknown> | undefined;
  if (!z || typeof z !== "object") throw new InputError(z, "sizing { vov, l } or { w, l }", `${origin}.sizing`);
  requirePositive(z.l as number, `${origin}.sizing.l`, "a channel length L > 0 in m");
  if ("vov" in z && "w" in z) throw new InputError(z, "sizing with either vov (W then follows from ID) or w (VOV then follows), not both", `${origin}.sizing`);
  for (const key of Object.keys(z))
    if (key !== "vov" && key !== "w" && key !== "l") throw new InputError(key, "a sizing field: vov or w, and l", `${origin}.sizing.${key}`, "invalid-design");
  if ("vov" in z) requirePositive(z.vov as number, `${origin}.sizing.vov`, "an overdrive > 0 in V");
  else if ("w" in z) requirePositive(z.w as number, `${origin}.sizing.w`, "a channel width W > 0 in m");
  else throw new InputError(z, "sizing with either vov (and l) or w (and l)", `${origin}.sizing`);
  if (spec.series !== undefined && spec.series !== "exact" && !seriesNames.includes(spec.series))
    throw new InputError(spec.series, `"exact" or one of ${seriesNames.join(", ")}`, `${origin}.series`);
  if (spec.body !== undefined && spec.body !== "source" && spec.body !== "rail")
    throw new InputError(spec.body, `"source" or "rail"`, `${origin}.body`);
}

/** Evaluate a catalog formula, recording it when a derivation is given (nothing allocated otherwise). */
export function evaluate<A extends readonly number[], R extends number>(f: Formula<A, R>, args: A, rec?: Derivation, because?: string): R {
  return rec ? rec.calc(f, args, because) : f.fn(...args);
}

export const figure = (target: number, achieved: number): FigureDeviation => ({
  target,
  achieved,
  error: achieved - target,
  relative: (achieved - target) / Math.abs(target),
});

/** Record the deviation of the chosen design from the specification, as checks a reviewer can read. */
export function recordDeviation(d: SpecDeviation, outputLabel: string, rec?: Derivation): void {
  if (!rec) return;
  const pct = (x: number) => `${+(x * 100).toPrecision(3)} %`;
  const mv = (x: number) => `${+(x * 1e3).toPrecision(3)} mV`;
  rec.note(
    "Deviation from the specification",
    `ID ${pct(d.id.relative)} (${+d.id.achieved.toPrecision(5)} A against ${+d.id.target.toPrecision(5)} A); ${outputLabel} ${mv(d.output.error)} (${+d.output.achieved.toPrecision(5)} V against ${+d.output.target.toPrecision(5)} V)` +
      (d.gain ? `; gain ${pct(d.gain.relative)} (${+d.gain.achieved.toPrecision(4)} against ${+d.gain.target.toPrecision(4)})` : "") +
      `; saturation margin VDS − VOV = ${+d.saturationMargin.toPrecision(4)} V (checked by the re-solve above).`,
  );
}
