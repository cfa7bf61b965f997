/**
 * Temperature parameters from measurements at several temperatures: the
 * threshold drift alphaVt (V/K) and the mobility exponent m (µ ∝ T^−m), with
 * every other parameter held at the reference fit. Fitted by the same bounded
 * Levenberg–Marquardt on relative error over the reference fit's window at
 * each further temperature (the same gate voltages: overdrive measured from the
 * reference start estimate). Reports the prediction error per temperature, inside the window
 * and over every point, and the card with its temperature coefficients.
 */
import { InputError } from "../errors.js";
import type { DeviceCard } from "../device/card.js";
import type { Kelvin, VoltsPerKelvin } from "../quantity.js";
import type { Sweep } from "../measure/select.js";
import { accuracy, summarise, type Accuracy, type ErrorSummary } from "./accuracy.js";
import { windowPoints, type FitResult } from "./fit.js";
import { leastSquares } from "./levenberg-marquardt.js";
import type { FitModel } from "./model.js";

export interface TemperatureFit {
  readonly alphaVt: number;
  readonly alphaVtStdErr: number;
  readonly muExp: number;
  readonly muExpStdErr: number;
  readonly t0: number;
  /** Prediction of each further temperature from the reference card and the two coefficients. */
  readonly predictions: readonly { readonly temp: number; readonly inWindow: ErrorSummary; readonly accuracy: Accuracy }[];
  /** The reference card with its temperature coefficients. */
  readonly card: DeviceCard;
}

export function fitTemperature(model: FitModel, ref: FitResult, sweeps: readonly Sweep[], opts: { minCurrent?: number } = {}): TemperatureFit {
  const minCurrent = opts.minCurrent ?? ref.accuracy.minCurrent;
  const t0 = ref.device.temp;
  const others = sweeps.filter((s) => Math.abs(s.temp - t0) > 0.5);
  if (others.length === 0) throw new InputError(sweeps.map((s) => s.temp - 273.15), `measurements at a temperature other than the reference ${(t0 - 273.15).toFixed(1)} °C`, "fitTemperature");
  // the same gate voltages at every temperature: overdrive measured from the reference start estimate
  const sets = others.map((s) => ({ s, idx: windowPoints(s, ref.window, ref.start, minCurrent) }));
  const m = sets.reduce((a, x) => a + x.idx.length, 0);
  const pT = new Float64Array(ref.p.length);
  const out = new Float64Array(Math.max(...sets.map((x) => x.idx.length)));
  const res = leastSquares(
    {
      m,
      n: 2,
      residuals(q, r) {
        let k = 0;
        for (const { s, idx } of sets) {
          model.atTemperature(ref.p, t0, s.temp, q[0]!, q[1]!, pT);
          model.evaluate(pT, s, idx, out);
          for (let i = 0; i < idx.length; i++, k++) r[k] = (out[i]! - s.id[idx[i]!]!) / s.id[idx[i]!]!;
        }
      },
    },
    [-1.5e-3, 1.5],
    { lower: [-1e-2, -1], upper: [1e-2, 4], scale: [1e-3, 1], origin: `temperature fit of ${ref.device.origin}` },
  );
  const [alphaVt, muExp] = [res.p[0]!, res.p[1]!];
  const predictions = sets.map(({ s, idx }) => {
    const p = new Float64Array(ref.p.length);
    model.atTemperature(ref.p, t0, s.temp, alphaVt, muExp, p);
    const o = new Float64Array(idx.length);
    model.evaluate(p, s, idx, o);
    return { temp: s.temp, inWindow: summarise(Array.from(idx, (i, k) => (o[k]! - s.id[i]!) / s.id[i]!)), accuracy: accuracy(model, p, s, minCurrent) };
  });
  return {
    alphaVt, alphaVtStdErr: res.stdErr[0]!, muExp, muExpStdErr: res.stdErr[1]!, t0, predictions,
    card: { ...ref.card, temperature: { t0: t0 as Kelvin, alphaVt: alphaVt as VoltsPerKelvin, muExp } },
  };
}
