/**
 * What the fitter needs from a device model: its fitted parameters (name,
 * unit, bounds, typical size), starting values from the data, an
 * allocation-free evaluation of the drain current at the measured points, the
 * threshold (for sorting points into inversion regions) and the card the fit
 * produces. The equations stay in the model's own home (`lib/device/`); an
 * adapter here only maps a parameter vector onto a card.
 */
import type { DeviceCard } from "../device/card.js";
import type { Sweep } from "../measure/select.js";
import type { StartEstimate } from "./start.js";

export interface FitParameter {
  readonly name: string;
  readonly unit: string;
  readonly meaning: string;
  readonly lower: number;
  readonly upper: number;
  /** Typical magnitude, for the difference step. */
  readonly scale: number;
}

export interface FitModel {
  readonly id: string;
  readonly title: string;
  /** The model's published source. */
  readonly source: string;
  readonly parameters: readonly FitParameter[];
  /** Parameters that the data in the window cannot determine are held (e.g. γ without VBS ≠ 0 points). */
  free(s: Sweep, window: Int32Array): boolean[];
  /** Value of each parameter while held (what a card without it means). */
  readonly held: readonly number[];
  /** Starting values (all parameters) from the data. */
  start(s: Sweep, est: StartEstimate): Float64Array;
  /** Drain current (SPICE sign) at the listed points into out[0..idx.length). Allocation-free. */
  evaluate(p: Float64Array, s: Sweep, idx: Int32Array, out: Float64Array): void;
  /** Threshold magnitude at source–body voltage vsb (device polarity, ≥ 0 reverse bias). */
  threshold(p: Float64Array, vsb: number): number;
  /** Slope factor n, for the inversion boundaries (1.3 when the model has none). */
  slope(p: Float64Array): number;
  /**
   * The parameters at temperature t (K) from those at t0: threshold magnitude
   * + alphaVt·(t − t0), k′ × (t/t0)^−muExp, a critical field Esat × (t/t0)^muExp, as `cardAtTemperature`
   * of lib/device/temperature.ts moves a card. Writes into out.
   */
  atTemperature(p: Float64Array, t0: number, t: number, alphaVt: number, muExp: number, out: Float64Array): void;
  /** The card for the design functions; parameters marked held (no data for them) are left out of it. */
  card(p: Float64Array, s: Sweep, provenance: string, held: readonly boolean[]): DeviceCard;
}
