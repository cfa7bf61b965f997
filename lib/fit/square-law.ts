/**
 * The square law (SPICE Level 1, Shichman–Hodges, IEEE JSSC 3(3), 285–289, 1968)
 * as a fit model: threshold |VT0|, µCox (KP), λ and γ, with 2φF held at the
 * card's default (0.6 V). Evaluation is `drainCurrent` of `lib/device/` on a
 * card reused between calls, so the fitted card is exactly what the design
 * functions compute with.
 */
import { defaultPhi, type Device, type DeviceCard } from "../device/card.js";
import { drainCurrent } from "../device/drain-current.js";
import type { Sweep } from "../measure/select.js";
import type { AmperesPerVoltSquared, Kelvin, PerVolt, Ratio, SqrtVolts, Volts, VoltsPerKelvin } from "../quantity.js";
import { mobilityAtTemperature, thresholdAtTemperature } from "../formulas/device.formulas.js";
import type { FitModel } from "./model.js";

type Mutable<T> = { -readonly [K in keyof T]: T[K] };

export const squareLawFit: FitModel = {
  id: "square-law",
  title: "square law (SPICE Level 1)",
  source: "Shichman & Hodges, IEEE J. Solid-State Circuits 3(3), 285–289, 1968; SPICE Level 1",
  parameters: [
    { name: "vt0", unit: "V", meaning: "threshold magnitude |VT0| at VSB = 0", lower: -3, upper: 5, scale: 1 },
    { name: "kp", unit: "A/V²", meaning: "process transconductance µCox", lower: 1e-8, upper: 1e-1, scale: 1e-4 },
    { name: "lambda", unit: "1/V", meaning: "channel-length modulation λ", lower: 0, upper: 3, scale: 0.1 },
    { name: "gamma", unit: "√V", meaning: "body-effect coefficient γ", lower: 0, upper: 5, scale: 0.5 },
  ],
  free(s, idx) {
    let body = false;
    let sat = false;
    for (let k = 0; k < idx.length; k++) {
      const i = idx[k]!;
      if (Math.abs(s.vbs[i]!) > 1e-3) body = true;
      if (Math.abs(s.vds[i]!) > 0.3) sat = true;
    }
    return [true, true, sat, body];
  },
  start(_s, est) {
    return Float64Array.of(est.vt, est.kp, 0.02, 0.3);
  },
  evaluate(p, s, idx, out) {
    const dev = scratch(s);
    const card = dev.card as Mutable<DeviceCard>;
    const sign = s.polarity === "nmos" ? 1 : -1;
    card.vt0 = (sign * p[0]!) as Volts;
    card.kp = p[1]! as AmperesPerVoltSquared;
    card.lambda = p[2]! as PerVolt;
    card.gamma = p[3]! as SqrtVolts;
    for (let k = 0; k < idx.length; k++) {
      const i = idx[k]!;
      out[k] = drainCurrent(dev, s.vgs[i]!, s.vds[i]!, -s.vbs[i]!);
    }
  },
  threshold(p, vsb) {
    const phi = defaultPhi;
    return p[0]! + p[3]! * (Math.sqrt(phi + Math.max(vsb, -phi)) - Math.sqrt(phi));
  },
  slope: () => 1.3,
  atTemperature(p, t0, t, alphaVt, muExp, out) {
    out.set(p);
    // the catalog's temperature formulas, as cardAtTemperature uses them
    out[0] = thresholdAtTemperature.fn(p[0]! as Volts, alphaVt as VoltsPerKelvin, t as Kelvin, t0 as Kelvin);
    out[1] = mobilityAtTemperature.fn(p[1]! as AmperesPerVoltSquared, t as Kelvin, t0 as Kelvin, muExp as Ratio);
  },
  card(p, s, provenance, held) {
    const sign = s.polarity === "nmos" ? 1 : -1;
    const notFitted = [held[2] ? "λ" : "", held[3] ? "γ" : ""].filter(Boolean);
    return {
      name: `${s.polarity} square law, W/L = ${fmtUm(s.w)}/${fmtUm(s.l)} µm`,
      polarity: s.polarity,
      vt0: sign * p[0]!,
      kp: p[1]!,
      ...(held[2] ? {} : { lambda: p[2]! }),
      ...(held[3] ? {} : { gamma: p[3]!, phi: defaultPhi }),
      provenance: notFitted.length ? `${provenance}; ${notFitted.join(" and ")} not fitted (no data for ${notFitted.length > 1 ? "them" : "it"} in the window)` : provenance,
    } as DeviceCard;
  },
};

const fmtUm = (m: number) => String(+(m * 1e6).toPrecision(4));

// One reusable device per sweep geometry, so evaluation allocates nothing.
let cache: { s: Sweep; dev: Device } | undefined;
function scratch(s: Sweep): Device {
  if (cache?.s !== s) cache = { s, dev: { card: { name: "fit", polarity: s.polarity, kp: 1e-4, vt0: 0.5, lambda: 0, gamma: 0, phi: defaultPhi } as DeviceCard, w: s.w, l: s.l } as Device };
  return cache.dev;
}
