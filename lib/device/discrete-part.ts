/**
 * Discrete MOSFETs from their datasheet. A board designer has a part's typical
 * figures and absolute maximum ratings, not k' and W/L; this module turns the
 * figures into the square-law model the rest of the library uses, and checks
 * an operating point against the ratings.
 *
 * Method (square law applied to datasheet typical values, common practice):
 *   k  = gfs² / (2·ID,fs)            from gfs = √(2·k·ID) in saturation
 *   Vt = VGS(th) − √(2·ID,th / k)    VGS(th) is read at a small stated current
 *   Ron = 1 / (k·(VGS,on − Vt))      cross-check against the stated RDS(on)
 * The model is an equivalent Level 1 card with KP = k and W = L = 1 µm (the
 * part's W/L is absorbed in k), λ = 0 and γ = 0 (three-terminal part: body tied
 * to source inside the package). Datasheet figures are typical values taken
 * at different conditions, so the RDS(on) cross-check rarely agrees: its
 * ratio is recorded as a finding, never silently.
 *
 * Failure mode: a part whose figures give Vt ≤ 0 or are not finite and
 * positive is refused with an InputError naming the field.
 */
import type { DatasheetCapacitances } from "./capacitance-card.js";
import type { DeviceCard, Polarity } from "./card.js";
import { InputError, requireFinite, requirePositive } from "../errors.js";
import * as df from "../formulas/discrete.formulas.js";
import { onResistance, overdrive } from "../formulas/device.formulas.js";
import type { Amperes, AmperesPerVoltSquared, Kelvin, KelvinPerWatt, Meters, Ohms, Siemens, Volts, Watts } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";

/**
 * Where a part's PD is stated: the ambient temperature TA (free air) or the case temperature TC (an ideal heat
 * sink), in K; exactly one. The same shape in a part file, there with units (`{ "ambient": "25 degC" }`).
 */
export type PowerRatingReference = { readonly ambient: Kelvin; readonly case?: undefined } | { readonly case: Kelvin; readonly ambient?: undefined };

/** Absolute maximum ratings (magnitudes). */
export interface PartRatings {
  /** Drain-source voltage VDS(max). */
  readonly vds: Volts;
  /** Gate-source voltage ±VGS(max). */
  readonly vgs: Volts;
  /** Continuous drain current ID(max). */
  readonly id: Amperes;
  /** Power dissipation PD at its stated temperature. */
  readonly pd: Watts;
  /** Where PD is stated, as the datasheet writes it ("PD at TA = 25 °C" or "at TC = 25 °C"). */
  readonly pdAt: PowerRatingReference;
  /** Maximum junction temperature TJ(max). */
  readonly tjMax: Kelvin;
  /** Junction-to-ambient thermal resistance, when stated. */
  readonly rthJA?: KelvinPerWatt;
  /** Junction-to-case thermal resistance, when stated. */
  readonly rthJC?: KelvinPerWatt;
}

/** A discrete part card: the datasheet's figures (magnitudes, typical values) and ratings. */
export interface DiscretePart {
  readonly name: string;
  readonly polarity: Polarity;
  /** Gate threshold VGS(th) at a stated drain current (and VDS; VDS = VGS when omitted). */
  readonly threshold: { readonly vgs: Volts; readonly id: Amperes; readonly vds?: Volts };
  /** Forward transconductance gfs at a stated drain current (and VDS). */
  readonly forwardTransconductance: { readonly gfs: Siemens; readonly id: Amperes; readonly vds?: Volts };
  /** On-resistance RDS(on) at a stated gate drive and current, for the cross-check. */
  readonly onResistance?: { readonly rds: Ohms; readonly vgs: Volts; readonly id: Amperes };
  readonly ratings: PartRatings;
  /** The datasheet's Ciss, Crss, Coss at their test VDS, for frequency analysis (copied onto the derived card). */
  readonly capacitances?: DatasheetCapacitances;
  /** Where the figures come from: the datasheet and its revision, or "invented". */
  readonly provenance?: string;
}

/** The ambient a part's board runs at when none is stated: 25 °C (common practice for datasheet figures). */
export const defaultAmbient = 298.15 as Kelvin;

/** A part as used in a stage: the card, the ambient temperature its board runs at, and its heat sink when it has one. */
export interface PartInUse {
  readonly part: DiscretePart;
  readonly ambient: Kelvin;
  /**
   * Case-to-ambient thermal resistance RθCA of the part's mounting (the interface and the heat sink), when it sits
   * on one: TJ is then checked as TA + P·(RθJC + RθCA), which needs the card's RθJC.
   */
  readonly rthCA?: KelvinPerWatt;
}

/** Record how a part is used (its ambient, its heat sink) as inputs of `rec`. */
export function recordPartInUse(rec: Derivation, use: PartInUse): void {
  rec.input(`ambient (${use.part.name})`, use.ambient, "temperature", "device.ambient");
  if (use.rthCA !== undefined) rec.input(`RθCA (${use.part.name})`, use.rthCA, "thermalResistance", "device.rthCA (interface and heat sink)");
}

/** A part in use, validated once: the ambient above absolute zero, RθCA > 0 and only beside a card's RθJC. `origin` is the device's field path. */
export function partInUse(part: DiscretePart, ambient: number, rthCA: number | undefined, origin: string): PartInUse {
  if (typeof ambient !== "number" || !(ambient > 0) || !Number.isFinite(ambient)) throw new InputError(ambient, "an ambient temperature above absolute zero in K (or degC as text)", `${origin}.ambient`, "invalid-design");
  if (rthCA === undefined) return { part, ambient: ambient as Kelvin };
  requirePositive(rthCA, `${origin}.rthCA`, "a case-to-ambient thermal resistance RθCA > 0 in K/W (interface and heat sink)");
  if (part.ratings.rthJC === undefined)
    throw new InputError(rthCA, `a part card that states RθJC (ratings.rthJC of "${part.name}"): RθCA adds to the junction-to-case resistance`, `${origin}.rthCA`, "invalid-design");
  return { part, ambient: ambient as Kelvin, rthCA: rthCA as KelvinPerWatt };
}

/** The square-law model derived from a part. */
export interface PartModel {
  readonly card: DeviceCard;
  /** Equivalent drawn size: W = L = 1 µm, so KP = k. */
  readonly w: Meters;
  readonly l: Meters;
  readonly k: AmperesPerVoltSquared;
  /** Threshold magnitude. */
  readonly vt: Volts;
  /** Model on-resistance at the stated RDS(on) condition and its ratio to the stated value, when RDS(on) is given. */
  readonly ron?: Ohms;
  readonly ronRatio?: number;
  readonly findings: readonly string[];
}

/** Equivalent drawn size of a discrete part's model. */
export const partSize = 1e-6 as Meters;

/** The temperature PD is stated at (TA or TC). */
const pdTemperature = (r: PartRatings): Kelvin => (r.pdAt.case ?? r.pdAt.ambient) as Kelvin;

/** Validate a part card once, naming the first bad field; returns it unchanged. */
export function checkPart(part: DiscretePart, origin = "part"): DiscretePart {
  if (!part || typeof part !== "object") throw new InputError(part, "a discrete part card", origin, "invalid-design");
  const at = (f: string) => `${origin}${part.name ? ` "${part.name}"` : ""}.${f}`;
  if (part.polarity !== "nmos" && part.polarity !== "pmos") throw new InputError(part.polarity, `"nmos" or "pmos"`, at("polarity"), "invalid-design");
  const pos = (v: number, f: string, what: string) => requirePositive(v, at(f), what);
  pos(part.threshold?.vgs, "threshold.vgs", "a gate threshold magnitude |VGS(th)| > 0 in V (an enhancement part)");
  pos(part.threshold?.id, "threshold.id", "the drain current at which VGS(th) is stated, > 0 in A");
  if (part.threshold.vds !== undefined) pos(part.threshold.vds, "threshold.vds", "the VDS at which VGS(th) is stated, > 0 in V");
  pos(part.forwardTransconductance?.gfs, "forwardTransconductance.gfs", "a forward transconductance gfs > 0 in S");
  pos(part.forwardTransconductance?.id, "forwardTransconductance.id", "the drain current at which gfs is stated, > 0 in A");
  if (part.onResistance) {
    pos(part.onResistance.rds, "onResistance.rds", "an on-resistance RDS(on) > 0 in Ω");
    pos(part.onResistance.vgs, "onResistance.vgs", "the gate drive |VGS| at which RDS(on) is stated, > 0 in V");
    pos(part.onResistance.id, "onResistance.id", "the drain current at which RDS(on) is stated, > 0 in A");
  }
  const r = part.ratings;
  if (!r || typeof r !== "object") throw new InputError(r, "the absolute maximum ratings { vds, vgs, id, pd, pdAt, tjMax, rthJA?, rthJC? }", at("ratings"), "invalid-design");
  pos(r.vds, "ratings.vds", "VDS(max) > 0 in V");
  pos(r.vgs, "ratings.vgs", "VGS(max) > 0 in V");
  pos(r.id, "ratings.id", "ID(max) > 0 in A");
  pos(r.pd, "ratings.pd", "PD > 0 in W");
  const pdAt = r.pdAt as unknown;
  // Keys given a value (the type's `case?: undefined` may be spelled out).
  const keys = pdAt && typeof pdAt === "object" ? Object.entries(pdAt).filter(([, v]) => v !== undefined).map(([k]) => k) : [];
  if (keys.length !== 1 || (keys[0] !== "ambient" && keys[0] !== "case"))
    throw new InputError(pdAt, "where PD is stated: { ambient: 298.15 } or { case: 298.15 } (the datasheet's TA or TC, in K)", at("ratings.pdAt"), "invalid-design");
  const tPd = pdTemperature(r);
  pos(tPd, `ratings.pdAt.${keys[0]}`, "the temperature at which PD is stated, in K (or degC as text)");
  pos(r.tjMax, "ratings.tjMax", "TJ(max) in K (or degC as text)");
  if (!(r.tjMax > tPd)) throw new InputError(r.tjMax, `TJ(max) above the temperature at which PD is stated (${tPd} K)`, at("ratings.tjMax"));
  if (r.rthJA !== undefined) pos(r.rthJA, "ratings.rthJA", "RθJA > 0 in K/W");
  if (r.rthJC !== undefined) pos(r.rthJC, "ratings.rthJC", "RθJC > 0 in K/W");
  if (part.threshold.vgs >= r.vgs) throw new InputError(part.threshold.vgs, `VGS(th) below VGS(max) = ${r.vgs} V`, at("threshold.vgs"));
  return part;
}

/** Derive the square-law model from a part's figures, recording each step when `rec` is given. */
export function partModel(part: DiscretePart, rec?: Derivation, origin = "part"): PartModel {
  checkPart(part, origin);
  const at = (f: string) => `${origin} "${part.name}".${f}`;
  const { gfs, id: idFs } = part.forwardTransconductance;
  const { vgs: vgsTh, id: idTh } = part.threshold;
  if (rec) {
    rec.input("gfs", gfs, "conductance", at("forwardTransconductance.gfs"));
    rec.input("ID at gfs", idFs, "current", at("forwardTransconductance.id"));
    rec.input("VGS(th)", vgsTh, "voltage", at("threshold.vgs"));
    rec.input("ID at VGS(th)", idTh, "current", at("threshold.id"));
    rec.assume("The part follows the square law between its threshold current and its gfs current; datasheet figures are typical values, each taken at its own conditions (common practice).");
    rec.assume("λ = 0 (datasheets rarely state it) and γ = 0 (the body is tied to the source inside the package).");
  }
  const k = df.kFromForwardTransconductance.fn(gfs, idFs);
  rec?.step(df.kFromForwardTransconductance, [gfs, idFs], k, "the gfs figure fixes k; W/L is absorbed in it");
  requireFinite(k, at("forwardTransconductance"), "figures that give a finite k");
  const vt = df.thresholdFromGateThreshold.fn(vgsTh, idTh, k);
  rec?.step(df.thresholdFromGateThreshold, [vgsTh, idTh, k], vt, "VGS(th) sits above Vt by the overdrive its small current needs");
  if (!(vt > 0))
    throw new InputError(vt, `a threshold Vt > 0 from VGS(th) = ${vgsTh} V at ${idTh} A with k = ${k} A/V² (the figures are inconsistent for the square law: check gfs and its current)`, at("threshold"));
  const findings: string[] = [];
  const sign = part.polarity === "nmos" ? 1 : -1;
  let ron: Ohms | undefined;
  let ronRatio: number | undefined;
  if (part.onResistance) {
    const { rds, vgs } = part.onResistance;
    rec?.input("RDS(on)", rds, "resistance", at("onResistance.rds"));
    rec?.input("VGS at RDS(on)", vgs, "voltage", at("onResistance.vgs"));
    const vov = overdrive.fn(vgs, vt);
    rec?.step(overdrive, [vgs, vt], vov, "overdrive at the RDS(on) gate drive");
    if (vov > 0) {
      ron = onResistance.fn(k, vov);
      rec?.step(onResistance, [k, vov], ron, "deep triode, VDS → 0: the model's on-resistance at that drive");
      ronRatio = df.onResistanceRatio.fn(ron, rds);
      rec?.step(df.onResistanceRatio, [ron, rds], ronRatio, "how far the model is from the stated RDS(on)");
      const pct = Math.round((ronRatio - 1) * 100);
      const text =
        `The model's on-resistance at VGS = ${vgs} V is ${+ron.toPrecision(3)} Ω against the stated RDS(on) of ${rds} Ω (${pct >= 0 ? "+" : ""}${pct} %). ` +
        (ronRatio < 0.5 || ronRatio > 2
          ? "The square law fitted at the gfs current does not describe the part at full drive (mobility degradation, series resistance, different test conditions): trust the model only near its gfs current and verify with the manufacturer's model or a measurement."
          : "Typical datasheet figures at different conditions agree this far; the model is a first cut.");
      findings.push(text);
      rec?.find(ronRatio < 0.5 || ronRatio > 2 ? "warning" : "note", text);
    } else {
      const text = `RDS(on) is stated at VGS = ${vgs} V, at or below the derived threshold ${+vt.toPrecision(3)} V: the cross-check cannot be made, and the figures disagree.`;
      findings.push(text);
      rec?.find("warning", text);
    }
  }
  const card: DeviceCard = {
    name: part.name,
    polarity: part.polarity,
    kp: k,
    vt0: (sign * vt) as Volts,
    lambda: 0 as DeviceCard["lambda"] & number,
    gamma: 0 as DeviceCard["gamma"] & number,
    provenance: `derived from the datasheet figures of ${part.name}${part.provenance ? ` (${part.provenance})` : ""}; W = L = 1 µm so KP = k`,
    ...(part.capacitances ? { datasheetCapacitances: part.capacitances } : {}),
  };
  return { card, w: partSize, l: partSize, k, vt, ...(ron !== undefined ? { ron, ronRatio: ronRatio! } : {}), findings };
}

/** The operating point a rating is checked at (device polarity magnitudes). */
export interface PartStress {
  readonly vgs: number;
  readonly vds: number;
  readonly id: number;
  readonly power: number;
}

/**
 * Check an operating point against the part's absolute maximum ratings: |VDS|,
 * |VGS|, ID, dissipation (PD derated linearly to TJ(max) when it is stated at
 * the ambient and the board runs hotter) and junction temperature from RθJA.
 * `check` records each check (a Derivation's rule); the formulas are recorded
 * with `rec`.
 */
export function ratingChecks<T>(use: PartInUse, stress: PartStress, check: (name: string, value: number, dim: "voltage" | "current" | "power" | "temperature", max: number, detail?: string) => T, rec?: Derivation, label = use.part.name): T[] {
  const { part, ambient } = use;
  const r = part.ratings;
  const out: T[] = [];
  const n = label;
  out.push(check(`${n}: |VDS| within VDS(max)`, Math.abs(stress.vds), "voltage", r.vds, "absolute maximum rating"));
  out.push(check(`${n}: |VGS| within VGS(max)`, Math.abs(stress.vgs), "voltage", r.vgs, "absolute maximum rating"));
  out.push(check(`${n}: ID within ID(max)`, Math.abs(stress.id), "current", r.id, "continuous rating"));
  let allowed: number = r.pd;
  const tPd = pdTemperature(r);
  let detail = `PD at ${r.pdAt.case !== undefined ? "case" : "ambient"} ${+(tPd - 273.15).toFixed(1)} °C`;
  if (r.pdAt.ambient !== undefined && ambient > tPd) {
    allowed = df.deratedPowerRating.fn(r.pd, r.tjMax, ambient, tPd);
    rec?.step(df.deratedPowerRating, [r.pd, r.tjMax, ambient, tPd], allowed, "the board runs above the temperature PD is stated at");
    detail = `PD derated to the ${+(ambient - 273.15).toFixed(1)} °C ambient`;
  } else if (r.pdAt.case !== undefined) rec?.find("caution", `${n}: PD is stated at the case (an ideal heat sink); on a board the junction temperature from RθJA is the real limit.`);
  out.push(check(`${n}: dissipation within PD`, stress.power, "power", allowed, detail));
  const ta = +(ambient - 273.15).toFixed(1);
  if (use.rthCA !== undefined) {
    // On a heat sink the series path junction–case–ambient sets TJ (the free-air RθJA path beside it is left out).
    if (r.rthJC === undefined) throw new InputError(use.rthCA, `a part card that states RθJC (ratings.rthJC): RθCA adds to it`, `${n}: rthCA`, "invalid-design");
    const tj = df.junctionTemperatureThroughCase.fn(ambient, stress.power as Watts, r.rthJC, use.rthCA);
    rec?.step(df.junctionTemperatureThroughCase, [ambient, stress.power, r.rthJC, use.rthCA], tj, "steady state, the part on its heat sink");
    out.push(check(`${n}: junction temperature within TJ(max)`, tj, "temperature", r.tjMax, `ambient ${ta} °C, RθJC ${r.rthJC} K/W + RθCA ${use.rthCA} K/W (heat sink)`));
  } else if (r.rthJA !== undefined) {
    const tj = df.junctionTemperature.fn(ambient, stress.power as Watts, r.rthJA);
    rec?.step(df.junctionTemperature, [ambient, stress.power, r.rthJA], tj, "steady state, the part in free air on its board");
    out.push(check(`${n}: junction temperature within TJ(max)`, tj, "temperature", r.tjMax, `ambient ${ta} °C, RθJA ${r.rthJA} K/W`));
  } else if (r.rthJC !== undefined)
    rec?.find("caution", `${n}: the card states RθJC but no RθJA, so the junction temperature is not checked; give the heat sink's case-to-ambient resistance as the device's rthCA to check TJ = TA + P·(RθJC + RθCA).`);
  else rec?.find("caution", `${n}: no RθJA or RθJC stated, so the junction temperature is not checked; check it by hand from the part's thermal path.`);
  return out;
}
