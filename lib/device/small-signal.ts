/**
 * Small-signal parameters at a bias point, consistent with SPICE Level 1:
 * gm, gmb, gds, ro, intrinsic gain gm·ro, gm/ID and the deep-triode on-resistance.
 *
 * Conductances are magnitudes in the device's own polarity (as SPICE reports
 * them for both NMOS and PMOS). When VDS is reversed the drain and source swap
 * roles, as in SPICE, and gm, gmb and gds are taken with respect to the terminal
 * acting as the source.
 */
import {
  bodyTransconductance,
  bodyTransconductanceForward,
  intrinsicGain,
  onResistance,
  outputConductanceSat,
  outputConductanceTriode,
  outputResistance,
  saturationCurrent,
  transconductanceEfficiency,
  transconductanceSat,
  transconductanceTriode,
} from "../formulas/device.formulas.js";
import type { Derivation } from "../record/derivation.js";
import type { Amperes, Ohms, PerVolt, Ratio, Siemens, SiemensPerAmpere, SqrtVolts, Volts } from "../quantity.js";
import { checkDevice, defaultPhi, type Device } from "./card.js";
import { deviceCurrent, operatingPoint, type ModelOptions, type OperatingPoint, type TerminalVoltages } from "./drain-current.js";
import { inversion, inversionLevelOf, type Inversion } from "./inversion.js";
import { derivativeStep } from "./model.js";
import { ekvSlopeFactor } from "../formulas/ekv.formulas.js";
import { ekvPinchOffAt } from "./models/ekv.js";
import { cardTemperature } from "./card.js";
import { thermalVoltage } from "../quantity.js";

export interface SmallSignal {
  readonly op: OperatingPoint;
  /** ∂ID/∂VGS; 0 in cutoff. */
  readonly gm: Siemens;
  /** ∂ID/∂VBS (body transconductance); 0 in cutoff or when γ = 0. */
  readonly gmb: Siemens;
  /** ∂ID/∂VDS; 0 in cutoff, and in saturation when λ = 0. */
  readonly gds: Siemens;
  /** 1/gds; Infinity where gds = 0 (cutoff, or saturation with λ = 0: the model has no output conductance). */
  readonly ro: Ohms;
  /** gm·ro = gm/gds; Infinity in saturation with λ = 0, 0 in cutoff (no gain) and at VDS = 0. */
  readonly intrinsicGain: Ratio;
  /** gm/|ID|; undefined where ID = 0 (cutoff, VDS = 0), since the square law gives no value there. */
  readonly gmOverId: SiemensPerAmpere | undefined;
  /** Deep-triode on-resistance 1/(k·VOV), the limit of 1/gds as VDS → 0; Infinity in cutoff. */
  readonly ron: Ohms;
  /** EKV inversion level of the bias point; undefined in cutoff. */
  readonly inversion: Inversion | undefined;
}

/** Small-signal parameters at terminal voltages `bias` (SPICE signs), recorded step by step when `rec` is given. */
export function smallSignal(device: Device, bias: TerminalVoltages, opts: ModelOptions = {}, rec?: Derivation): SmallSignal {
  const dev = checkDevice(device, "smallSignal.dev");
  const op = operatingPoint(dev, bias, opts, rec);
  if (op.model !== "square-law") return modelSmallSignal(dev, op, rec);
  const c = dev.card;
  const k = op.k;
  const vov = op.vov;
  const vds = op.vdsDevice;
  const vsb = op.vsbDevice;
  const gamma = (c.gamma ?? 0) as SqrtVolts;
  const phi = (c.phi ?? defaultPhi) as Volts;
  const lambda = (c.lambda ?? 0) as PerVolt;

  if (op.region === "cutoff") {
    rec?.note("Small-signal parameters in cutoff", "gm = gmb = gds = 0: ro, Ron are infinite and there is no gain (square-law model, subthreshold conduction not modelled).");
    return {
      op,
      gm: 0 as Siemens,
      gmb: 0 as Siemens,
      gds: 0 as Siemens,
      ro: Infinity as Ohms,
      intrinsicGain: 0 as Ratio,
      gmOverId: undefined,
      ron: Infinity as Ohms,
      inversion: undefined,
    };
  }

  let gm: Siemens;
  let gds: Siemens;
  if (op.region === "saturation") {
    gm = rec ? rec.calc(transconductanceSat, [k, vov, lambda, vds]) : transconductanceSat.fn(k, vov, lambda, vds);
    gds = rec ? rec.calc(outputConductanceSat, [lambda, k, vov]) : outputConductanceSat.fn(lambda, k, vov);
  } else {
    // The textbook form has no (1 + λ·VDS) in triode; SPICE Level 1 does.
    const lt = (opts.clm === "saturation-only" ? 0 : lambda) as PerVolt;
    gm = rec ? rec.calc(transconductanceTriode, [k, vds, lt]) : transconductanceTriode.fn(k, vds, lt);
    gds = rec ? rec.calc(outputConductanceTriode, [k, vov, vds, lt]) : outputConductanceTriode.fn(k, vov, vds, lt);
  }

  let gmb = 0 as Siemens;
  if (gamma > 0) {
    if (vsb >= 0) gmb = rec ? rec.calc(bodyTransconductance, [gm, gamma, phi, vsb]) : bodyTransconductance.fn(gm, gamma, phi, vsb);
    else if (Math.sqrt(phi) + vsb / (2 * Math.sqrt(phi)) > 0)
      gmb = rec ? rec.calc(bodyTransconductanceForward, [gm, gamma, phi, vsb], "forward body bias, linearised as in SPICE Level 1") : bodyTransconductanceForward.fn(gm, gamma, phi, vsb);
    else rec?.note("Body transconductance", `VSB = ${vsb} V ≤ −2·PHI: the linearised threshold is floored, so gmb = 0 as in SPICE Level 1.`);
  }

  let ro = Infinity as Ohms;
  let a0 = Infinity as Ratio;
  if (gds > 0) {
    ro = rec ? rec.calc(outputResistance, [gds]) : outputResistance.fn(gds);
    a0 = rec ? rec.calc(intrinsicGain, [gm, gds]) : intrinsicGain.fn(gm, gds);
  } else {
    rec?.note("Output resistance", "λ = 0: the square law has no output conductance in saturation, so ro and the intrinsic gain gm·ro are unbounded. Real devices have finite ro; give λ for a usable gain.");
  }

  const idMag = Math.abs(op.channelCurrent) as Amperes;
  let gmOverId: SiemensPerAmpere | undefined;
  if (idMag > 0) gmOverId = rec ? rec.calc(transconductanceEfficiency, [gm, idMag]) : transconductanceEfficiency.fn(gm, idMag);
  const ron = rec ? rec.calc(onResistance, [k, vov], "on-resistance as VDS → 0") : onResistance.fn(k, vov);
  // operatingPoint has already recorded the inversion finding; evaluate again without the record.
  const inv = inversion(saturationCurrent.fn(k, vov), k, opts);
  return { op, gm, gmb, gds, ro, intrinsicGain: a0, gmOverId, ron, inversion: inv };
}

/**
 * Small-signal parameters of a model without closed-form conductances (square law
 * with mobility degradation, EKV): gm, gds and gmb are central differences of the
 * model's own channel current at the operating point, step `derivativeStep` (10 µV),
 * taken in the device's polarity about the terminal acting as the source.
 */
function modelSmallSignal(dev: Device, op: OperatingPoint, rec?: Derivation): SmallSignal {
  const h = derivativeStep;
  const g = op.vgsDevice;
  const d = op.vdsDevice;
  const b = op.vsbDevice;
  const f = (x: number, y: number, z: number) => deviceCurrent(dev, x, y, z);
  const gm = ((f(g + h, d, b) - f(g - h, d, b)) / (2 * h)) as Siemens;
  const gds = ((f(g, d + h, b) - f(g, d - h, b)) / (2 * h)) as Siemens;
  const gmb = ((f(g, d, b - h) - f(g, d, b + h)) / (2 * h)) as Siemens;
  const gds0 = (f(g, h, b) - f(g, -h, b)) / (2 * h);
  rec?.note(
    "gm, gds, gmb",
    `Central differences of the ${op.model === "ekv" ? "EKV" : "square-law-mobility"} drain current over ±${h * 1e6} µV: gm = ${+gm.toPrecision(4)} S, gds = ${+gds.toPrecision(4)} S, gmb = ${+gmb.toPrecision(4)} S.`,
  );
  let ro = Infinity as Ohms;
  let a0 = Infinity as Ratio;
  if (gds > 0) {
    ro = rec ? rec.calc(outputResistance, [gds]) : outputResistance.fn(gds);
    a0 = rec ? rec.calc(intrinsicGain, [gm, gds]) : intrinsicGain.fn(gm, gds);
  } else rec?.note("Output resistance", "gds = 0 at this bias: ro and the intrinsic gain are unbounded.");
  const idMag = Math.abs(op.channelCurrent) as Amperes;
  let gmOverId: SiemensPerAmpere | undefined;
  if (idMag > 0) gmOverId = rec ? rec.calc(transconductanceEfficiency, [gm, idMag]) : transconductanceEfficiency.fn(gm, idMag);
  const ron = (gds0 > 0 ? 1 / gds0 : Infinity) as Ohms;
  rec?.note("On-resistance", `Ron = 1/gds at VDS = 0 = ${+ron.toPrecision(4)} Ω (central difference of the model current).`);
  let inv: Inversion | undefined;
  if (op.ic !== undefined) {
    const c = dev.card;
    const ut = thermalVoltage(cardTemperature(c));
    // The slope factor the model uses at this bias (EKV 2.6 form).
    const vp = vpOf(op, dev);
    const n = ekvSlopeFactor.fn((c.gamma ?? 0) as SqrtVolts, vp as Volts, (c.phi ?? defaultPhi) as Volts, ut);
    // with interface traps the weak-inversion limit of gm/ID is 1/((n + Cit/Cox)·UT): report n + Cit/Cox
    inv = { ic: op.ic, level: inversionLevelOf(op.ic), slopeFactor: (n + (c.cit ?? 0)) as Ratio, ut };
  } else if (op.region !== "cutoff") inv = inversion(((op.k / 2) * op.vov * op.vov) as Amperes, op.k);
  if (op.region === "cutoff") return { op, gm: 0 as Siemens, gmb: 0 as Siemens, gds: 0 as Siemens, ro: Infinity as Ohms, intrinsicGain: 0 as Ratio, gmOverId: undefined, ron: Infinity as Ohms, inversion: undefined };
  return { op, gm, gmb, gds, ro, intrinsicGain: a0, gmOverId, ron, inversion: inv };
}

/** EKV pinch-off voltage at an operating point, from the catalog's formulas. */
function vpOf(op: OperatingPoint, dev: Device): number {
  const c = dev.card;
  const s = c.polarity === "nmos" ? 1 : -1;
  const phi = (c.phi ?? defaultPhi) as Volts;
  const gamma = (c.gamma ?? 0) as SqrtVolts;
  return ekvPinchOffAt(s * c.vt0, gamma, phi, c.sigma ?? 0, op.vgsDevice, op.vdsDevice, op.vsbDevice);
}
