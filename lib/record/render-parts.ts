/**
 * What every rendering of a derivation says, in the same words: the verdict,
 * the bound of a check, the closing cautions. The format-specific renderers
 * only lay these out.
 */
import { InputError } from "../errors.js";
import { contrastDigits, formatQuantity, type FormatOptions } from "../units/format.js";
import { splitSolverChecks, type CheckEntry, type Derivation, type DerivationData } from "./derivation.js";

/** What renderers accept: a live record or its JSON data. */
export type DerivationLike = Derivation | DerivationData;
import { fingerprint, shortFingerprint } from "./fingerprint.js";

export interface RenderOptions extends FormatOptions {
  /** Leave out the closing cautions (a report that prints them once for several records). */
  readonly omitCautions?: boolean;
}

/** The closing cautions every rendering carries (one list, lib/record/cautions.ts). */
export { cautions } from "./cautions.js";

/** The fingerprint a record carries, or the one computed from its inputs. */
export const fingerprintOf = (d: DerivationData): string => d.fingerprint ?? fingerprint(d);
export const shortFingerprintOf = (d: DerivationData): string => shortFingerprint(fingerprintOf(d));
/** Said beside the fingerprint when it covers nothing: every record without inputs has the same one. */
export const noInputsNote = (d: DerivationData): string => (d.inputs.length ? "" : " (no inputs recorded)");

/**
 * A record's checks in the order they are printed: the design checks, then the
 * solver's own (titles starting with solverCheckPrefix) under a heading of their
 * own, the prefix dropped there. Empty groups are left out.
 */
export function checkGroups(d: DerivationData): { heading: string; checks: CheckEntry[] }[] {
  const { design, solver } = splitSolverChecks(d.checks);
  const groups: { heading: string; checks: CheckEntry[] }[] = [];
  if (design.length) groups.push({ heading: "Checks", checks: design });
  if (solver.length) groups.push({ heading: "Solver checks", checks: solver });
  return groups;
}

export function verdict(d: DerivationData): { passed: boolean; text: string } {
  const n = d.checks.length;
  const failed = d.checks.filter((c) => !c.passed).length;
  if (n === 0) return { passed: true, text: "no checks recorded" };
  if (failed === 0) return { passed: true, text: n === 1 ? "the check passes" : `all ${n} checks pass` };
  return { passed: false, text: `${failed} of ${n} checks fail` };
}

/** Digits at which a check's value and its bounds print differently when they differ (see contrastDigits). */
function checkDigits(c: CheckEntry, opts: FormatOptions): FormatOptions {
  const base = opts.digits ?? 3;
  const d = Math.max(contrastDigits(c.value, c.min ?? c.value, base), contrastDigits(c.value, c.max ?? c.value, base));
  return d === base ? opts : { ...opts, digits: d };
}

/** `≥ 200 mV`, `≤ 4.50 V`, `200 mV … 4.50 V`, or "recorded" when the check has no bound. */
export function boundText(c: CheckEntry, opts: FormatOptions = {}): string {
  const o = checkDigits(c, opts);
  const f = (v: number) => formatQuantity(v, c.dim, { ...o, origin: `check "${c.title}" bound` });
  if (c.min !== undefined && c.max !== undefined) return `${f(c.min)} … ${f(c.max)}`;
  if (c.min !== undefined) return `≥ ${f(c.min)}`;
  if (c.max !== undefined) return `≤ ${f(c.max)}`;
  return "no bound";
}

export const valueText = (c: CheckEntry, opts: FormatOptions = {}): string => formatQuantity(c.value, c.dim, { ...checkDigits(c, opts), origin: `check "${c.title}" value` });

/** Margin to the nearest bound, signed: `+120 mV` passed, `-35.0 mV` failed. */
export function marginText(c: CheckEntry, opts: FormatOptions = {}): string {
  if (c.min === undefined && c.max === undefined) return "—";
  if (Number.isNaN(c.margin)) return "—";
  const t = formatQuantity(c.margin, c.dim, { ...opts, origin: `check "${c.title}" margin` });
  return c.margin > 0 ? `+${t}` : t;
}

export const statusText = (c: CheckEntry): string => (c.passed ? "pass" : "FAIL");

/** One record or a design's list of them; an empty list is refused (a report of nothing is a mistake upstream). */
export function asList(d: DerivationLike | readonly DerivationLike[]): readonly DerivationData[] {
  const list = Array.isArray(d) ? (d as readonly DerivationLike[]) : [d as DerivationLike];
  if (list.length === 0) throw new InputError(d, "at least one derivation", "render");
  return list.map((x, i) => {
    const data = x && typeof (x as Derivation).toJSON === "function" ? (x as Derivation).toJSON() : (x as DerivationData);
    if (!data || typeof data !== "object" || !Array.isArray(data.steps) || !Array.isArray(data.checks) || !Array.isArray(data.inputs))
      throw new InputError(x, "derivation data (a Derivation, its toJSON(), or reviveDerivation of its JSON)", `render: derivation ${i + 1}`);
    return data;
  });
}
