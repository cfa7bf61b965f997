/**
 * Any device model of `lib/device/models/` as a fit model: its parameters and
 * bounds, its allocation-free current on the parameter vector (W, L and the
 * measurement temperature filled in from the sweep), its card through
 * `cardFromVector` (all the window's points at once through the model's block
 * evaluator `currents` where it has one). A parameter the window has no data for is held at the
 * value a card without it means (`absent`) and left out of the card, so the
 * fitted card computes exactly what the fit computed.
 */
import type { DeviceCard } from "../device/card.js";
import { spiceCurrent, type DeviceModel } from "../device/model.js";
import { cardFromVector } from "../device/models/index.js";
import { criticalFieldAtTemperature, mobilityAtTemperature, thresholdAtTemperature } from "../formulas/device.formulas.js";
import type { AmperesPerVoltSquared, Kelvin, Ratio, Volts, VoltsPerKelvin, VoltsPerMeter } from "../quantity.js";
import { defaultTemperatureCoefficients } from "../device/temperature.js";
import type { Sweep } from "../measure/select.js";
import type { FitModel, FitParameter } from "./model.js";

const units: Record<string, string> = {
  voltage: "V", transconductanceParameter: "A/V²", sqrtVoltage: "√V", inverseVoltage: "1/V", electricField: "V/m", dimensionless: "", ratio: "",
};

/** Which data a parameter needs in the window to be fitted. */
const needs: Record<string, "body" | "saturation" | undefined> = { gamma: "body", phi: "body", thetaB: "body", lambda: "saturation", sigma: "saturation" };

export function fitModelOf(model: DeviceModel): FitModel {
  const names = model.parameters.map((q) => q.name);
  const at = (n: string) => names.indexOf(n);
  const [iVt, iKp, iGamma, iPhi, iCit, iEcrit] = [at("vt0"), at("kp"), at("gamma"), at("phi"), at("cit"), at("ecrit")];
  const heldValue = model.parameters.map((q) => (Number.isFinite(q.absent) ? q.absent : q.initial));
  const parameters: FitParameter[] = model.parameters.map((q) => ({
    name: q.name,
    unit: units[q.dim] ?? q.dim,
    meaning: q.meaning,
    lower: q.min,
    upper: q.max,
    scale: Math.abs(q.initial) || 1,
  }));
  // One vector per sweep, reused: evaluation allocates nothing.
  let scratch: { s: Sweep; v: Float64Array } | undefined;
  const vector = (p: Float64Array, s: Sweep) => {
    if (scratch?.s !== s) scratch = { s, v: new Float64Array(model.size) };
    const v = scratch.v;
    v.set(p);
    v[model.size - 3] = s.w;
    v[model.size - 2] = s.l;
    v[model.size - 1] = s.temp;
    return v;
  };
  // Bias arrays for the block path, grown to the largest window seen and reused.
  let bias = { vgs: new Float64Array(0), vds: new Float64Array(0), vsb: new Float64Array(0) };
  return {
    id: model.id,
    title: model.title,
    source: model.source,
    parameters,
    free(s, idx) {
      let body = false;
      let sat = false;
      for (let k = 0; k < idx.length; k++) {
        const i = idx[k]!;
        if (Math.abs(s.vbs[i]!) > 1e-3) body = true;
        if (Math.abs(s.vds[i]!) > 0.3) sat = true;
      }
      return names.map((n) => (needs[n] === "body" ? body : needs[n] === "saturation" ? sat : true));
    },
    start(_s, est) {
      const p = Float64Array.from(heldValue);
      model.parameters.forEach((q, j) => {
        p[j] = Number.isFinite(q.initial) ? q.initial : heldValue[j]!;
      });
      p[iVt] = est.vt;
      p[iKp] = est.kp;
      return p;
    },
    held: heldValue,
    evaluate(p, s, idx, out) {
      const v = vector(p, s);
      const sign = s.polarity === "nmos" ? 1 : -1;
      if (model.currents) {
        // the block path: the window's bias points gathered in device polarity, then all evaluated at once
        const n = idx.length;
        if (bias.vgs.length < n) bias = { vgs: new Float64Array(n), vds: new Float64Array(n), vsb: new Float64Array(n) };
        const { vgs, vds, vsb } = bias;
        for (let k = 0; k < n; k++) {
          const i = idx[k]!;
          vgs[k] = sign * s.vgs[i]!;
          vds[k] = sign * s.vds[i]!;
          vsb[k] = -sign * s.vbs[i]!;
        }
        model.currents(v, vgs, vds, vsb, out, n);
        if (sign < 0) for (let k = 0; k < n; k++) out[k] = -out[k]!;
        return;
      }
      for (let k = 0; k < idx.length; k++) {
        const i = idx[k]!;
        out[k] = spiceCurrent(model, v, sign, s.vgs[i]!, s.vds[i]!, -s.vbs[i]!);
      }
    },
    threshold(p, vsb) {
      const g = iGamma >= 0 ? p[iGamma]! : 0;
      const phi = iPhi >= 0 ? p[iPhi]! : 0.6;
      return p[iVt]! + g * (Math.sqrt(phi + Math.max(vsb, -phi)) - Math.sqrt(phi));
    },
    slope(p) {
      // n = 1 + γ/(2√(2φF + VSB)) at VSB = 0 (EKV 1995); 1.3 without a body-effect term (common practice)
      // plus Cit/Cox where the model has it (the weak-inversion slope is (n + Cit/Cox)·UT)
      const g = iGamma >= 0 ? p[iGamma]! : 0;
      return (g > 0 && iPhi >= 0 ? 1 + g / (2 * Math.sqrt(p[iPhi]!)) : 1.3) + (iCit >= 0 ? p[iCit]! : 0);
    },
    atTemperature(p, t0, t, alphaVt, muExp, out) {
      out.set(p);
      // the catalog's temperature formulas, as cardAtTemperature uses them
      out[iVt] = thresholdAtTemperature.fn(p[iVt]! as Volts, alphaVt as VoltsPerKelvin, t as Kelvin, t0 as Kelvin);
      out[iKp] = mobilityAtTemperature.fn(p[iKp]! as AmperesPerVoltSquared, t as Kelvin, t0 as Kelvin, muExp as Ratio);
      if (iEcrit >= 0) out[iEcrit] = criticalFieldAtTemperature.fn(p[iEcrit]! as VoltsPerMeter, t as Kelvin, t0 as Kelvin, muExp as Ratio);
    },
    card(p, s, provenance, held) {
      const um = (m: number) => String(+(m * 1e6).toPrecision(4));
      const notFitted = names.filter((_, j) => held[j]);
      const base = {
        name: `${s.polarity} ${model.title}, W/L = ${um(s.w)}/${um(s.l)} µm`,
        polarity: s.polarity,
        model: model.id,
        kp: 1e-4,
        vt0: 0.5,
        // the card holds at the measurement temperature (EKV's UT); drift coefficients until fitted: the defaults
        temperature: { ...defaultTemperatureCoefficients, t0: s.temp as Kelvin },
        provenance: `${provenance}${notFitted.length ? `; ${notFitted.join(", ")} not fitted (no data for them in the window; the model's default applies)` : ""}; temperature drift coefficients not fitted (defaults) unless a temperature fit says otherwise`,
      } as unknown as DeviceCard;
      const card = cardFromVector(model, vector(p, s).slice(), base) as unknown as Record<string, unknown>;
      names.forEach((n, j) => {
        if (held[j] && n !== "vt0" && n !== "kp") delete card[n];
      });
      return card as unknown as DeviceCard;
    },
  };
}
