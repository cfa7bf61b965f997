/**
 * Checks over tolerances: every stage check (overdrive, saturation margin,
 * power, headroom, the part's ratings…) and the drain-current band, counted
 * over each case that lib/bias/tolerance.ts solves, with the spread of each
 * checked value and its yield (the share of cases that pass).
 *
 * Method: the tolerance analysis is given a solve function that analyses each
 * case through the stage's registered topology and tallies its checks as it
 * goes, so nothing per case is kept (constant memory whatever the sample
 * count). A case that cannot be solved, or that lacks a check (the saturation
 * margin of a device in cutoff), fails that check. Corners: every corner must
 * pass every check. Monte Carlo: each yield must reach `minYield` when given,
 * else the yields are reported and not checked.
 */
import type { Dimension } from "../quantity.js";
import { dimensions } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { toleranceAnalysis, type FigureSpread, type ToleranceReport } from "./tolerance.js";
import type { ToleranceSection } from "./tolerance-file.js";
import { topologyFor, type Stage, type StageAnalysis, type StageCheck } from "./topology.js";

export interface CheckYield {
  readonly name: string;
  /** SI unit of the checked value, as in `StageCheck`. */
  readonly unit: string;
  /** Cases counted (the nominal stage is not one of them). */
  readonly cases: number;
  /** Cases that solved, had the check, and passed it. */
  readonly passed: number;
  /** passed / cases. */
  readonly yield: number;
  /** Spread of the checked value over the cases that had it (NaN-free: ±Infinity when none). */
  readonly min: number;
  readonly max: number;
  /** Smallest margin seen (negative: a case failed by that much). */
  readonly worstMargin: number;
  /** Whether the yield meets what is asked: every case for corners, `minYield` for Monte Carlo (true when none is asked). */
  readonly ok: boolean;
}

export interface ToleranceChecks {
  readonly method: ToleranceReport["method"];
  readonly cases: number;
  readonly parameters: ToleranceReport["parameters"];
  readonly temperatures: ToleranceReport["temperatures"];
  readonly spread: { readonly id: FigureSpread; readonly vd: FigureSpread; readonly vs: FigureSpread; readonly vov: FigureSpread; readonly saturationMargin: FigureSpread };
  readonly checks: readonly CheckYield[];
  /** Cases that could not be solved. */
  readonly unsolved: number;
  /** The required yield for Monte Carlo (1 for corners). */
  readonly required?: number;
  readonly passed: boolean;
}

type Tally = { unit: string; passed: number; seen: number; min: number; max: number; worstMargin: number };

/** The name of the drain-current band check. */
export const idBandCheckName = (band: number) => `Drain current within ±${+(band * 100).toPrecision(3)} % of nominal`;

/** The checks of one solved case, with the drain-current band check when a band is given. */
function caseChecks(a: StageAnalysis, idNominal: number, band: number | undefined): StageCheck[] {
  const checks = [...a.metrics.checks];
  if (band !== undefined) {
    const id = a.currents.drain;
    const lo = idNominal * (1 - band);
    const hi = idNominal * (1 + band);
    checks.push({ name: idBandCheckName(band), passed: id >= lo && id <= hi, value: id, unit: "A", min: lo, max: hi, margin: Math.min(id - lo, hi - id) });
  }
  return checks;
}

const dimOfUnit = (unit: string): Dimension | undefined => (Object.keys(dimensions) as Dimension[]).find((d) => dimensions[d].unit === unit && d !== "fraction" && d !== "count");

/**
 * Analyse `stage` over the section's tolerances and temperatures and count
 * every check per case. With `rec`, the tolerance analysis is recorded and each
 * check's yield is recorded as a check of its own.
 */
export function toleranceChecks(stage: Stage, section: ToleranceSection, rec?: Derivation): ToleranceChecks {
  const topo = topologyFor(stage.topology, "stage.topology");
  const nominal = topo.analyze(stage);
  const idNominal = nominal.currents.drain;
  const tallies = new Map<string, Tally>();
  let calls = 0;
  let unsolved = 0;
  const tally = (checks: readonly StageCheck[], sign: 1 | -1) => {
    for (const c of checks) {
      let t = tallies.get(c.name);
      if (!t) tallies.set(c.name, (t = { unit: c.unit, passed: 0, seen: 0, min: Infinity, max: -Infinity, worstMargin: Infinity }));
      t.seen += sign;
      if (c.passed) t.passed += sign;
      if (sign > 0) {
        t.min = Math.min(t.min, c.value);
        t.max = Math.max(t.max, c.value);
        t.worstMargin = Math.min(t.worstMargin, c.margin);
      }
    }
  };
  const solve = (st: Stage): StageAnalysis => {
    calls++;
    let a: StageAnalysis;
    try {
      a = topo.analyze(st);
    } catch (e) {
      unsolved++;
      throw e;
    }
    tally(caseChecks(a, idNominal, section.idBand), 1);
    return a;
  };
  const report = toleranceAnalysis(stage, { ...section.spec, solve }, rec);
  const perTemp = report.method === "monte-carlo" ? section.spec.monteCarlo!.samples : 2 ** report.parameters.length;
  const cases = perTemp * report.temperatures.length;
  // The analysis solves the nominal stage through the same function once besides its cases: take it out of the counts.
  if (calls === cases + 1) tally(caseChecks(nominal, idNominal, section.idBand), -1);
  const required = report.method === "corners" ? 1 : section.minYield;
  const checks: CheckYield[] = [...tallies].map(([name, t]) => {
    const y = cases ? t.passed / cases : 0;
    return { name, unit: t.unit, cases, passed: t.passed, yield: y, min: t.min, max: t.max, worstMargin: t.worstMargin, ok: required === undefined || y >= required };
  });
  if (rec) {
    for (const c of checks) {
      const dim = dimOfUnit(c.unit);
      const spread = dim ? ` ; value from ${+c.min.toPrecision(4)} to ${+c.max.toPrecision(4)} ${dimensions[dim].unit}` : "";
      const detail = `${c.passed} of ${c.cases} cases pass${spread}`;
      if (required === undefined) rec.note(`Yield: ${c.name}`, `${detail} (${+(c.yield * 100).toPrecision(4)} %; no yield asked)`);
      else rec.check(`Yield: ${c.name}`, c.yield, "fraction", { min: required }, detail);
    }
  }
  return {
    method: report.method,
    cases,
    parameters: report.parameters,
    temperatures: report.temperatures,
    spread: { id: report.id, vd: report.vd, vs: report.vs, vov: report.vov, saturationMargin: report.saturationMargin },
    checks,
    unsolved,
    ...(required !== undefined ? { required } : {}),
    passed: checks.every((c) => c.ok),
  };
}
