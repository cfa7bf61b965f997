/**
 * Square-law parameters from measurements: Vt and k from saturation (VGS, ID)
 * pairs, λ from the slope of ID against VDS in saturation, γ from Vt measured
 * at several VSB. Each is a straight-line least-squares fit; the residuals are
 * reported so the reviewer sees how well the square law describes the data.
 *
 * Input is arrays of points with SPICE signs (PMOS voltages and currents
 * negative); reading files is left to the caller.
 */
import { InfeasibleError, InputError } from "../errors.js";
import { lambdaFromSlope, processGainFromDeviceGain, saturationCurrent } from "../formulas/device.formulas.js";
import type { Derivation } from "../record/derivation.js";
import type { Amperes, AmperesPerVoltSquared, PerVolt, Ratio, Siemens, SqrtVolts, Volts } from "../quantity.js";
import { defaultPhi, type Polarity } from "./card.js";

export interface LineFit {
  readonly intercept: number;
  readonly slope: number;
  /** Measured minus fitted, per point, in the fitted quantity's unit. */
  readonly residuals: readonly number[];
  readonly rms: number;
}

/** Ordinary least squares y = a + b·x on centred sums (needs ≥ 2 distinct x). */
export function fitLine(x: readonly number[], y: readonly number[]): LineFit {
  const n = x.length;
  let mx = 0;
  let my = 0;
  for (let i = 0; i < n; i++) {
    mx += x[i]!;
    my += y[i]!;
  }
  mx /= n;
  my /= n;
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    sxx += (x[i]! - mx) ** 2;
    sxy += (x[i]! - mx) * (y[i]! - my);
  }
  const slope = sxy / sxx;
  const intercept = my - slope * mx;
  const residuals = x.map((xi, i) => y[i]! - (intercept + slope * xi));
  const rms = Math.sqrt(residuals.reduce((s, r) => s + r * r, 0) / n);
  return { intercept, slope, residuals, rms };
}

export interface ExtractOptions {
  /** Polarity of the measured device; "nmos" when omitted. PMOS data carry SPICE signs (negative). */
  readonly polarity?: Polarity;
  /** Where the data came from, for error messages (a file, a bench run). */
  readonly origin?: string;
}

/** Fewer points than this leave no residual to judge the fit by. */
export const minimumPoints = 3;

interface Prepared {
  readonly x: number[];
  readonly y: number[];
}

/**
 * Validate, convert to device polarity and sort by x. `xName`/`yName` name the fields;
 * y must be strictly increasing (or non-decreasing when `strict` is false) in x.
 */
function prepare<P>(
  points: readonly P[],
  get: (p: P) => [number, number],
  names: { x: string; y: string; xRange: string; yRange: string },
  sign: number,
  checks: { xMin?: number; yPositive: boolean; strict: boolean },
  origin: string,
): Prepared {
  if (!Array.isArray(points)) throw new InputError(points, `an array of { ${names.x}, ${names.y} } points`, origin);
  if (points.length < minimumPoints)
    throw new InputError(points.length, `at least ${minimumPoints} points (two fix a line exactly and leave no residual to check the fit)`, `${origin} (number of points)`);
  const rows = points.map((p, i) => {
    const at = `${origin}[${i}]`;
    if (!p || typeof p !== "object") throw new InputError(p, `a { ${names.x}, ${names.y} } point`, at);
    const [xv, yv] = get(p);
    if (typeof xv !== "number" || !Number.isFinite(xv)) throw new InputError(xv, `a finite ${names.x} in V`, `${at}.${names.x}`);
    if (typeof yv !== "number" || !Number.isFinite(yv)) throw new InputError(yv, `a finite ${names.y}`, `${at}.${names.y}`);
    const x = sign * xv;
    const y = sign * yv;
    if (checks.xMin !== undefined && x < checks.xMin) throw new InputError(xv, names.xRange, `${at}.${names.x}`);
    if (checks.yPositive && y <= 0) throw new InputError(yv, names.yRange, `${at}.${names.y}`);
    return { x, y, i };
  });
  rows.sort((a, b) => a.x - b.x);
  for (let j = 1; j < rows.length; j++) {
    const a = rows[j - 1]!;
    const b = rows[j]!;
    if (a.x === b.x)
      throw new InputError(points[b.i], `points with distinct ${names.x} (points ${a.i} and ${b.i} share ${names.x} = ${sign * a.x})`, origin);
    if (checks.strict ? b.y <= a.y : b.y < a.y)
      throw new InputError(
        points[b.i],
        `${names.y} ${checks.strict ? "rising" : "not falling"} with ${names.x} in the device's polarity (point ${b.i} has ${names.y} = ${sign * b.y} against ${sign * a.y} at point ${a.i}): the data are not monotonic`,
        origin,
      );
  }
  return { x: rows.map((r) => r.x), y: rows.map((r) => r.y) };
}

const p4 = (x: number) => `${+x.toPrecision(4)}`;

export interface SaturationPoint {
  readonly vgs: Volts;
  readonly id: Amperes;
}

export interface ThresholdGainFit {
  /** Threshold, signed like a card's vt0 (negative for an enhancement PMOS). */
  readonly vt: Volts;
  /** Device transconductance parameter k = k'·W/L. */
  readonly k: AmperesPerVoltSquared;
  /** k' = k/(W/L), when W/L was given. */
  readonly kp?: AmperesPerVoltSquared;
  /** Measured minus fitted |ID| per point, in the order given sorted by |VGS|, in A. */
  readonly residuals: readonly Amperes[];
  readonly rmsResidual: Amperes;
  /** Largest |residual| / |ID| over the points. */
  readonly maxRelativeResidual: Ratio;
}

/**
 * Vt and k from saturation (VGS, ID) pairs: √|ID| = √(k/2)·(|VGS| − |Vt|) is a
 * straight line in |VGS|, fitted by least squares. All points must be in
 * saturation and above threshold, with distinct VGS and |ID| rising.
 */
export function extractThresholdAndGain(points: readonly SaturationPoint[], opts: ExtractOptions & { readonly wl?: Ratio } = {}, rec?: Derivation): ThresholdGainFit {
  const origin = opts.origin ?? "extractThresholdAndGain.points";
  const s = opts.polarity === "pmos" ? -1 : 1;
  const pm = s < 0;
  if (opts.wl !== undefined && (typeof opts.wl !== "number" || !Number.isFinite(opts.wl) || opts.wl <= 0))
    throw new InputError(opts.wl, "an aspect ratio W/L > 0", "extractThresholdAndGain.opts.wl");
  const { x, y } = prepare(
    points,
    (p) => [p.vgs, p.id],
    { x: "vgs", y: "id", xRange: "", yRange: pm ? "a conducting PMOS drain current < 0 A" : "a conducting NMOS drain current > 0 A" },
    s,
    { yPositive: true, strict: true },
    origin,
  );
  const fit = fitLine(x, y.map(Math.sqrt));
  const vtMag = -fit.intercept / fit.slope;
  const k = (2 * fit.slope * fit.slope) as AmperesPerVoltSquared;
  if (vtMag >= x[0]!)
    throw new InfeasibleError(
      `the straight-line fit of √|ID| puts |Vt| at ${p4(vtMag)} V, not below the lowest |VGS| = ${p4(x[0]!)} V: the points are not all above threshold in saturation, or the data do not follow the square law`,
      origin,
    );
  const residuals = x.map((xi, i) => (y[i]! - saturationCurrent.fn(k, (xi - vtMag) as Volts)) as Amperes);
  const rmsResidual = Math.sqrt(residuals.reduce((a, r) => a + r * r, 0) / residuals.length) as Amperes;
  const maxRelativeResidual = Math.max(...residuals.map((r, i) => Math.abs(r) / y[i]!)) as Ratio;
  let kp: AmperesPerVoltSquared | undefined;
  if (opts.wl !== undefined) kp = processGainFromDeviceGain.fn(k, opts.wl);
  if (rec) {
    rec.note(
      "Threshold and gain from √ID against VGS",
      `Least-squares line through ${x.length} points: √|ID| = ${p4(fit.intercept)} √A + ${p4(fit.slope)} √A/V · |VGS|. ` +
        `|Vt| = −intercept/slope = ${p4(vtMag)} V; k = 2·slope² = ${p4(k)} A/V². ` +
        `Residuals in ID: rms ${p4(rmsResidual)} A, largest ${p4(maxRelativeResidual * 100)} % of the point's current.`,
    );
    if (kp !== undefined && opts.wl !== undefined) rec.step(processGainFromDeviceGain, [k, opts.wl], kp);
    rec.assume("Every measured point is in saturation (VDS ≥ VGS − Vt) and in strong inversion; λ·VDS is folded into k.");
    if (maxRelativeResidual > 0.05)
      rec.find("caution", `The square-law fit misses some points by up to ${p4(maxRelativeResidual * 100)} % of their current: check for points near threshold (moderate inversion) or velocity saturation at high VGS.`);
  }
  return { vt: (s * vtMag) as Volts, k, ...(kp !== undefined ? { kp } : {}), residuals, rmsResidual, maxRelativeResidual };
}

export interface OutputPoint {
  readonly vds: Volts;
  readonly id: Amperes;
}

export interface LambdaFit {
  readonly lambda: PerVolt;
  /** |ID| extrapolated to VDS = 0 along the saturation line. */
  readonly id0: Amperes;
  /** Slope ∂|ID|/∂|VDS|, the output conductance. */
  readonly gds: Siemens;
  readonly residuals: readonly Amperes[];
  readonly rmsResidual: Amperes;
}

/** λ from (VDS, ID) points at one VGS, all in saturation: ID = ID0·(1 + λ·VDS) fitted by least squares. */
export function extractLambda(points: readonly OutputPoint[], opts: ExtractOptions = {}, rec?: Derivation): LambdaFit {
  const origin = opts.origin ?? "extractLambda.points";
  const s = opts.polarity === "pmos" ? -1 : 1;
  const pm = s < 0;
  const { x, y } = prepare(
    points,
    (p) => [p.vds, p.id],
    {
      x: "vds",
      y: "id",
      xRange: pm ? "VDS ≤ 0 V for a PMOS in saturation" : "VDS ≥ 0 V for an NMOS in saturation",
      yRange: pm ? "a conducting PMOS drain current < 0 A" : "a conducting NMOS drain current > 0 A",
    },
    s,
    { xMin: 0, yPositive: true, strict: false },
    origin,
  );
  const fit = fitLine(x, y);
  if (!(fit.intercept > 0))
    throw new InfeasibleError(`the line through the points reaches ID = ${p4(fit.intercept)} A at VDS = 0: not a saturation characteristic`, origin);
  const gds = fit.slope as Siemens;
  const id0 = fit.intercept as Amperes;
  const lambda = lambdaFromSlope.fn(gds, id0);
  if (rec) {
    rec.note("Output line", `Least-squares line through ${x.length} points: |ID| = ${p4(id0)} A + ${p4(gds)} S · |VDS|, rms residual ${p4(fit.rms)} A.`);
    rec.step(lambdaFromSlope, [gds, id0], lambda);
    rec.assume("Every measured point is in saturation at one VGS.");
  }
  return { lambda, id0, gds, residuals: fit.residuals as Amperes[], rmsResidual: fit.rms as Amperes };
}

export interface ThresholdPoint {
  readonly vsb: Volts;
  /** Threshold measured at that VSB, signed like a card's vt0. */
  readonly vt: Volts;
}

export interface BodyEffectFit {
  readonly vt0: Volts;
  readonly gamma: SqrtVolts;
  readonly phi: Volts;
  readonly residuals: readonly Volts[];
  readonly rmsResidual: Volts;
}

/**
 * γ (and Vt0) from thresholds measured at several reverse body biases:
 * |Vt| = |Vt0| + γ·(√(2φF + VSB) − √(2φF)) is a line in the bracket, for a given 2φF
 * (the SPICE default 0.6 V when omitted).
 */
export function extractBodyEffect(points: readonly ThresholdPoint[], opts: ExtractOptions & { readonly phi?: Volts } = {}, rec?: Derivation): BodyEffectFit {
  const origin = opts.origin ?? "extractBodyEffect.points";
  const s = opts.polarity === "pmos" ? -1 : 1;
  const pm = s < 0;
  const phi = (opts.phi ?? defaultPhi) as Volts;
  if (typeof phi !== "number" || !Number.isFinite(phi) || phi <= 0) throw new InputError(phi, "2φF > 0 in V", "extractBodyEffect.opts.phi");
  const { x: vsb, y: vt } = prepare(
    points,
    (p) => [p.vsb, p.vt],
    {
      x: "vsb",
      y: "vt",
      xRange: pm ? "reverse body bias VSB ≤ 0 V for a PMOS (body above source)" : "reverse body bias VSB ≥ 0 V for an NMOS",
      yRange: "",
    },
    s,
    { xMin: 0, yPositive: false, strict: false },
    origin,
  );
  const bracket = vsb.map((v) => Math.sqrt(phi + v) - Math.sqrt(phi));
  const fit = fitLine(bracket, vt);
  const gamma = fit.slope as SqrtVolts;
  const vt0 = (s * fit.intercept) as Volts;
  if (rec) {
    if (opts.phi === undefined) rec.assume("2φF = 0.6 V (the SPICE default) for the body-effect fit.");
    rec.note(
      "Body effect from Vt against √(2φF + VSB) − √(2φF)",
      `Least-squares line through ${vsb.length} points: |Vt| = ${p4(fit.intercept)} V + ${p4(gamma)} √V · (√(2φF + VSB) − √(2φF)) with 2φF = ${p4(phi)} V; rms residual ${p4(fit.rms)} V.`,
    );
  }
  return { vt0, gamma, phi, residuals: fit.residuals as Volts[], rmsResidual: fit.rms as Volts };
}
