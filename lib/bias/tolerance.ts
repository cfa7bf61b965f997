/**
 * How the bias moves with part tolerances and temperature. Resistors move by
 * their tolerance (the series' band or a stated one), the threshold by an
 * absolute spread and k' by a relative spread, and the card is moved to each
 * temperature with cardAtTemperature. Either every worst-case corner (each
 * parameter at both ends of its band, at every temperature) or a seeded Monte
 * Carlo run is solved; the report gives the spread of ID, the output nodes,
 * VOV and the saturation margin, and whether every case stays in saturation.
 *
 * Process shifts and temperature move every transistor of the stage together
 * (one die, one corner: mismatch between devices and independent NMOS/PMOS
 * corners are not modelled). Generic over the solve function, so it serves
 * every topology. Corners bound
 * the spread when each figure is monotone in each parameter (true of the
 * single-transistor resistor networks in saturation); Monte Carlo does not
 * bound it. Verify by simulation and measurement.
 *
 * Memory: the cases are streamed. Spreads, counts and the failures are
 * aggregated as each case is solved; the report keeps the first `keptCases`
 * cases and the first `keptFailures` failures (for tables and plots), so memory
 * stays constant however many cases run. The total (corners, or samples ×
 * temperatures) is bounded by `maxCases`; more is refused with InputError.
 */
import { mulberry32 } from "../random.js";
import type { DeviceCard } from "../device/card.js";
import { polaritySign } from "../device/card.js";
import { cardAtTemperature } from "../device/temperature.js";
import { InputError, PinchoffError, requireNonNegative, requirePositive } from "../errors.js";
import type { Kelvin, Volts } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { formatQuantity } from "../units/format.js";
import { seriesOf, toleranceOf, type SeriesName } from "./eseries.js";
import { topologyFor, type Stage, type StageAnalysis } from "./topology.js";

/** Process spread of a card: ± threshold (absolute, on |Vt0|) and ± k' (relative). */
export interface ProcessSpread {
  readonly vt0?: Volts;
  readonly kp?: number;
}

export interface MonteCarlo {
  readonly samples: number;
  readonly seed: number;
  /** "uniform" over each ± band (default), or "normal" with the band as 3σ. */
  readonly distribution?: "uniform" | "normal";
}

export interface ToleranceSpec {
  /** Relative resistor tolerance, one for all or by component name; from `series` when omitted. */
  readonly resistors?: number | Readonly<Record<string, number>>;
  /** Series whose IEC 60063 tolerance band applies to the resistors when none is stated (E24, 5 %, when both are omitted). */
  readonly series?: SeriesName;
  /** Device spread; the card's own `spread` field is used when this is omitted and the card has one. */
  readonly process?: ProcessSpread;
  /** Temperatures to analyse at; the card as given (its reference temperature) when omitted. */
  readonly temperatures?: readonly Kelvin[];
  /** Worst-case corners (default) or a seeded Monte Carlo run. */
  readonly monteCarlo?: MonteCarlo;
  /** The analysis to run per case; the stage's registered topology when omitted. */
  readonly solve?: (stage: Stage) => StageAnalysis;
}

export interface ToleranceParameter {
  readonly name: string;
  readonly nominal: number;
  /** Half-width of the band: relative for resistors and k', absolute (V) for Vt0. */
  readonly band: number;
  readonly relative: boolean;
}

export interface ToleranceCase {
  /** e.g. "rg1+ rg2− rd+ rs− Vt+ k'− @ 358.15 K". */
  readonly label: string;
  /** Per parameter, the position in its band from −1 to +1 (corners are ±1). */
  readonly position: readonly number[];
  readonly temperature?: Kelvin;
  readonly ok: boolean;
  /** When the case could not be solved, why. */
  readonly error?: string;
  readonly region?: string;
  readonly id?: number;
  readonly vd?: number;
  readonly vs?: number;
  readonly vov?: number;
  readonly saturationMargin?: number;
}

export interface FigureSpread {
  readonly nominal: number;
  readonly min: number;
  readonly max: number;
  readonly minAt: string;
  readonly maxAt: string;
}

export interface ToleranceReport {
  readonly method: "corners" | "monte-carlo";
  readonly parameters: readonly ToleranceParameter[];
  readonly temperatures: readonly (Kelvin | undefined)[];
  /** The first `keptCases` cases, in the order solved (all of them when there are no more). */
  readonly cases: readonly ToleranceCase[];
  /** How many cases were solved (excluding the nominal). */
  readonly caseCount: number;
  /** How many cases left saturation or could not be solved; `failures` holds the first `keptFailures`. */
  readonly failureCount: number;
  readonly nominal: ToleranceCase;
  readonly id: FigureSpread;
  readonly vd: FigureSpread;
  readonly vs: FigureSpread;
  readonly vov: FigureSpread;
  readonly saturationMargin: FigureSpread;
  /** Every case solved and in saturation. */
  readonly allInSaturation: boolean;
  /** Cases out of saturation or unsolvable. */
  readonly failures: readonly ToleranceCase[];
}

/**
 * Largest number of cases one analysis solves (corners, or Monte Carlo samples
 * × temperatures): about a minute of solving on one core. More is refused.
 */
export const maxCases = 200_000;
/** Cases kept in the report for tables and plots; the rest are aggregated only. */
export const keptCases = 1_000;
/** Failing cases kept in the report. */
export const keptFailures = 100;


function checkFraction(x: number, origin: string): number {
  if (typeof x !== "number" || !Number.isFinite(x) || x < 0 || x >= 1) throw new InputError(x, "a relative tolerance 0 ≤ t < 1 (0.05 for 5 %)", origin);
  return x;
}

const sign = (p: number) => (p > 0 ? "+" : p < 0 ? "−" : "0");

/** Analyse a stage over its tolerances and temperatures; takes a typed stage (as synthesis returns) or a plain one. */
export function toleranceAnalysis(typed: Stage<string, object>, spec: ToleranceSpec = {}, rec?: Derivation): ToleranceReport {
  const stage = typed as Stage;
  if (!stage || typeof stage !== "object" || !stage.device) throw new InputError(stage, "a stage with a device", "tolerance stage");
  const solve = spec.solve ?? ((st: Stage) => topologyFor(st.topology, "stage.topology").analyze(st));
  if (typeof solve !== "function") throw new InputError(solve, "a solve function (stage) → analysis", "tolerance.solve");
  const topo = spec.solve ? undefined : topologyFor(stage.topology, "stage.topology");

  // Parameters: every resistance component present, then Vt0 and k' when spread.
  const params: ToleranceParameter[] = [];
  const series = spec.series ? seriesOf(spec.series, "tolerance.series") : undefined;
  const resistorNames = topo
    ? topo.components.filter((f) => f.dim === "resistance").map((f) => f.name)
    : Object.keys(stage.components).filter((n) => n.startsWith("r"));
  for (const name of resistorNames) {
    const value = (stage.components as Readonly<Record<string, number | undefined>>)[name];
    if (value === undefined || value === 0) continue;
    let band: number;
    if (typeof spec.resistors === "number") band = checkFraction(spec.resistors, "tolerance.resistors");
    else if (spec.resistors && spec.resistors[name] !== undefined) band = checkFraction(spec.resistors[name]!, `tolerance.resistors.${name}`);
    else band = toleranceOf(series ?? "E24");
    if (band > 0) params.push({ name, nominal: value, band, relative: true });
  }
  const card = stage.device.card as DeviceCard & { readonly spread?: ProcessSpread };
  const process = spec.process ?? card.spread ?? {};
  if (process.vt0 !== undefined) {
    requireNonNegative(process.vt0, "tolerance.process.vt0", "a threshold spread ≥ 0 in V");
    if (process.vt0 > 0) params.push({ name: "Vt", nominal: card.vt0, band: process.vt0, relative: false });
  }
  if (process.kp !== undefined) {
    checkFraction(process.kp, "tolerance.process.kp");
    if (process.kp > 0) params.push({ name: "k'", nominal: card.kp, band: process.kp, relative: true });
  }
  const temps: (Kelvin | undefined)[] = spec.temperatures?.length ? [...spec.temperatures] : [undefined];
  temps.forEach((t, i) => t !== undefined && requirePositive(t, `tolerance.temperatures[${i}]`, "a temperature > 0 K"));
  // Further transistors (a mirror's reference, a load) move with the same process shift and temperature.
  const roles = Object.keys(stage.devices ?? {});
  const at = (c0: DeviceCard, t: Kelvin | undefined) => (t === undefined ? c0 : cardAtTemperature(c0, t));
  const cardsAt = new Map<Kelvin | undefined, DeviceCard[]>(temps.map((t) => [t, [at(card, t), ...roles.map((r) => at(stage.devices![r]!.card, t))]]));
  const vtIndex = params.findIndex((p) => p.name === "Vt");
  const kpIndex = params.findIndex((p) => p.name === "k'");
  const shift = (c: DeviceCard, pos: readonly number[]): DeviceCard => {
    let out = c;
    if (vtIndex >= 0) out = { ...out, vt0: (out.vt0 + polaritySign(out) * pos[vtIndex]! * params[vtIndex]!.band) as Volts };
    if (kpIndex >= 0) out = { ...out, kp: (out.kp * (1 + pos[kpIndex]! * params[kpIndex]!.band)) as typeof out.kp };
    return out;
  };

  const runCase = (pos: readonly number[], t: Kelvin | undefined): ToleranceCase => {
    const comps: Record<string, number> = { ...(stage.components as Readonly<Record<string, number>>) };
    const cards = (cardsAt.get(t) ?? [card, ...roles.map((r) => stage.devices![r]!.card)]).map((c0) => shift(c0, pos));
    const c = cards[0]!;
    params.forEach((p, i) => {
      if (p.relative && p.name !== "k'") comps[p.name] = p.nominal * (1 + pos[i]! * p.band);
    });
    const label =
      params.map((p, i) => (pos[i] === 0 ? "" : `${p.name}${Math.abs(pos[i]!) === 1 ? sign(pos[i]!) : (pos[i]! > 0 ? "+" : "") + pos[i]!.toFixed(2)}`)).filter(Boolean).join(" ") +
      (t !== undefined ? ` @ ${+(t - 273.15).toFixed(2)} °C` : "");
    const base = { label: label || "nominal", position: pos, ...(t !== undefined ? { temperature: t } : {}) };
    try {
      const devices = roles.length ? { devices: Object.fromEntries(roles.map((r, j) => [r, { ...stage.devices![r]!, card: cards[j + 1]! }])) } : {};
      const a = solve({ ...stage, device: { ...stage.device, card: c }, ...devices, components: comps });
      return {
        ...base,
        // Every transistor of the stage must stay saturated (a netlist stage lists its others in `devices`).
        ok: a.region === "saturation" && Object.values(a.devices ?? {}).every((d) => d.region === "saturation"),
        region: a.region,
        id: a.currents.drainMagnitude ?? a.currents.drain!,
        vd: a.nodes.drain!,
        vs: a.nodes.source!,
        vov: a.op.vov,
        saturationMargin: a.op.saturationMargin,
      };
    } catch (e) {
      if (e instanceof PinchoffError) return { ...base, ok: false, error: e.message };
      throw e;
    }
  };

  const zeros = params.map(() => 0);
  const nominal = runCase(zeros, undefined);
  if (nominal.error) throw new PinchoffError("infeasible", `the nominal stage could not be solved: ${nominal.error}`, "tolerance");
  // Streamed aggregation: the nominal seeds every spread, each case updates them, only a bounded sample is kept.
  const keys = ["id", "vd", "vs", "vov", "saturationMargin"] as const;
  const spreads = Object.fromEntries(keys.map((k) => [k, { nominal: nominal[k]!, min: Infinity, max: -Infinity, minAt: "", maxAt: "" }])) as Record<(typeof keys)[number], { nominal: number; min: number; max: number; minAt: string; maxAt: string }>;
  const cases: ToleranceCase[] = [];
  const failures: ToleranceCase[] = [];
  let caseCount = 0;
  let failureCount = 0;
  const take = (c: ToleranceCase) => {
    for (const k of keys) {
      const x = c[k];
      if (x === undefined) continue;
      const sp = spreads[k];
      if (x < sp.min) [sp.min, sp.minAt] = [x, c.label];
      if (x > sp.max) [sp.max, sp.maxAt] = [x, c.label];
    }
    if (c === nominal) return;
    caseCount++;
    if (cases.length < keptCases) cases.push(c);
    if (!c.ok) {
      failureCount++;
      if (failures.length < keptFailures) failures.push(c);
    }
  };
  take(nominal);
  let method: ToleranceReport["method"] = "corners";
  if (spec.monteCarlo) {
    method = "monte-carlo";
    const mc = spec.monteCarlo;
    if (!Number.isInteger(mc.samples) || mc.samples < 1 || mc.samples > maxCases)
      throw new InputError(mc.samples, `an integer sample count from 1 to ${maxCases}`, "tolerance.monteCarlo.samples");
    if (mc.samples * temps.length > maxCases)
      throw new InputError(mc.samples * temps.length, `at most ${maxCases} cases in all (${mc.samples} samples × ${temps.length} temperatures asked for): fewer samples or temperatures`, "tolerance.monteCarlo");
    // The generator's state is 32 bits: a seed outside [0, 2³²) would alias another (0 and 2³² gave the same samples).
    if (!Number.isInteger(mc.seed) || mc.seed < 0 || mc.seed >= 2 ** 32) throw new InputError(mc.seed, "an integer seed from 0 to 4294967295 (2³² − 1)", "tolerance.monteCarlo.seed");
    const dist = mc.distribution ?? "uniform";
    if (dist !== "uniform" && dist !== "normal") throw new InputError(dist, `"uniform" or "normal"`, "tolerance.monteCarlo.distribution");
    const rand = mulberry32(mc.seed);
    // Box–Muller for the normal case, with the band as 3σ.
    const draw = () => (dist === "uniform" ? 2 * rand() - 1 : (Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand())) / 3);
    for (let n = 0; n < mc.samples; n++) for (const t of temps) take(runCase(params.map(draw), t));
  } else {
    const count = 2 ** params.length * temps.length;
    if (count > maxCases) throw new InputError(count, `at most ${maxCases} corner cases (use monteCarlo)`, "tolerance");
    for (const t of temps)
      for (let m = 0; m < 2 ** params.length; m++) take(runCase(params.map((_, i) => ((m >> i) & 1 ? 1 : -1)), t));
  }
  const report: ToleranceReport = {
    method,
    parameters: params,
    temperatures: temps,
    cases,
    caseCount,
    failureCount,
    nominal,
    ...spreads,
    allInSaturation: nominal.ok && failureCount === 0,
    failures,
  };
  if (rec) recordTolerance(report, stage, rec, spec.monteCarlo);
  return report;
}

function recordTolerance(r: ToleranceReport, stage: Stage, rec: Derivation, mc?: MonteCarlo): void {
  // The inputs of this analysis, so its fingerprint covers what produced it (not only the stage's own record).
  for (const p of r.parameters) {
    const dim = p.name === "Vt" ? "voltage" : p.name === "k'" ? "transconductanceParameter" : "resistance";
    rec.input(p.name === "Vt" ? "VTO" : p.name === "k'" ? "KP" : p.name.toUpperCase(), p.nominal, dim, p.name === "Vt" || p.name === "k'" ? `card ${stage.device.card.name}` : `components.${p.name}`);
    rec.input(`${p.name === "Vt" ? "VTO" : p.name === "k'" ? "KP" : p.name.toUpperCase()} band`, p.band, p.relative ? "fraction" : "voltage", p.relative ? "relative half-width" : "absolute half-width");
  }
  r.temperatures.forEach((t, i) => t !== undefined && rec.input(`T${r.temperatures.length > 1 ? i + 1 : ""}`, t, "temperature", "tolerance.temperatures"));
  if (mc) {
    rec.input("samples", mc.samples, "count", "tolerance.monteCarlo.samples");
    rec.input("seed", mc.seed, "count", "tolerance.monteCarlo.seed");
  }
  const band = (p: ToleranceParameter) => (p.relative ? `±${+(p.band * 100).toPrecision(3)} %` : `±${+(p.band * 1e3).toPrecision(3)} mV`);
  rec.note(
    r.method === "corners" ? "Worst-case corners" : "Monte Carlo",
    `${r.caseCount} cases: ${r.parameters.map((p) => `${p.name} ${band(p)}`).join(", ")}` +
      (r.temperatures[0] !== undefined ? `, at ${r.temperatures.map((t) => `${+(t! - 273.15).toFixed(2)} °C`).join(", ")}` : "") +
      (r.method === "corners" ? "; each parameter at both ends of its band." : "; seeded, reproducible; the result is a sample, not a bound."),
  );
  // Engineering units (566.1 µA, not 0.0005661 A), four digits.
  const f = (x: number, dim: "current" | "voltage") => formatQuantity(x, dim, { digits: 4 });
  const line = (name: string, s: FigureSpread, dim: "current" | "voltage") =>
    `${name}: ${f(s.min, dim)} (${s.minAt}) to ${f(s.max, dim)} (${s.maxAt}), nominal ${f(s.nominal, dim)}`;
  rec.note(
    "Spread of the bias",
    [line("ID", r.id, "current"), line("VD", r.vd, "voltage"), line("VS", r.vs, "voltage"), line("VOV", r.vov, "voltage"), line("VDS − VOV", r.saturationMargin, "voltage")].join("\n"),
  );
  const minMargin = stage.limits?.minSaturationMargin ?? 0;
  rec.check(`Saturation margin in every case ≥ ${minMargin} V`, r.saturationMargin.min, "voltage", { min: minMargin }, `worst case ${r.saturationMargin.minAt}`);
  // The margin spread covers only the cases that solved; count the others, so an unsolvable corner fails too.
  const out = r.failureCount + (r.nominal.ok ? 0 : 1);
  const first = r.failures[0];
  rec.check("No corner out of saturation or unsolvable (count of such cases)", out, "count", { max: 0 },
    out === 0 ? `${r.caseCount} cases` : `first: ${first?.label ?? "nominal"}: ${first?.error ?? first?.region ?? r.nominal.region}`);
  if (!r.allInSaturation)
    rec.find(
      "warning",
      `${r.failureCount} of ${r.caseCount} cases leave saturation or cannot be solved; first: ${r.failures[0]?.label ?? "nominal"} (${r.failures[0]?.error ?? r.failures[0]?.region ?? r.nominal.region}).`,
    );
  rec.find("caution", "Tolerance analysis covers only the spreads stated; verify by simulation with the process corners and by measurement.");
}
