/**
 * Choosing standard values as a set. Rounding each ideal resistor to its
 * nearest standard value on its own can move the stage further from its
 * specification than a nearby combination would (a divider whose two halves
 * round the same way shifts its ratio). `snapToSeries` tries every combination
 * of each value's nearest standard neighbours, re-scores the stage for each
 * with the caller's objective, and keeps the best.
 */
import { InputError, PinchoffError } from "../errors.js";
import type { Dimension } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { formatQuantity } from "../units/format.js";
import { logDistance, nearestStandard, seriesOf, standardValuesAround, type ESeries, type SeriesName } from "./eseries.js";

/** Deviation of the stage from its specification for one set of values; lower is better, 0 is exact. */
export type SnapObjective = (values: readonly number[]) => number;

export interface SnapProblem {
  /** Component names, e.g. ["R1", "R2", "RD", "RS"]. */
  readonly names: readonly string[];
  /** Ideal values in SI units (Ω for resistors), one per name. */
  readonly ideal: readonly number[];
  readonly series: SeriesName | ESeries;
  /** Standard values tried per component, nearest in log distance (default 2: the neighbours either side). */
  readonly candidates?: number;
  /**
   * Scores a combination. It may throw a PinchoffError (e.g. the stage falls
   * into cutoff with that combination): the combination is then counted as
   * rejected, with the reason kept.
   */
  readonly objective: SnapObjective;
  /** What the score means, for the record, e.g. "largest relative deviation of ID and VD". */
  readonly objectiveLabel?: string;
  /** Dimension of the values, for the record; "resistance" when omitted. */
  readonly dim?: Dimension;
}

export interface SnappedComponent {
  readonly name: string;
  readonly ideal: number;
  readonly chosen: number;
  /** Candidates that were tried for this component. */
  readonly candidates: readonly number[];
  /** (chosen − ideal)/ideal. */
  readonly deviation: number;
  /** The value independent rounding would have picked. */
  readonly nearest: number;
}

export interface SnapResult {
  readonly series: SeriesName;
  readonly components: readonly SnappedComponent[];
  readonly chosen: readonly number[];
  /** Objective at the chosen values. */
  readonly score: number;
  /** Objective with each value rounded to its nearest standard value on its own (Infinity when that combination was rejected). */
  readonly nearestScore: number;
  readonly combinationsTried: number;
  readonly combinationsRejected: number;
  /** The best few combinations, best first, for the reviewer. */
  readonly ranking: readonly { readonly values: readonly number[]; readonly score: number }[];
}

/** The largest search allowed; beyond this the caller should fix some values first. */
export const maxCombinations = 20_000;

const fmt = (x: number) => `${+x.toPrecision(4)}`;

export function snapToSeries(problem: SnapProblem, rec?: Derivation): SnapResult {
  const s = seriesOf(problem.series, "snap.series");
  const { names, ideal, objective } = problem;
  const n = problem.candidates ?? 2;
  if (!Array.isArray(names) || names.length === 0) throw new InputError(names, "at least one component name", "snap.names");
  if (!Array.isArray(ideal) || ideal.length !== names.length)
    throw new InputError(ideal, `${names.length} ideal values, one per name (${names.join(", ")})`, "snap.ideal");
  if (typeof objective !== "function") throw new InputError(objective, "an objective function of the values", "snap.objective");
  const cands = ideal.map((v, i) => standardValuesAround(v, s, n, `ideal ${names[i]}`));
  const total = cands.reduce((p, c) => p * c.length, 1);
  if (total > maxCombinations)
    throw new InputError(total, `at most ${maxCombinations} combinations (reduce candidates or components)`, "snap");

  const nearest = ideal.map((v, i) => nearestStandard(v, s, `ideal ${names[i]}`));
  const score = (vals: readonly number[]): { score: number; why?: string } => {
    try {
      const r = objective(vals);
      if (typeof r !== "number" || Number.isNaN(r)) return { score: Infinity, why: `objective returned ${r}` };
      return { score: r };
    } catch (e) {
      if (e instanceof PinchoffError) return { score: Infinity, why: e.message };
      throw e;
    }
  };

  // Odometer over the candidate lists; no recursion, one array reused.
  const idx = new Array<number>(names.length).fill(0);
  const vals = cands.map((c) => c[0]!);
  let best: number[] | null = null;
  let bestScore = Infinity;
  let bestSpread = Infinity;
  let rejected = 0;
  let firstRejection: string | undefined;
  const ranking: { values: number[]; score: number; spread: number }[] = [];
  for (let t = 0; t < total; t++) {
    for (let i = 0; i < names.length; i++) vals[i] = cands[i]![idx[i]!]!;
    const r = score(vals);
    if (r.score === Infinity) {
      rejected++;
      firstRejection ??= `${vals.map((v, i) => `${names[i]} = ${fmt(v)}`).join(", ")}: ${r.why ?? "infinite deviation"}`;
    } else {
      // Tie-break on total log distance from the ideal values, so equal scores keep the closer parts.
      const spread = vals.reduce((a, v, i) => a + logDistance(v, ideal[i]!), 0);
      if (r.score < bestScore || (r.score === bestScore && spread < bestSpread)) {
        best = vals.slice();
        bestScore = r.score;
        bestSpread = spread;
      }
      ranking.push({ values: vals.slice(), score: r.score, spread });
    }
    for (let i = names.length - 1; i >= 0; i--) {
      if (++idx[i]! < cands[i]!.length) break;
      idx[i] = 0;
    }
  }
  if (!best)
    throw new PinchoffError(
      "infeasible",
      `none of the ${total} combinations of ${s.name} values could be evaluated; first rejection: ${firstRejection ?? "none"}`,
      "snap",
    );
  // Same order as the choice: score, then closeness to the ideal values.
  ranking.sort((a, b) => a.score - b.score || a.spread - b.spread);
  const nearestScore = score(nearest).score;
  const components = names.map((name, i) => ({
    name,
    ideal: ideal[i]!,
    chosen: best![i]!,
    candidates: cands[i]!,
    deviation: (best![i]! - ideal[i]!) / ideal[i]!,
    nearest: nearest[i]!,
  }));
  if (rec) {
    const label = problem.objectiveLabel ?? "deviation from the specification";
    const dim = problem.dim ?? "resistance";
    // Values with their unit, four digits (4.700 kΩ reads as a part; 4700 does not say what it is).
    const fmt = (x: number) => formatQuantity(x, dim, { digits: 4 });
    rec.note(
      `Standard values (${s.name})`,
      `Tried ${total} combinations of the ${n} nearest ${s.name} values of each component (${components
        .map((c) => `${c.name}: ${c.candidates.map(fmt).join(" / ")}`)
        .join("; ")}), scoring each by re-solving the stage (${label}).` +
        (rejected ? ` ${rejected} combination(s) were rejected; first: ${firstRejection}.` : ""),
    );
    rec.note(
      "Best combinations",
      ranking
        .slice(0, 5)
        .map((r, k) => `${k + 1}. ${r.values.map((v, i) => `${names[i]} = ${fmt(v)}`).join(", ")}: score ${r.score.toExponential(3)}`)
        .join("\n"),
    );
    const same = best.every((v, i) => v === nearest[i]);
    rec.note(
      "Chosen combination",
      same
        ? `${components.map((c) => `${c.name} = ${fmt(c.chosen)}`).join(", ")}: the nearest value of each component is also the best combination (score ${bestScore.toExponential(3)}).`
        : `${components.map((c) => `${c.name} = ${fmt(c.chosen)}`).join(", ")}: score ${bestScore.toExponential(3)}, against ${
            Number.isFinite(nearestScore) ? nearestScore.toExponential(3) : "a rejected combination"
          } for rounding each value on its own (${components.map((c) => `${c.name} = ${fmt(c.nearest)}`).join(", ")}).`,
    );
    for (const c of components) rec.input(`${c.name} (${s.name})`, c.chosen, dim, `standard value for ideal ${formatQuantity(c.ideal, dim, { digits: 4 })}`);
    rec.cite("IEC 60063 (preferred number series for resistors and capacitors)");
  }
  return {
    series: s.name,
    components,
    chosen: best,
    score: bestScore,
    nearestScore,
    combinationsTried: total,
    combinationsRejected: rejected,
    ranking: ranking.slice(0, 5).map((r) => ({ values: r.values, score: r.score })),
  };
}
