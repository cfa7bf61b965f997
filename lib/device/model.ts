/**
 * What every device model shares: its parameter list (names, dimensions, bounds,
 * initial guesses, which scale with W/L), the parameter vector the fitter
 * perturbs, the polarity layer and the small-signal derivatives.
 *
 * Parameter vector: a Float64Array holding the model's parameters in the order
 * of `parameters`, then W, L and the card temperature T (slots `size − 3` …
 * `size − 1`). Values are in the device's own polarity (vt0 as |Vt0| for an
 * enhancement PMOS), SI units. Evaluation reads the vector and allocates nothing.
 *
 * Derivatives gm, gds, gmb are central differences with a fixed step of
 * 10 µV (`derivativeStep`): the truncation error is h²/6·∂³ID/∂V³, under
 * 10⁻⁶ relative in weak inversion where ID ∝ e^{V/(n·UT)}, and round-off is
 * near 10⁻¹¹·ID per volt, far below either.
 */
import type { Dimension } from "../quantity.js";
import type { ModelId } from "./card.js";
import type { Region } from "./region.js";
import { InputError } from "../errors.js";

/** One model's reading of a bias point (device polarity, VDS ≥ 0), as the operating point reports it. */
export interface ModelBias {
  readonly region: Region;
  /** Channel current, ≥ 0. */
  readonly id: number;
  /** Threshold magnitude with body effect (and, for EKV, the σ·VDS lowering). */
  readonly vt: number;
  readonly vov: number;
  /** The model's drain saturation voltage. */
  readonly vdsat: number;
  /** EKV: inversion coefficient IF/IS. */
  readonly ic?: number;
}

export interface ModelParameter {
  /** The card field the parameter is stored in. */
  readonly name: string;
  readonly dim: Dimension;
  readonly meaning: string;
  /** Bounds for a fit (device polarity, SI). */
  readonly min: number;
  readonly max: number;
  /** A starting guess for a fit when nothing better is known (from memory, typical bulk CMOS). */
  readonly initial: number;
  /** The value used when the card omits the field. */
  readonly absent: number;
  /** True when the parameter enters multiplied by W/L (the current factor). */
  readonly geometryScaled: boolean;
}

/**
 * Channel current in device polarity from a parameter vector. Any sign of vds:
 * for vds < 0 the drain acts as the source (as in SPICE) and the current is negative.
 */
export type VectorCurrent = (p: Float64Array, vgs: number, vds: number, vsb: number) => number;

/**
 * Channel currents at `count` bias points at once (device polarity, per-point arrays, any sign
 * of VDS), each equal to the model's `current` at that point, into out[0..count). Allocation-free.
 */
export type VectorCurrents = (p: Float64Array, vgs: Float64Array, vds: Float64Array, vsb: Float64Array, out: Float64Array, count: number) => void;

export interface DeviceModel {
  readonly id: ModelId;
  readonly title: string;
  /** Where the equations come from. */
  readonly source: string;
  readonly parameters: readonly ModelParameter[];
  /** Vector length: parameters, then W, L, T. */
  readonly size: number;
  readonly current: VectorCurrent;
  /**
   * The same current at many points at once, where the model has a block evaluator (EKV): the
   * fit's residuals and sweeps use it when present; it must equal `current` at every point.
   */
  readonly currents?: VectorCurrents;
}

/** Slots after the parameters, relative to the vector's end. */
export const geometrySlots = { w: 3, l: 2, t: 1 } as const;

/** Step of the central differences for gm, gds and gmb, in volts. */
export const derivativeStep = 1e-5;

/**
 * Make a VDS ≥ 0 channel current reversible: for vds < 0 the terminal named drain
 * acts as the source, so the voltages are taken from it and the current changes sign.
 */
export function reversible(forward: VectorCurrent): VectorCurrent {
  return (p, vgs, vds, vsb) => (vds >= 0 ? forward(p, vgs, vds, vsb) : -forward(p, vgs - vds, -vds, vsb + vds));
}

/** Points per chunk of `reversibleCurrents`, whose swap scratch is module-level (no allocation per call). */
const swapChunk = 256;
const swapVgs = new Float64Array(swapChunk);
const swapVds = new Float64Array(swapChunk);
const swapVsb = new Float64Array(swapChunk);
const swapOut = new Float64Array(swapChunk);

/** `reversible` for a block of points: a point with vds < 0 is evaluated with drain and source swapped and its current negated. */
export function reversibleCurrents(forward: VectorCurrents): VectorCurrents {
  return (p, vgs, vds, vsb, out, count) => {
    if (!(Number.isInteger(count) && count >= 0 && count <= out.length && count <= vgs.length && count <= vds.length && count <= vsb.length))
      throw new InputError(count, "a point count no larger than the bias and output arrays", "DeviceModel.currents");
    for (let o = 0; o < count; o += swapChunk) {
      const m = Math.min(swapChunk, count - o);
      for (let k = 0; k < m; k++) {
        const d = vds[o + k]!;
        const forwardPoint = d >= 0;
        swapVgs[k] = forwardPoint ? vgs[o + k]! : vgs[o + k]! - d;
        swapVds[k] = forwardPoint ? d : -d;
        swapVsb[k] = forwardPoint ? vsb[o + k]! : vsb[o + k]! + d;
      }
      forward(p, swapVgs, swapVds, swapVsb, swapOut, m);
      for (let k = 0; k < m; k++) out[o + k] = vds[o + k]! >= 0 ? swapOut[k]! : -swapOut[k]!;
    }
  };
}

/**
 * Drain current in SPICE signs: `sign` is +1 for NMOS, −1 for PMOS (card.polaritySign);
 * the terminal voltages are as measured and the result is the current into the drain.
 */
export function spiceCurrent(model: DeviceModel, p: Float64Array, sign: 1 | -1, vgs: number, vds: number, vsb: number): number {
  return sign * model.current(p, sign * vgs, sign * vds, sign * vsb);
}

/**
 * gm = ∂ID/∂VGS, gds = ∂ID/∂VDS, gmb = ∂ID/∂VBS = −∂ID/∂VSB in device polarity,
 * written into out[0..2]; central differences with step `derivativeStep`.
 */
export function conductances(model: DeviceModel, p: Float64Array, vgs: number, vds: number, vsb: number, out: Float64Array): Float64Array {
  const h = derivativeStep;
  const f = model.current;
  out[0] = (f(p, vgs + h, vds, vsb) - f(p, vgs - h, vds, vsb)) / (2 * h);
  out[1] = (f(p, vgs, vds + h, vsb) - f(p, vgs, vds - h, vsb)) / (2 * h);
  out[2] = (f(p, vgs, vds, vsb - h) - f(p, vgs, vds, vsb + h)) / (2 * h);
  return out;
}
