/**
 * Shared pieces of the two-transistor stages (current mirror, diode-connected
 * load): validating the second device, evaluating a device at solved node
 * voltages, checks with margins, SPICE model lines and the swing record in
 * absolute volts. The single-transistor path lives in ../stage.ts.
 */
import { defaultPhi, device as makeDevice, modelOf, polaritySign, type Device, type DeviceCard } from "../../device/card.js";
import { models } from "../../device/models/index.js";
import type { ClmMode } from "../../device/drain-current.js";
import { smallSignal, type SmallSignal } from "../../device/small-signal.js";
import { InputError } from "../../errors.js";
import type { Volts, Watts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import { level1Model } from "../spice.js";
import type { Stage, StageCheck, StageDevice, StageDeviceAnalysis, SwingLimits } from "../topology.js";
import { ratingChecks, type PartStress } from "../../device/discrete-part.js";
import { stageCheck } from "../metrics.js";

export const stageOrigin = (stage: Stage<string, unknown>): string => (stage.name ? `stage "${stage.name}"` : `${stage.topology} stage`);

/** The further device of a stage under `devices[role]`, validated; only the listed roles are allowed. */
export function secondDevice(stage: Stage<string, unknown>, role: string, meaning: string): Device {
  const o = stageOrigin(stage);
  const devs = stage.devices as Record<string, unknown> | undefined;
  if (!devs || typeof devs !== "object") throw new InputError(devs, `devices.${role}: ${meaning} { card, w, l }`, `${o}: devices`, "invalid-design");
  for (const key of Object.keys(devs))
    if (key !== role) throw new InputError(key, `the device role "${role}" (${meaning}); the ${stage.topology} topology has no other`, `${o}: devices.${key}`, "invalid-design");
  const d = devs[role] as Stage["device"] | undefined;
  if (!d || typeof d !== "object") throw new InputError(d, `${meaning} { card, w, l }`, `${o}: devices.${role}`, "invalid-design");
  return makeDevice(d.card, d.w, d.l, `${o}: devices.${role}`);
}

/** A diode-connected device is saturated only if |Vt0| > 0 in its own polarity (VDS = VGS > VGS − Vt). */
export function requireEnhancement(dev: Device, where: string, role: string): void {
  const vt = polaritySign(dev.card) * dev.card.vt0;
  if (!(vt > 0))
    throw new InputError(
      dev.card.vt0,
      `an enhancement-mode card for the diode-connected ${role} (VTO > 0 for an NMOS, VTO < 0 for a PMOS): with |Vt| ≤ 0 a diode connection gives VDS = VGS < VGS − Vt, so it is not saturated`,
      `${where}.card.vt0`,
    );
}

/** True when two cards describe the same process device (the mirror ratio k2/k1 then holds). */
export function sameProcess(a: DeviceCard, b: DeviceCard): boolean {
  return (
    a.polarity === b.polarity &&
    modelOf(a) === modelOf(b) &&
    a.theta === b.theta &&
    a.thetaB === b.thetaB &&
    a.ecrit === b.ecrit &&
    a.sigma === b.sigma &&
    a.kp === b.kp &&
    a.vt0 === b.vt0 &&
    (a.lambda ?? 0) === (b.lambda ?? 0) &&
    (a.gamma ?? 0) === (b.gamma ?? 0) &&
    (a.phi ?? defaultPhi) === (b.phi ?? defaultPhi)
  );
}

/** Record a device's drawn size and card as inputs, labelled by its instance name. */
export function recordDevice(rec: Derivation, label: string, dev: Device, where: string): void {
  const c = dev.card;
  rec.input(`W(${label})`, dev.w, "length", `${where}.w`);
  rec.input(`L(${label})`, dev.l, "length", `${where}.l`);
  rec.input(`KP(${label})`, c.kp, "transconductanceParameter", `card ${c.name}`);
  rec.input(`VTO(${label})`, c.vt0, "voltage", `card ${c.name}`);
  rec.input(`LAMBDA(${label})`, c.lambda ?? 0, "inverseVoltage", `card ${c.name}`);
  rec.input(`GAMMA(${label})`, c.gamma ?? 0, "sqrtVoltage", `card ${c.name}`);
  rec.input(`PHI(${label})`, c.phi ?? defaultPhi, "voltage", `card ${c.name}`);
  if (c.theta !== undefined) rec.input(`THETA(${label})`, c.theta, "inverseVoltage", `card ${c.name}`);
  if (c.ecrit !== undefined) rec.input(`ESAT(${label})`, c.ecrit, "electricField", `card ${c.name}`);
  if (c.thetaB !== undefined) rec.input(`THETAB(${label})`, c.thetaB, "inverseVoltage", `card ${c.name}`);
  if (c.sigma !== undefined) rec.input(`SIGMA(${label})`, c.sigma, "dimensionless", `card ${c.name}`);
}

/** True when the device's card names a model other than the square law: the stage then solves through the model layer. */
export const modelled = (dev: Device): boolean => modelOf(dev.card) !== "square-law";

/** The assumption a two-transistor record states about its device models. */
export function modelAssumption(devs: readonly (readonly [string, Device])[], clm: ClmMode): string {
  const named = devs.map(([label, d]) => `${label}: ${models[modelOf(d.card)].title}${modelled(d) ? ` (${models[modelOf(d.card)].source})` : ""}`);
  const square = devs.some(([, d]) => !modelled(d));
  return `Device models: ${named.join("; ")}.${square ? ` Square-law channel-length modulation ${clm === "continuous" ? "applied in triode and saturation" : "applied in saturation only"}.` : ""}`;
}

/** The closing caution of a two-transistor record, naming the hand model. */
export const handCaution = (devs: readonly Device[]): string =>
  devs.some(modelled)
    ? `Hand analysis with the fitted ${[...new Set(devs.map((d) => models[modelOf(d.card)].title))].join(" and ")} is approximate outside the range the card was fitted on: verify by simulation and measurement, and respect the device ratings.`
    : "Hand analysis with the square law is approximate: verify by simulation and measurement, and respect the device ratings.";

export interface Terminals {
  readonly gate: number;
  readonly source: number;
  readonly drain: number;
  readonly body: number;
}

/** The device at absolute terminal voltages: region, current, small-signal parameters; recorded under a heading when `rec` is given. */
export function evaluateDevice(dev: Device, t: Terminals, clm: ClmMode, power: number, heading: string, rec?: Derivation): { analysis: StageDeviceAnalysis; small: SmallSignal } {
  rec?.note(heading, "Region, current and small-signal parameters from the device model at the solved node voltages:");
  const small = smallSignal(dev, { vgs: (t.gate - t.source) as Volts, vds: (t.drain - t.source) as Volts, vsb: (t.source - t.body) as Volts }, { clm }, rec);
  return {
    small,
    analysis: {
      polarity: dev.card.polarity,
      region: small.op.region,
      terminals: { gate: t.gate as Volts, source: t.source as Volts, drain: t.drain as Volts, body: t.body as Volts },
      op: small.op,
      smallSignal: { gm: small.gm, gmb: small.gmb, gds: small.gds, ro: small.ro },
      power: power as Watts,
    },
  };
}

export { stageCheck } from "../metrics.js";

/** Swing limits given in device polarity, returned in absolute volts (a PMOS flips upper and lower). */
export function swingInVolts(sign: 1 | -1, node: string, uq: number, uUp: number, uLo: number, upWhy: string, loWhy: string): SwingLimits {
  const q = sign * uq;
  const a = sign * uUp;
  const b = sign * uLo;
  const upper = Math.max(a, b);
  const lower = Math.min(a, b);
  return {
    node,
    quiescent: q as Volts,
    upper: upper as Volts,
    lower: lower as Volts,
    headroomUp: (upper - q) as Volts,
    headroomDown: (q - lower) as Volts,
    upperLimit: sign < 0 ? loWhy : upWhy,
    lowerLimit: sign < 0 ? upWhy : loWhy,
  };
}

/** A Level 1 .model line from a device card (same parameters as the single-transistor export). */
export function modelLine(name: string, card: DeviceCard): string {
  return level1Model(name, card);
}

/** Severity of a finding by its wording, as the single-transistor metrics grade theirs. */
export function recordFindings(findings: readonly string[], rec?: Derivation): void {
  if (!rec) return;
  for (const f of findings)
    rec.find(f.startsWith("Hand") ? "caution" : /cutoff|cut off|triode|below compliance|not realisable/.test(f) ? "warning" : "note", f);
}

export const fmt = (x: number): string => String(+x.toPrecision(6));

/** A discrete part's ratings checks for one transistor of a stage (none for a device without a part); `label` tells the transistors apart. */
export function partChecks(d: StageDevice | undefined, stress: PartStress, label: string, rec?: Derivation): StageCheck[] {
  if (!d?.part) return [];
  return ratingChecks(d.part, stress, (name, value, dim, max, detail) => stageCheck(name, value, dim, { max }, rec, detail), rec, `${label} ${d.part.part.name}`);
}
