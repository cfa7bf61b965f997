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
import { operatingPoint, type ModelOptions, type OperatingPoint, type TerminalVoltages } from "./drain-current.js";
import { inversion, type Inversion } from "./inversion.js";

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
