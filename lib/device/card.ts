/**
 * Device cards: the process parameters of one transistor type, plus the drawn
 * W and L of one instance. Plain JSON-serialisable data, SI units, signs as in a
 * SPICE model card (PMOS vt0 negative, kp positive). `model` names the equations
 * the card's numbers belong to (absent: the square law, so older cards stay valid);
 * the models themselves live in `device/models/`.
 */
import { InputError, requireFinite, requireNonNegative, requirePositive } from "../errors.js";
import { cardAt, checkCardSet, type CardSet } from "./card-set.js";
import { checkDatasheetCapacitances, checkProcessCapacitances, checkTableCapacitances, type DatasheetCapacitances, type ProcessCapacitances, type TableCapacitances } from "./capacitance-card.js";
import type { AmperesPerVoltSquared, Kelvin, Meters, PerVolt, Ratio, SqrtVolts, VoltMeters, Volts, VoltsPerKelvin, VoltsPerMeter } from "../quantity.js";

export const polarities = ["nmos", "pmos"] as const;
export type Polarity = (typeof polarities)[number];

/**
 * The device models a card can name: the square law (SPICE Level 1), the square
 * law with mobility degradation and velocity saturation, and the all-region EKV model.
 */
export const modelIds = ["square-law", "square-law-mobility", "ekv"] as const;
export type ModelId = (typeof modelIds)[number];

/** Card fields only some models use, and the models that use them. */
export const modelOnlyFields = {
  theta: ["square-law-mobility", "ekv"],
  ecrit: ["square-law-mobility", "ekv"],
  thetaB: ["ekv"],
  sigma: ["ekv"],
  cit: ["ekv"],
} as const satisfies Record<string, readonly ModelId[]>;

/** The model a card names; the square law when it names none. */
export const modelOf = (card: DeviceCard): ModelId => card.model ?? "square-law";

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
  /** Which equations the numbers belong to; "square-law" when omitted. */
  readonly model?: ModelId;
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
  /** Mobility degradation θ (1/V), ≥ 0; 0 when omitted. square-law-mobility: µeff = µ0/(1 + θ·VOV); ekv: β ∝ 1/(1 + θ·2·n·UT·qf + θB·VSB), qf the source-end inversion charge. */
  readonly theta?: PerVolt;
  /**
   * Critical field for velocity saturation Esat (EKV UCRIT), > 0 in V/m. square-law-mobility:
   * none when omitted; ekv: 2·10⁶ V/m when omitted (EPFL-EKV 2.6 default, from memory).
   */
  readonly ecrit?: VoltsPerMeter;
  /** ekv only: mobility degradation with source-body voltage θB (1/V), ≥ 0; 0 when omitted. */
  readonly thetaB?: PerVolt;
  /** ekv only: drain-induced threshold lowering, VP shifts by σ·VDS; ≥ 0, 0 when omitted. */
  readonly sigma?: Ratio;
  /** ekv only: interface-trap capacitance over oxide capacitance Cit/Cox ≥ 0, added to the slope factor in weak inversion only (slope (n + Cit/Cox)·UT·ln10 per decade; threshold and strong-inversion current unchanged); 0 when omitted. */
  readonly cit?: Ratio;
  readonly temperature?: TemperatureCoefficients;
  /** SPICE Level 1 capacitance parameters (TOX, overlaps, junctions), for frequency analysis. */
  readonly capacitance?: ProcessCapacitances;
  /** A discrete part's datasheet Ciss, Crss, Coss, for frequency analysis. */
  readonly datasheetCapacitances?: DatasheetCapacitances;
  /** A foundry device's Cgs, Cgd, Cgg per width from a characterisation table, for frequency analysis. */
  readonly tableCapacitances?: TableCapacitances;
  /** Pelgrom threshold-mismatch coefficient: σ(ΔVt) = AVt/√(W·L) for a pair of these devices, in V·m (1 mV·µm = 1e-9 V·m). */
  readonly avt?: VoltMeters;
  /** Pelgrom current-factor mismatch coefficient: σ(Δβ/β) = Aβ/√(W·L), in m (1 %·µm = 1e-8 m). */
  readonly abeta?: Meters;
  /** Where the numbers come from: a datasheet, a PDK, a measurement, or "invented for the demo". */
  readonly provenance?: string;
}

/** Brand of a validated device: only `device()` and `checkDevice()` produce it. */
declare const validated: unique symbol;

/**
 * A card with drawn W and L, validated. Made only by `device()` or
 * `checkDevice()`, which return a frozen copy: a `Device` cannot change after
 * its check, so the hot path needs none of its own.
 */
export interface Device {
  readonly card: DeviceCard;
  readonly w: Meters;
  readonly l: Meters;
  readonly [validated]: true;
}

/** The devices `device()` made; a WeakSet so a device is forgotten with its last reference. */
const made = new WeakSet<object>();

/** SPICE Level 1 default for PHI when a card omits it. */
export const defaultPhi = 0.6 as Volts;

/** Temperature at which a card's numbers hold: its temperature block's t0, else 27 °C (the SPICE nominal temperature). */
export const cardTemperature = (card: DeviceCard): Kelvin => card.temperature?.t0 ?? (300.15 as Kelvin);

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
  if (card.model !== undefined && !modelIds.includes(card.model))
    throw new InputError(card.model, `one of ${modelIds.map((m) => `"${m}"`).join(", ")} (or omitted for the square law)`, at("model"));
  const model = modelOf(card);
  for (const [field, users] of Object.entries(modelOnlyFields) as [keyof typeof modelOnlyFields, readonly ModelId[]][])
    if (card[field] !== undefined && !users.includes(model))
      throw new InputError(card[field], `no ${field} on a "${model}" card (it belongs to ${users.map((m) => `"${m}"`).join(" and ")}); set "model" or remove the field`, at(field));
  if (card.theta !== undefined) requireNonNegative(card.theta, at("theta"), "a mobility degradation θ ≥ 0 in 1/V");
  if (card.thetaB !== undefined) requireNonNegative(card.thetaB, at("thetaB"), "a body-bias mobility degradation θB ≥ 0 in 1/V");
  // β's denominator 1 + θ·… + θB·VSB must stay positive under the forward body bias a design can see (VSB down to −1 V).
  if (card.thetaB !== undefined && card.thetaB >= 1) throw new InputError(card.thetaB, "θB < 1 1/V (so that 1 + θB·VSB > 0 down to VSB = −1 V)", at("thetaB"));
  if (card.ecrit !== undefined) requirePositive(card.ecrit, at("ecrit"), "a critical field Esat > 0 in V/m (typically 10⁶ to 10⁷)");
  if (card.sigma !== undefined) requireNonNegative(card.sigma, at("sigma"), "a threshold lowering σ ≥ 0 (volts of VP per volt of VDS)");
  if (card.cit !== undefined) requireNonNegative(card.cit, at("cit"), "an interface-trap capacitance ratio Cit/Cox ≥ 0 (0: EKV proper)");
  if (card.temperature) {
    requirePositive(card.temperature.t0, at("temperature.t0"), "a reference temperature > 0 K");
    requireFinite(card.temperature.alphaVt, at("temperature.alphaVt"), "a threshold drift in V/K");
    requireFinite(card.temperature.muExp, at("temperature.muExp"), "a mobility exponent (typically 1.2 to 2)");
  }
  if (card.capacitance !== undefined) checkProcessCapacitances(card.capacitance, at);
  if (card.datasheetCapacitances !== undefined) checkDatasheetCapacitances(card.datasheetCapacitances, at);
  if (card.tableCapacitances !== undefined) checkTableCapacitances(card.tableCapacitances, at);
  return card;
}

/** Make a device from a card (or a card set) and drawn W and L, validating both; returns a frozen copy. */
export function device(cardOrSet: DeviceCard | CardSet, w: Meters, l: Meters, origin = "device"): Device {
  requirePositive(w, `${origin}.w`, "a channel width W > 0 in m");
  requirePositive(l, `${origin}.l`, "a channel length L > 0 in m");
  // A card set (cards fitted at several L) gives the card at this L (lib/device/card-set.ts).
  const card = (cardOrSet as Partial<CardSet>)?.kind === "card-set" ? cardAt(checkCardSet(cardOrSet as CardSet, `${origin}.card`), l, `${origin}.card`) : (cardOrSet as DeviceCard);
  checkCard(card, `${origin}.card`);
  const k = (card.kp * w) / l;
  if (!Number.isFinite(k)) throw new InputError(`kp·W/L = ${card.kp}·${w}/${l}`, "a finite device gain k = kp·W/L in A/V²", origin);
  const dev = Object.freeze({ card: frozenCopy(card), w, l }) as unknown as Device;
  made.add(dev);
  return dev;
}

/**
 * A validated device from one that may not be: a device `device()` made is
 * returned as it is; anything else (a `{ card, w, l }` read from a file or built
 * by hand) is checked field by field and copied.
 */
export function checkDevice(dev: unknown, origin = "device"): Device {
  if (isDevice(dev)) return dev;
  if (!dev || typeof dev !== "object") throw new InputError(dev, "a device { card, w, l } (make one with device(card, W, L))", origin);
  const d = dev as { card: DeviceCard; w: Meters; l: Meters };
  return device(d.card, d.w, d.l, origin);
}

// The device the last look-up proved: a sweep passes one device millions of times, and membership is for life
// (devices are frozen and never leave the set), so an identity test stands in for the WeakSet look-up.
let lastProved: object | undefined;

/** True for a device made by `device()` or `checkDevice()`: one WeakSet look-up (an identity test for the last one proved). */
export function isDevice(dev: unknown): dev is Device {
  if (dev === lastProved && dev !== undefined) return true;
  if (typeof dev !== "object" || dev === null || !made.has(dev)) return false;
  lastProved = dev;
  return true;
}

/** A deep, frozen copy of JSON card data, so the validated values cannot be changed afterwards. */
function frozenCopy<T>(value: T): T {
  if (value === null || typeof value !== "object") return value;
  const copy: Record<string, unknown> = Array.isArray(value) ? ([] as unknown as Record<string, unknown>) : {};
  for (const [k, v] of Object.entries(value)) copy[k] = frozenCopy(v);
  return Object.freeze(copy) as T;
}
