/**
 * The `tolerance` section of a design file: how far each part may move and at
 * which temperatures to look, read into lib/bias/tolerance.ts's
 * `ToleranceSpec`, plus the drain-current band the stage must hold. Every
 * error names the file and the field path.
 *
 *   "tolerance": {
 *     "resistors": "1 %",                 or 0.01, or by name { "rd": "1 %", "rs": "0.1 %" }
 *     "series": "E96",                    the series' own band when "resistors" is omitted
 *     "process": { "vt0": "50 mV", "kp": "10 %" },   absolute |Vt0| spread, relative k' spread
 *     "temperatures": ["-40 degC", "25 degC", "85 degC"],
 *     "monteCarlo": { "samples": 2000, "seed": 7, "distribution": "normal" },   corners when omitted
 *     "idBand": "20 %",                   ID must stay within ± this of its nominal value
 *     "minYield": "99 %"                  Monte Carlo: the share of samples each check must pass
 *   }                                     (corners: every corner must pass every check)
 */
import { InputError } from "../errors.js";
import type { Kelvin, Volts } from "../quantity.js";
import { parseQuantity } from "../units/parse.js";
import { seriesNames, type SeriesName } from "./eseries.js";
import type { ToleranceSpec } from "./tolerance.js";

/** What a design file asks of the tolerance analysis. */
export interface ToleranceSection {
  readonly spec: Omit<ToleranceSpec, "solve">;
  /** Relative half-width of the allowed drain-current band around its nominal value, when stated. */
  readonly idBand?: number;
  /** Monte Carlo: the fraction of samples each check must pass; when omitted the yields are reported, not checked. */
  readonly minYield?: number;
}

const fields = ["resistors", "series", "process", "temperatures", "monteCarlo", "idBand", "minYield"] as const;
const isObject = (v: unknown): v is Record<string, unknown> => typeof v === "object" && v !== null && !Array.isArray(v);

function only(o: Record<string, unknown>, allowed: readonly string[], at: string): void {
  for (const k of Object.keys(o)) if (!allowed.includes(k)) throw new InputError(k, `one of the fields ${allowed.join(", ")}`, `${at}.${k}`, "invalid-design");
}

/** A relative band 0 ≤ t < 1, as a number or text ("1 %", "0.01"). */
function fraction(v: unknown, at: string, what: string): number {
  if (typeof v !== "number" && typeof v !== "string") throw new InputError(v, `${what} as a fraction or a percentage ("1 %")`, at, "invalid-design");
  const x = parseQuantity(v, "dimensionless", at);
  if (!(x >= 0 && x < 1)) throw new InputError(v, `${what} from 0 to below 100 %`, at);
  return x;
}

function integer(v: unknown, at: string, expected: string, min: number): number {
  if (typeof v !== "number" || !Number.isInteger(v) || v < min) throw new InputError(v, expected, at, "invalid-design");
  return v;
}

/** Read a design file's `tolerance` section; `at` is "<file>: tolerance". */
export function parseToleranceSection(raw: unknown, at: string): ToleranceSection {
  if (!isObject(raw)) throw new InputError(raw, `a tolerance section { ${fields.join(", ")} }`, at, "invalid-design");
  only(raw, fields, at);
  const spec: { -readonly [K in keyof ToleranceSpec]?: ToleranceSpec[K] } = {};
  if (raw.resistors !== undefined) {
    if (isObject(raw.resistors)) {
      const by: Record<string, number> = {};
      for (const [name, v] of Object.entries(raw.resistors)) by[name] = fraction(v, `${at}.resistors.${name}`, "a resistor tolerance");
      spec.resistors = by;
    } else spec.resistors = fraction(raw.resistors, `${at}.resistors`, "a resistor tolerance");
  }
  if (raw.series !== undefined) {
    if (typeof raw.series !== "string" || !(seriesNames as readonly string[]).includes(raw.series))
      throw new InputError(raw.series, `one of the series ${seriesNames.join(", ")}`, `${at}.series`, "invalid-design");
    spec.series = raw.series as SeriesName;
  }
  if (raw.process !== undefined) {
    if (!isObject(raw.process)) throw new InputError(raw.process, "a process spread { vt0, kp }", `${at}.process`, "invalid-design");
    only(raw.process, ["vt0", "kp"], `${at}.process`);
    const p: { vt0?: Volts; kp?: number } = {};
    if (raw.process.vt0 !== undefined) {
      const v = raw.process.vt0;
      if (typeof v !== "number" && typeof v !== "string") throw new InputError(v, "a threshold spread in V", `${at}.process.vt0`, "invalid-design");
      const x = parseQuantity(v, "voltage", `${at}.process.vt0`);
      if (!(x >= 0)) throw new InputError(v, "a threshold spread ≥ 0 V (the half-width of the |Vt0| band)", `${at}.process.vt0`);
      p.vt0 = x as Volts;
    }
    if (raw.process.kp !== undefined) p.kp = fraction(raw.process.kp, `${at}.process.kp`, "a k' spread");
    spec.process = p;
  }
  if (raw.temperatures !== undefined) {
    if (!Array.isArray(raw.temperatures) || raw.temperatures.length === 0)
      throw new InputError(raw.temperatures, `a list of temperatures, e.g. ["-40 degC", "25 degC", "85 degC"]`, `${at}.temperatures`, "invalid-design");
    spec.temperatures = raw.temperatures.map((t, i) => {
      const where = `${at}.temperatures[${i}]`;
      if (typeof t !== "number" && typeof t !== "string") throw new InputError(t, "a temperature (\"85 degC\", or kelvin as a number)", where, "invalid-design");
      const k = parseQuantity(t, "temperature", where);
      if (!(k > 0)) throw new InputError(t, "a temperature above absolute zero", where);
      return k as Kelvin;
    });
  }
  if (raw.monteCarlo !== undefined) {
    const mc = raw.monteCarlo;
    if (!isObject(mc)) throw new InputError(mc, "a Monte Carlo run { samples, seed, distribution? }", `${at}.monteCarlo`, "invalid-design");
    only(mc, ["samples", "seed", "distribution"], `${at}.monteCarlo`);
    const samples = integer(mc.samples, `${at}.monteCarlo.samples`, "a whole number of samples ≥ 1", 1);
    const seed = integer(mc.seed, `${at}.monteCarlo.seed`, "a whole-number seed (the same seed gives the same samples)", 0);
    if (mc.distribution !== undefined && mc.distribution !== "uniform" && mc.distribution !== "normal")
      throw new InputError(mc.distribution, `"uniform" (over each band) or "normal" (the band as 3σ)`, `${at}.monteCarlo.distribution`, "invalid-design");
    spec.monteCarlo = { samples, seed, ...(mc.distribution ? { distribution: mc.distribution } : {}) };
  }
  const idBand = raw.idBand === undefined ? undefined : fraction(raw.idBand, `${at}.idBand`, "a drain-current band");
  if (idBand === 0) throw new InputError(raw.idBand, "a drain-current band > 0 (± around the nominal ID)", `${at}.idBand`);
  let minYield: number | undefined;
  if (raw.minYield !== undefined) {
    if (!spec.monteCarlo) throw new InputError(raw.minYield, "no minYield without monteCarlo (corners must all pass)", `${at}.minYield`, "invalid-design");
    const v = raw.minYield;
    if (typeof v !== "number" && typeof v !== "string") throw new InputError(v, `a yield as a fraction or a percentage ("99 %")`, `${at}.minYield`, "invalid-design");
    minYield = parseQuantity(v, "dimensionless", `${at}.minYield`);
    if (!(minYield > 0 && minYield <= 1)) throw new InputError(v, "a yield above 0 and at most 100 %", `${at}.minYield`);
  }
  return { spec, ...(idBand !== undefined ? { idBand } : {}), ...(minYield !== undefined ? { minYield } : {}) };
}
