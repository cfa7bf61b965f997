/**
 * The EKV all-region model (equations and sources: lib/formulas/ekv.catalog.ts).
 * One expression from weak through strong inversion, continuous in ID, gm, gds
 * and gm/ID; the inversion coefficient IC = IF/IS comes with it.
 * A fixed sequence of operations (the charge relation through the Wright ω function, lib/numeric/wright-omega.ts),
 * no iteration to convergence, no allocation; the card's temperature sets UT = kT/q. `ekv.currents` evaluates
 * many bias points at once through the generated block evaluator (about 3× the points per second).
 */
import {
  ekvChannelCurrent,
  ekvChannelCurrentBlock,
  ekvInversionCoefficient,
  ekvDrainCurrent,
  ekvDrainSaturationVoltage,
  ekvThreshold,
  ekvEffectiveGate,
  ekvEquivalentLength,
  ekvForwardCharge,
  ekvForwardCurrent,
  ekvGainFactor,
  ekvLimitedDrainVoltage,
  ekvPinchOffFloor,
  ekvPinchOffVoltage,
  ekvReverseCurrent,
  ekvReverseCharge,
  ekvSaturationVoltage,
  ekvLongChannelSaturationVoltage,
  ekvNormalisingVoltage,
  ekvSlopeFactor,
  ekvSpecificCurrent,
} from "../../formulas/ekv.formulas.js";
import { thermalVoltage, type Kelvin, type PerVolt, type Ratio, type SqrtVolts, type Volts, type VoltsPerMeter } from "../../quantity.js";
import { reversible, reversibleCurrents, type DeviceModel, type ModelBias, type ModelParameter } from "../model.js";
import type { Derivation } from "../../record/derivation.js";
import { cardTemperature, defaultPhi, type Device } from "../card.js";
import { overdrive } from "../../formulas/device.formulas.js";
import { mobilityParameters } from "./mobility.js";

/** Critical field when an EKV card gives none: 2·10⁶ V/m, the EPFL-EKV 2.6 default UCRIT (from memory). */
export const defaultEkvCriticalField = 2e6 as VoltsPerMeter;

/** The pinch-off voltage for an effective gate voltage VG': the catalog's form above VG' = 0, −2φF at and below it. */
export function ekvPinchOff(vgp: number, phi: number, gamma: number): Volts {
  return vgp > 0 ? ekvPinchOffVoltage.fn(vgp as Volts, phi as Volts, gamma as SqrtVolts) : ekvPinchOffFloor.fn(phi as Volts);
}

/** The pinch-off voltage at a bias (device polarity, VDS ≥ 0). */
export function ekvPinchOffAt(vt0: number, gamma: number, phi: number, sigma: number, vgs: number, vds: number, vsb: number): Volts {
  return ekvPinchOff(ekvEffectiveGate.fn(vgs as Volts, vsb as Volts, vt0 as Volts, sigma as Ratio, vds as Volts, phi as Volts, gamma as SqrtVolts), phi, gamma);
}

/**
 * Channel current for VDS ≥ 0 in device polarity (VGS, VDS, VSB source-referenced), and the
 * inversion coefficient IF/IS: generated from the catalog's compositions (one inlined body of
 * its formulas, plain numbers, no allocation). Where the forward current underflows (a source
 * tens of volts above the pinch-off voltage) the channel carries nothing and 0 is returned.
 */
export { ekvChannelCurrent, ekvInversionCoefficient };

export const ekvParameters: readonly ModelParameter[] = [
  ...mobilityParameters.filter((q) => q.name !== "ecrit"),
  { name: "ecrit", dim: "electricField", meaning: "critical field for velocity saturation (EKV UCRIT)", min: 1e5, max: 1e9, initial: 5e6, absent: defaultEkvCriticalField, geometryScaled: false },
  { name: "thetaB", dim: "inverseVoltage", meaning: "mobility degradation with source-body voltage θB", min: 0, max: 1, initial: 0.05, absent: 0, geometryScaled: false },
  { name: "sigma", dim: "dimensionless", meaning: "drain-induced threshold lowering σ", min: 0, max: 0.3, initial: 0.01, absent: 0, geometryScaled: false },
  { name: "cit", dim: "dimensionless", meaning: "interface-trap capacitance over oxide capacitance Cit/Cox (weak-inversion slope (n + Cit/Cox)·UT·ln10 per decade)", min: 0, max: 3, initial: 0.1, absent: 0, geometryScaled: false },
];

// Vector layout: vt0 kp gamma phi lambda theta ecrit thetaB sigma cit, then W L T. The point and block forms read it alike.
const forward = (p: Float64Array, vgs: number, vds: number, vsb: number): number =>
  ekvChannelCurrent(p[1]!, p[10]!, p[11]!, p[0]!, p[2]!, p[3]!, p[4]!, p[5]!, p[7]!, p[6]!, p[8]!, p[9]!, thermalVoltage(p[12]! as Kelvin), vgs, vds, vsb);
const forwardBlock = (p: Float64Array, vgs: Float64Array, vds: Float64Array, vsb: Float64Array, out: Float64Array, count: number): void =>
  ekvChannelCurrentBlock(p[1]!, p[10]!, p[11]!, p[0]!, p[2]!, p[3]!, p[4]!, p[5]!, p[7]!, p[6]!, p[8]!, p[9]!, thermalVoltage(p[12]! as Kelvin), vgs, vds, vsb, out, count);

export const ekv: DeviceModel = {
  id: "ekv",
  title: "EKV all-region model",
  source: "Enz, Krummenacher & Vittoz, Analog Integrated Circuits and Signal Processing 8(1), 83–114, 1995; EPFL-EKV 2.6, Bucher et al., EPFL technical report, 1999; charge–voltage relation of Enz & Vittoz, Charge-Based MOS Transistor Modeling, Wiley, 2006",
  parameters: ekvParameters,
  size: ekvParameters.length + 3,
  current: reversible(forward),
  currents: reversibleCurrents(forwardBlock),
};

/**
 * The bias point of an EKV device (device polarity, VDS ≥ 0), every step recorded
 * with the EKV catalog's formulas when `rec` is given. The region is triode or
 * saturation by VDS against the model's VDsat; EKV has no cutoff (weak inversion
 * conducts), and the inversion coefficient says how strongly the channel is inverted.
 */
export function ekvBias(dev: Device, g: number, d: number, b: number, rec?: Derivation): ModelBias {
  const c = dev.card;
  const s = c.polarity === "nmos" ? 1 : -1;
  const T = cardTemperature(c);
  const u = thermalVoltage(T);
  const vt0 = (s * c.vt0) as Volts;
  const gamma = (c.gamma ?? 0) as SqrtVolts;
  const phi = (c.phi ?? defaultPhi) as Volts;
  const sigma = (c.sigma ?? 0) as Ratio;
  const cit = (c.cit ?? 0) as Ratio;
  const theta = (c.theta ?? 0) as PerVolt;
  const thetaB = (c.thetaB ?? 0) as PerVolt;
  const lambda = (c.lambda ?? 0) as PerVolt;
  const e = (c.ecrit ?? defaultEkvCriticalField) as VoltsPerMeter;
  const w = dev.w;
  const l = dev.l;
  const vgs = g as Volts;
  const vds = d as Volts;
  const vsb = b as Volts;
  if (!rec) {
    const vt = b > -phi ? ekvThreshold.fn(vt0, gamma, phi, vsb, sigma, vds) : NaN;
    const vp = ekvPinchOffAt(vt0, gamma, phi, sigma, g, d, b);
    const um = ekvNormalisingVoltage.fn(u, cit, ekvSlopeFactor.fn(gamma, vp, phi, u));
    const ic = ekvForwardCurrent.fn(ekvForwardCharge.fn(vp, vsb, um));
    const vdsat = ekvDrainSaturationVoltage.fn(um, ic, e, l);
    const id = ekvChannelCurrent(c.kp, w, l, vt0, gamma, phi, lambda, theta, thetaB, e, sigma, cit, u, g, d, b);
    return { region: d < vdsat ? "triode" : "saturation", id, vt, vov: g - vt, vdsat, ic };
  }
  rec.assume(`UT = kT/q = ${+(u * 1e3).toPrecision(4)} mV at the card's temperature ${+(T - 273.15).toFixed(2)} °C.`);
  if (c.ecrit === undefined) rec.assume(`Critical field Esat = ${defaultEkvCriticalField / 1e6} V/µm, the EPFL-EKV 2.6 default (from memory): the card gives none.`);
  let vt = NaN as Volts;
  if (b > -phi) {
    vt = rec.calc(ekvThreshold, [vt0, gamma, phi, vsb, sigma, vds], "where VP = VS");
    rec.step(overdrive, [g, vt], overdrive.fn(vgs, vt), s < 0 ? "PMOS: magnitudes VSG and |Vt|" : undefined);
  } else rec.note("Threshold", `Forward body bias VSB = ${+b.toPrecision(4)} V beyond −2φF: the threshold is not defined there; the EKV current below is.`);
  const vgp = rec.calc(ekvEffectiveGate, [vgs, vsb, vt0, sigma, vds, phi, gamma]);
  const vp = vgp > 0 ? rec.calc(ekvPinchOffVoltage, [vgp, phi, gamma]) : rec.calc(ekvPinchOffFloor, [phi], "VG' ≤ 0: no channel charge");
  const n = rec.calc(ekvSlopeFactor, [gamma, vp, phi, u]);
  const um = c.cit === undefined ? ekvNormalisingVoltage.fn(u, cit, n) : rec.calc(ekvNormalisingVoltage, [u, cit, n], "interface traps steepen nothing above threshold: Um cancels there");
  const qf = rec.calc(ekvForwardCharge, [vp, vsb, um]);
  const ic = rec.calc(ekvForwardCurrent, [qf], "the inversion coefficient");
  const vdsat = rec.calc(ekvDrainSaturationVoltage, [um, ic, e, l]);
  const region = d < vdsat ? "triode" : "saturation";
  rec.note(`Region: ${region}`, `${s < 0 ? "VSD" : "VDS"} = ${+d.toPrecision(4)} V ${d < vdsat ? "<" : "≥"} VDsat = ${+vdsat.toPrecision(4)} V; ${ic < 0.1 ? "weak" : ic > 10 ? "strong" : "moderate"} inversion (IC = ${+ic.toPrecision(3)}).`);
  if (ic === 0) {
    rec.note("Drain current", "The forward current underflows: the source is far above the pinch-off voltage and the channel carries nothing.");
    return { region, id: 0, vt, vov: g - vt, vdsat, ic };
  }
  const vdss = rec.calc(ekvSaturationVoltage, [rec.calc(ekvLongChannelSaturationVoltage, [um, ic]), e, l, um]);
  const vip = rec.calc(ekvLimitedDrainVoltage, [vdss, um, vds]);
  const qr = rec.calc(ekvReverseCharge, [vp, vsb, vds, vip, um]);
  const ir = rec.calc(ekvReverseCurrent, [qr]);
  const leq = rec.calc(ekvEquivalentLength, [l, vds, vip, e]);
  const beta = rec.calc(ekvGainFactor, [c.kp, w, leq, theta, n, um, qf, qr, thetaB, vsb]);
  const is = rec.calc(ekvSpecificCurrent, [n, beta, um]);
  const id = rec.calc(ekvDrainCurrent, [is, ic, ir, lambda, vds]);
  return { region, id, vt, vov: g - vt, vdsat, ic };
}
