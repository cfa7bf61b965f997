/**
 * Power checks: each resistor's I²R against its rating times a derating factor
 * the engineer states, and the transistor's VDS·ID against a given limit.
 * A failed check carries its margin in watts, so the report says by how much.
 */
import { InputError, requireFinite, requireNonNegative, requirePositive } from "../errors.js";
import { devicePower, resistorPower } from "../formulas/bias.formulas.js";
import { allowedPower } from "../formulas/synthesis.formulas.js";
import type { Amperes, Ohms, Ratio, Volts, Watts } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { topologyFor, type Stage, type StageAnalysis } from "./topology.js";

export interface PartRating {
  /** Rated power at the intended ambient, e.g. 0.25 W for a common 1/4 W resistor. */
  readonly rating: Watts;
  /** Fraction of the rating the design may use, 0 < f ≤ 1 (e.g. 0.5 for 50 % derating); 1 when omitted. */
  readonly derating?: number;
}

export interface DissipationLimits {
  /** Rating applied to every resistor without its own entry. */
  readonly resistor?: PartRating;
  /** Ratings by component name, overriding `resistor`. */
  readonly resistors?: Readonly<Record<string, PartRating>>;
  /** The transistor's allowed dissipation (datasheet PD at the intended ambient). */
  readonly transistor?: PartRating;
}

export interface ResistorLoad {
  readonly name: string;
  readonly resistance: Ohms;
  /** Current through it (magnitude). */
  readonly current: Amperes;
  /** Its dissipation when already computed (and recorded) elsewhere, e.g. by the stage analysis: then not computed again. */
  readonly power?: Watts;
}

export interface TransistorLoad {
  readonly name?: string;
  /** VDS in the device's polarity (≥ 0 in normal operation). */
  readonly vds: Volts;
  /** Channel current magnitude. */
  readonly id: Amperes;
  /** Its dissipation when already computed (and recorded) elsewhere: then not computed again. */
  readonly power?: Watts;
}

export interface DissipationItem {
  readonly name: string;
  readonly kind: "resistor" | "transistor";
  readonly power: Watts;
  /** Rating and derating used; absent when no limit was given for the part. */
  readonly rating?: Watts;
  readonly derating?: number;
  readonly allowed?: Watts;
  /** allowed − power: negative when the check fails. */
  readonly margin?: Watts;
  /** power / allowed. */
  readonly utilisation?: number;
  /** True when within its allowed power, or when no limit was given. */
  readonly passed: boolean;
  readonly checked: boolean;
}

export interface DissipationReport {
  readonly items: readonly DissipationItem[];
  /** Every checked part within its allowed power. */
  readonly passed: boolean;
  readonly failures: readonly DissipationItem[];
  /** Sum of the dissipations listed. */
  readonly total: Watts;
}

function checkRating(r: PartRating, origin: string): { rating: Watts; derating: Ratio } {
  if (!r || typeof r !== "object") throw new InputError(r, "a rating object { rating, derating? }", origin);
  requirePositive(r.rating, `${origin}.rating`, "a rated power > 0 in W");
  const d = r.derating ?? 1;
  if (typeof d !== "number" || !Number.isFinite(d) || d <= 0 || d > 1)
    throw new InputError(d, "a derating factor 0 < f ≤ 1 (the fraction of the rating the design may use)", `${origin}.derating`);
  return { rating: r.rating, derating: d as Ratio };
}

const fmtW = (w: number) => `${+(w * 1e3).toPrecision(3)} mW`;

function judge(
  name: string,
  kind: DissipationItem["kind"],
  power: Watts,
  r: PartRating | undefined,
  origin: string,
  rec?: Derivation,
): DissipationItem {
  if (!r) return { name, kind, power, passed: true, checked: false };
  const { rating, derating } = checkRating(r, origin);
  const allowed = rec ? rec.calc(allowedPower, [rating, derating]) : allowedPower.fn(rating, derating);
  const margin = (allowed - power) as Watts;
  const item: DissipationItem = {
    name,
    kind,
    power,
    rating,
    derating,
    allowed,
    margin,
    utilisation: power / allowed,
    passed: margin >= 0,
    checked: true,
  };
  if (rec) {
    rec.check(`${name} dissipation within ${fmtW(rating)} × ${derating}`, power, "power", { max: allowed });
    if (!item.passed)
      rec.find("warning", `${name} dissipates ${fmtW(power)}, ${fmtW(-margin)} over its allowed ${fmtW(allowed)} (${fmtW(rating)} rating × ${derating}).`);
  }
  return item;
}

/** Check resistor and transistor dissipation against the stated limits. */
export function checkDissipation(
  parts: { readonly resistors: readonly ResistorLoad[]; readonly transistor?: TransistorLoad },
  limits: DissipationLimits,
  rec?: Derivation,
): DissipationReport {
  if (!parts || !Array.isArray(parts.resistors)) throw new InputError(parts, "{ resistors: [...], transistor? }", "dissipation parts");
  if (!limits || typeof limits !== "object") throw new InputError(limits, "dissipation limits { resistor?, resistors?, transistor? }", "dissipation limits");
  const items: DissipationItem[] = [];
  for (const r of parts.resistors) {
    const at = `resistor ${r.name}`;
    requireNonNegative(r.resistance, `${at}.resistance`, "a resistance ≥ 0 in Ω");
    requireFinite(r.current, `${at}.current`, "a finite current in A");
    const p = r.power ?? (rec ? rec.calc(resistorPower, [r.current, r.resistance], r.name) : resistorPower.fn(r.current, r.resistance));
    const rating = limits.resistors?.[r.name] ?? limits.resistor;
    items.push(judge(r.name, "resistor", p, rating, limits.resistors?.[r.name] ? `limits.resistors.${r.name}` : "limits.resistor", rec));
  }
  if (parts.transistor) {
    const t = parts.transistor;
    const name = t.name ?? "transistor";
    requireFinite(t.vds, `${name}.vds`, "a finite VDS in V");
    requireFinite(t.id, `${name}.id`, "a finite drain current in A");
    const p = t.power ?? (rec ? rec.calc(devicePower, [t.id, t.vds], name) : devicePower.fn(t.id, t.vds));
    items.push(judge(name, "transistor", p, limits.transistor, "limits.transistor", rec));
  }
  if (rec) {
    if (items.some((i) => i.checked && i.derating === 1))
      rec.find("caution", "A part is checked against its full rating (no derating stated); common practice is to use no more than about half of a resistor's rated power.");
    if (!limits.transistor && parts.transistor)
      rec.find("note", "No transistor dissipation limit was given: VDS·ID is reported but not checked. Take the limit from the datasheet at the intended ambient.");
  }
  const failures = items.filter((i) => !i.passed);
  return { items, passed: failures.length === 0, failures, total: items.reduce((a, i) => a + i.power, 0) as Watts };
}

/**
 * Dissipation of a solved stage: every resistance component of its topology
 * (values from the stage, currents from the analysis) and the transistor.
 */
export function stageDissipation(stage: Stage<string, object>, analysis: StageAnalysis, limits: DissipationLimits, rec?: Derivation): DissipationReport {
  const topo = topologyFor(stage.topology, "stage.topology");
  const resistors: ResistorLoad[] = [];
  for (const f of topo.components) {
    if (f.dim !== "resistance") continue;
    const r = (stage.components as Readonly<Record<string, number | undefined>>)[f.name];
    if (r === undefined) continue;
    const i = analysis.currents[f.name];
    if (i === undefined) throw new InputError(undefined, `a current for ${f.name} in the analysis`, `analysis.currents.${f.name}`);
    // The analysis computed (and recorded) each dissipation once; use its figures rather than a second derivation.
    const p = analysis.power.components[f.name];
    resistors.push({ name: f.name, resistance: r as Ohms, current: i, ...(p !== undefined ? { power: p } : {}) });
  }
  rec?.note("Dissipation", "Each part's dissipation as computed in the analysis above, against its rating:");
  return checkDissipation(
    { resistors, transistor: { name: "transistor", vds: analysis.op.vdsDevice, id: Math.abs(analysis.op.channelCurrent) as Amperes, power: analysis.power.transistor } },
    limits,
    rec,
  );
}
