/**
 * The `mismatch` section of a design file, and what `pinchoff op` reports
 * from it: Pelgrom coefficients per polarity, global (die-to-die) variation
 * per polarity, the Monte Carlo run and the limits its checks use. Every error
 * names the file and the field path.
 *
 *   "mismatch": {
 *     "nmos": { "avt": "5 mV*um", "abeta": "0.01 um" },   Pelgrom AVt (V·m) and Aβ (m); a card's own avt/abeta
 *     "pmos": { "avt": "6 mV*um" },                        is used where the section gives none
 *     "global": { "nmos": { "vt": "15 mV", "k": "4 %" } }, 1σ die-to-die |Vt| and relative k′ shifts
 *     "corner": { "pmos": { "vt": "30 mV", "k": "-5 %" } }, fixed shifts added to every sample (a process corner)
 *     "samples": 100000, "seed": 1,                        10 000 and 1 when omitted
 *     "limits": { "offset": "5 mV", "currentError": "1 %", "commonModeMin": "1.2 V", "commonModeMax": "2 V",
 *                 "outputVoltage": "0.5 V" },               what each check's yield counts against
 *     "minYield": "99 %"                                   each check's yield below it fails the op
 *   }
 *
 * Stages with matched devices only: the two pairs and the two mirrors.
 */
import { InputError } from "../errors.js";
import type { Dimension, Meters, Ratio, SiemensPerAmpere, VoltMeters, Volts } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { formatQuantity } from "../units/format.js";
import { parseQuantity } from "../units/parse.js";
import { maxSamples, mirrorError, mismatchMonteCarlo, pairOffset, type GlobalVariation, type MonteCarloOptions, type MonteCarloResult, type OffsetEstimate } from "./mismatch.js";
import type { Stage, StageAnalysis, StageDevice } from "./topology.js";

type Polarity = "nmos" | "pmos";

export interface MismatchSection {
  /** Pelgrom coefficients by polarity (they replace a card's own). */
  readonly coefficients: Readonly<Partial<Record<Polarity, { readonly avt?: VoltMeters; readonly abeta?: Meters }>>>;
  readonly options: MonteCarloOptions;
  /** The share of samples each check must pass; when omitted the yields are reported, not checked. */
  readonly minYield?: number;
}

/** Topologies with matched devices the Monte Carlo knows. */
export const mismatchTopologies = ["diff-pair", "diff-pair-mirror-load", "two-stage-miller", "current-mirror", "cascode-mirror"] as const;

/** Samples when the section gives none: enough for a yield to about ±0.2 % at 99 % (common practice). */
export const defaultMismatchSamples = 10_000;

const fields = ["nmos", "pmos", "global", "corner", "samples", "seed", "limits", "minYield"] as const;
const limitFields: Record<string, [Dimension, keyof NonNullable<MonteCarloOptions["limits"]>]> = {
  offset: ["voltage", "maxOffset"],
  currentError: ["dimensionless", "maxCurrentError"],
  commonModeMin: ["voltage", "commonModeMin"],
  commonModeMax: ["voltage", "commonModeMax"],
  outputVoltage: ["voltage", "outputVoltage"],
};
const isObject = (v: unknown): v is Record<string, unknown> => typeof v === "object" && v !== null && !Array.isArray(v);

function group(v: unknown, at: string, allowed: readonly string[], what: string): Record<string, unknown> {
  if (!isObject(v)) throw new InputError(v, what, at, "invalid-design");
  for (const k of Object.keys(v)) if (!allowed.includes(k)) throw new InputError(k, `one of the fields ${allowed.join(", ")}`, `${at}.${k}`, "invalid-design");
  return v;
}

function value(v: unknown, dim: Dimension, at: string, what: string, ok: (x: number) => boolean, range: string): number {
  if (typeof v !== "number" && typeof v !== "string") throw new InputError(v, `${what} as a number in SI units or text with a unit`, at, "invalid-design");
  const x = parseQuantity(v, dim, at);
  if (!ok(x)) throw new InputError(v, `${what}, ${range}`, at);
  return x;
}

function variation(raw: unknown, at: string, corner: boolean): Partial<Record<Polarity, GlobalVariation>> {
  const g = group(raw, at, ["nmos", "pmos"], `${corner ? "corner shifts" : "global 1σ variation"} by polarity { nmos?, pmos? }`);
  const out: Partial<Record<Polarity, GlobalVariation>> = {};
  for (const pol of ["nmos", "pmos"] as const) {
    if (g[pol] === undefined) continue;
    const e = group(g[pol], `${at}.${pol}`, ["vt", "k"], `{ vt, k }: the |Vt| shift in V and the relative k′ shift`);
    const vt = e.vt === undefined ? 0 : value(e.vt, "voltage", `${at}.${pol}.vt`, "a threshold shift", corner ? Number.isFinite : (x) => x >= 0 && x < 1, corner ? "finite" : "from 0 to below 1 V");
    const k = e.k === undefined ? 0 : value(e.k, "dimensionless", `${at}.${pol}.k`, "a relative k′ shift", (x) => (corner ? x > -1 : x >= 0) && x < 1, corner ? "above −100 % and below 100 %" : "from 0 to below 100 %");
    out[pol] = corner ? { cornerVt: vt, cornerK: k } : { sigmaVt: vt, sigmaK: k };
  }
  return out;
}

/** Read a design file's `mismatch` section for a stage of `topology`; `at` is "<file>: mismatch". */
export function parseMismatchSection(raw: unknown, topology: string, at: string): MismatchSection {
  if (!(mismatchTopologies as readonly string[]).includes(topology))
    throw new InputError(topology, `a stage with matched devices for a mismatch section: ${mismatchTopologies.map((t) => JSON.stringify(t)).join(", ")}`, at, "invalid-design");
  const m = group(raw, at, fields, `a mismatch section { ${fields.join(", ")} }`);
  const coefficients: Partial<Record<Polarity, { avt?: VoltMeters; abeta?: Meters }>> = {};
  for (const pol of ["nmos", "pmos"] as const) {
    if (m[pol] === undefined) continue;
    const e = group(m[pol], `${at}.${pol}`, ["avt", "abeta"], "Pelgrom coefficients { avt, abeta? }");
    coefficients[pol] = {
      ...(e.avt !== undefined ? { avt: value(e.avt, "voltageLength", `${at}.${pol}.avt`, "a Pelgrom threshold coefficient AVt", (x) => x >= 0 && Number.isFinite(x), "≥ 0 V·m (5 mV·µm = 5e-9 V·m)") as VoltMeters } : {}),
      ...(e.abeta !== undefined ? { abeta: value(e.abeta, "length", `${at}.${pol}.abeta`, "a Pelgrom current-factor coefficient Aβ", (x) => x >= 0 && Number.isFinite(x), "≥ 0 m (1 %·µm = 1e-8 m)") as Meters } : {}),
    };
  }
  const sigma = m.global === undefined ? {} : variation(m.global, `${at}.global`, false);
  const corner = m.corner === undefined ? {} : variation(m.corner, `${at}.corner`, true);
  const samples = m.samples ?? defaultMismatchSamples;
  if (typeof samples !== "number" || !Number.isInteger(samples) || samples < 2 || samples > maxSamples)
    throw new InputError(samples, `a whole number of samples from 2 to ${maxSamples} (statistics stream in constant memory; the bound keeps a run within minutes)`, `${at}.samples`, "invalid-design");
  const seed = m.seed ?? 1;
  if (typeof seed !== "number" || !Number.isInteger(seed) || seed < 0 || seed > 0xffffffff)
    throw new InputError(seed, "a whole-number seed from 0 to 4294967295 (the same seed gives the same samples)", `${at}.seed`, "invalid-design");
  const limits: Record<string, number> = {};
  if (m.limits !== undefined) {
    const l = group(m.limits, `${at}.limits`, Object.keys(limitFields), "check limits { offset?, currentError?, commonModeMin?, commonModeMax?, outputVoltage? }");
    for (const [k, [dim, key]] of Object.entries(limitFields))
      if (l[k] !== undefined)
        limits[key] = k === "offset" || k === "currentError" ? value(l[k], dim, `${at}.limits.${k}`, `the largest |${k}|`, (x) => x > 0 && Number.isFinite(x), "> 0") : value(l[k], dim, `${at}.limits.${k}`, `${k} (absolute)`, Number.isFinite, "finite");
  }
  let minYield: number | undefined;
  if (m.minYield !== undefined) minYield = value(m.minYield, "dimensionless", `${at}.minYield`, "a yield", (x) => x > 0 && x <= 1, "above 0 and at most 100 %");
  const both = (pol: Polarity) => (sigma[pol] || corner[pol] ? { [pol]: { ...sigma[pol], ...corner[pol] } } : {});
  return {
    coefficients,
    options: { samples, seed, ...both("nmos"), ...both("pmos"), ...(Object.keys(limits).length ? { limits } : {}) },
    ...(minYield !== undefined ? { minYield } : {}),
  };
}

/** The stage with the section's Pelgrom coefficients on its cards; a matched device left without AVt is an InputError naming the section's field. */
export function withCoefficients<S extends Stage>(stage: S, section: MismatchSection, at: string): S {
  const apply = (d: StageDevice, role: string, required: boolean): StageDevice => {
    const pol = d.card.polarity;
    const c = section.coefficients[pol] ?? {};
    const card = { ...d.card, ...(c.avt !== undefined ? { avt: c.avt } : {}), ...(c.abeta !== undefined ? { abeta: c.abeta } : {}) };
    if (required && card.avt === undefined)
      throw new InputError(undefined, `a Pelgrom threshold coefficient AVt for the ${pol} devices (${role}), in V·m: mismatch.${pol}.avt, or avt on the card`, `${at}.${pol}.avt`, "invalid-design");
    return { ...d, card };
  };
  // The tail and the cascodes are matched too when a coefficient is known; the pair, the load and the mirror's lower pair must have one.
  const required = new Set(["device", "load", "reference"]);
  const devices = stage.devices ? Object.fromEntries(Object.entries(stage.devices).map(([r, d]) => [r, apply(d, `devices.${r}`, required.has(r))])) : undefined;
  return { ...stage, device: apply(stage.device, "device", true), ...(devices ? { devices } : {}) };
}

/** What `pinchoff op` reports for a mismatch section. */
export interface MismatchReport {
  /** Pelgrom closed form: the input-referred offset σ of a pair (with shares), or the σ of a mirror's relative current error. */
  readonly closedForm: { readonly offsetSigma: Volts; readonly shares: OffsetEstimate["shares"] } | { readonly currentErrorSigma: Ratio };
  readonly monteCarlo: Omit<MonteCarloResult, "kept" | "rate">;
  /** Each check's yield against minYield, when one is stated. */
  readonly minYield?: number;
  readonly failed: readonly string[];
}

/** The closed form and the Monte Carlo of an analysed stage for a mismatch section (recorded in `rec` when given). */
export function mismatchReport(stage: Stage, analysis: StageAnalysis, section: MismatchSection, at: string, rec?: Derivation): MismatchReport {
  const st = withCoefficients(stage, section, at);
  rec?.note("Mismatch", `Pelgrom's law (Pelgrom, Duinmaijer & Welbers, IEEE JSSC 24(5), 1989), then a Monte Carlo of ${section.options.samples} samples (seed ${section.options.seed}): per-device mismatch on top of global NMOS and PMOS variation, each device through its own model at the solved point.`);
  let closedForm: MismatchReport["closedForm"];
  if (st.topology === "diff-pair" || st.topology === "diff-pair-mirror-load" || st.topology === "two-stage-miller") {
    const o = pairOffset(st, analysis, rec);
    closedForm = { offsetSigma: o.sigma, shares: o.shares };
  } else {
    const ref = st.topology === "cascode-mirror" ? analysis.devices!.M1! : analysis.devices!.reference!;
    closedForm = { currentErrorSigma: mirrorError(st.device, (ref.smallSignal.gm / Math.abs(ref.op.channelCurrent)) as SiemensPerAmpere, rec) };
  }
  const { kept: _k, rate: _r, ...all } = mismatchMonteCarlo(st as never, analysis, section.options);
  // A check without a stated limit passes every sample: only the stated ones are reported.
  const mc = { ...all, checks: all.checks.filter((c) => section.options.limits?.[c.limit] !== undefined) };
  const failed =
    section.minYield === undefined ? [] : mc.checks.filter((c) => c.yield < section.minYield!).map((c) => `FAIL  mismatch, ${c.name}: ${c.passed} of ${mc.samples} samples pass (${+(c.yield * 100).toPrecision(4)} % < ${+(section.minYield! * 100).toPrecision(4)} %)`);
  if (rec && section.minYield !== undefined) for (const c of mc.checks) rec.check(`Mismatch yield: ${c.name}`, c.yield, "dimensionless", { min: section.minYield }, `${c.passed} of ${mc.samples} samples`);
  else if (rec && mc.checks.length) rec.note("Mismatch yields", mc.checks.map((c) => `${c.name}: ${+(c.yield * 100).toPrecision(4)} %`).join("; "));
  return { closedForm, monteCarlo: mc, ...(section.minYield !== undefined ? { minYield: section.minYield } : {}), failed };
}

/** The readable lines of a mismatch report. */
export function mismatchText(r: MismatchReport): string {
  const lines = [`Mismatch (Pelgrom's law; Monte Carlo ${r.monteCarlo.samples} samples, seed ${r.monteCarlo.seed}):`];
  const cf = r.closedForm;
  lines.push("offsetSigma" in cf ? `  closed form: offset σ ${+(cf.offsetSigma * 1e3).toPrecision(4)} mV` : `  closed form: current error σ ${+(cf.currentErrorSigma * 100).toPrecision(4)} %`);
  for (const f of r.monteCarlo.figures) {
    const top = f.sensitivity.slice(0, 3).map((s) => `${s.variable} ${Math.round(s.share * 100)} %`).join(", ");
    const q = (x: number) => (f.unit === "V" ? formatQuantity(x, "voltage", { digits: 4 }) : f.unit === "A" ? formatQuantity(x, "current", { digits: 4 }) : `${+(x * 100).toPrecision(4)} %`);
    lines.push(`  ${f.name}: mean ${q(f.mean)}, σ ${q(f.sigma)}${top ? `; moved most by ${top}` : ""}`);
  }
  for (const c of r.monteCarlo.checks) lines.push(`  yield, ${c.name}: ${+(c.yield * 100).toPrecision(4)} %`);
  return lines.join("\n");
}
