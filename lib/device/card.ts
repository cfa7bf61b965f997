/**
 * Device cards: the process parameters of one transistor type, plus the drawn
 * W and L of one instance. Plain JSON-serialisable data, SI units, signs as in a
 * SPICE Level 1 model card (PMOS vt0 negative, kp positive).
 */
import { InputError, requireFinite, requireNonNegative, requirePositive } from "../errors.js";
import { checkDatasheetCapacitances, checkProcessCapacitances, type DatasheetCapacitances, type ProcessCapacitances } from "./capacitance-card.js";
import type { AmperesPerVoltSquared, Kelvin, Meters, PerVolt, SqrtVolts, VoltMeters, Volts, VoltsPerKelvin } from "../quantity.js";

export const polarities = ["nmos", "pmos"] as const;
export type Polarity = (typeof polarities)[number];

export interface TemperatureCoefficients {
  /** Temperature at which kp and vt0 were characterised. */
  readonly t0: Kelvin;
  /** Drift of the threshold magnitude |Vt|, typically negative. */
  readonly alphaVt: VoltsPerKelvin;
  /** Mobility exponent m in µ ∝ T^−m. */
  readonly muExp: number;
}

export interface DeviceCard {
  readonly name: string;
  readonly polarity: Polarity;
  /** Process transconductance parameter µ·Cox (SPICE KP), > 0 for both polarities. */
  readonly kp: AmperesPerVoltSquared;
  /** Zero-bias threshold (SPICE VTO): positive for an enhancement NMOS, negative for an enhancement PMOS. */
  readonly vt0: Volts;
  /** Channel-length modulation λ (SPICE LAMBDA), ≥ 0; 0 when omitted. */
  readonly lambda?: PerVolt;
  /** Body-effect coefficient γ (SPICE GAMMA), ≥ 0; 0 when omitted. */
  readonly gamma?: SqrtVolts;
  /** Surface potential 2φF (SPICE PHI), > 0; 0.6 V when omitted (the SPICE default). */
  readonly phi?: Volts;
  readonly temperature?: TemperatureCoefficients;
  /** SPICE Level 1 capacitance parameters (TOX, overlaps, junctions), for frequency analysis. */
  readonly capacitance?: ProcessCapacitances;
  /** A discrete part's datasheet Ciss, Crss, Coss, for frequency analysis. */
  readonly datasheetCapacitances?: DatasheetCapacitances;
  /** Pelgrom threshold-mismatch coefficient: σ(ΔVt) = AVt/√(W·L) for a pair of these devices, in V·m (1 mV·µm = 1e-9 V·m). */
  readonly avt?: VoltMeters;
  /** Pelgrom current-factor mismatch coefficient: σ(Δβ/β) = Aβ/√(W·L), in m (1 %·µm = 1e-8 m). */
  readonly abeta?: Meters;
  /** Where the numbers come from: a datasheet, a PDK, a measurement, or "invented for the demo". */
  readonly provenance?: string;
}

export interface Device {
  readonly card: DeviceCard;
  readonly w: Meters;
  readonly l: Meters;
}

/** SPICE Level 1 default for PHI when a card omits it. */
export const defaultPhi = 0.6 as Volts;

/** +1 for NMOS, −1 for PMOS: multiplies terminal voltages into the device's own polarity. */
export const polaritySign = (card: DeviceCard): 1 | -1 => (card.polarity === "nmos" ? 1 : -1);

/** Validate a card, naming the first bad field; returns the same card. */
export function checkCard(card: DeviceCard, origin = "device card"): DeviceCard {
  if (!card || typeof card !== "object") throw new InputError(card, "a device card object", origin);
  const at = (f: string) => `${origin}${card.name ? ` "${card.name}"` : ""}.${f}`;
  if (!polarities.includes(card.polarity)) throw new InputError(card.polarity, `"nmos" or "pmos"`, at("polarity"));
  requirePositive(card.kp, at("kp"), "a process transconductance µ·Cox > 0 in A/V²");
  requireFinite(card.vt0, at("vt0"), "a finite threshold in V");
  if (card.lambda !== undefined) requireNonNegative(card.lambda, at("lambda"), "λ ≥ 0 in 1/V");
  if (card.gamma !== undefined) requireNonNegative(card.gamma, at("gamma"), "γ ≥ 0 in √V");
  if (card.phi !== undefined) requirePositive(card.phi, at("phi"), "2φF > 0 in V");
  if (card.avt !== undefined) requireNonNegative(card.avt, at("avt"), "a Pelgrom coefficient AVt ≥ 0 in V·m (e.g. 5e-9 V·m = 5 mV·µm)");
  if (card.abeta !== undefined) requireNonNegative(card.abeta, at("abeta"), "a Pelgrom coefficient Aβ ≥ 0 in m (e.g. 1e-8 m = 1 %·µm)");
  if (card.temperature) {
    requirePositive(card.temperature.t0, at("temperature.t0"), "a reference temperature > 0 K");
    requireFinite(card.temperature.alphaVt, at("temperature.alphaVt"), "a threshold drift in V/K");
    requireFinite(card.temperature.muExp, at("temperature.muExp"), "a mobility exponent (typically 1.2 to 2)");
  }
  if (card.capacitance !== undefined) checkProcessCapacitances(card.capacitance, at);
  if (card.datasheetCapacitances !== undefined) checkDatasheetCapacitances(card.datasheetCapacitances, at);
  return card;
}

/** Make a device from a card and drawn W and L, validating both. */
export function device(card: DeviceCard, w: Meters, l: Meters, origin = "device"): Device {
  checkCard(card, `${origin}.card`);
  requirePositive(w, `${origin}.w`, "a channel width W > 0 in m");
  requirePositive(l, `${origin}.l`, "a channel length L > 0 in m");
  return { card, w, l };
}

/** Validate a device built by hand (not through `device`); returns it unchanged. */
export function checkDevice(dev: Device, origin = "device"): Device {
  if (!dev || typeof dev !== "object") throw new InputError(dev, "a device { card, w, l }", origin);
  checkCard(dev.card, `${origin}.card`);
  requirePositive(dev.w, `${origin}.w`, "a channel width W > 0 in m");
  requirePositive(dev.l, `${origin}.l`, "a channel length L > 0 in m");
  return dev;
}
