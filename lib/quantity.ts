/**
 * Physical dimensions and the branded number types derived from them.
 *
 * A quantity is a plain JavaScript number in SI base units carrying a
 * compile-time brand, so `Volts` cannot be passed where `Amperes` is wanted
 * and nothing is paid at run time. The table below is the single source:
 * the types, the SI unit strings used by the parser and formatter, and the
 * unit typeset in derivations all come from it.
 */

export const dimensions = {
  voltage: { unit: "V", tex: "\\mathrm{V}", label: "voltage" },
  current: { unit: "A", tex: "\\mathrm{A}", label: "current" },
  resistance: { unit: "ohm", tex: "\\Omega", label: "resistance" },
  conductance: { unit: "S", tex: "\\mathrm{S}", label: "conductance" },
  /** µn·Cox or kn = µn·Cox·W/L: the square-law gain factor. */
  transconductanceParameter: { unit: "A/V^2", tex: "\\mathrm{A/V^2}", label: "transconductance parameter" },
  /** λ, channel-length modulation. */
  inverseVoltage: { unit: "1/V", tex: "\\mathrm{V^{-1}}", label: "inverse voltage" },
  /** γ, body-effect coefficient. */
  sqrtVoltage: { unit: "V^0.5", tex: "\\sqrt{\\mathrm{V}}", label: "square-root voltage" },
  /** Threshold temperature coefficient. */
  voltagePerKelvin: { unit: "V/K", tex: "\\mathrm{V/K}", label: "voltage per kelvin" },
  length: { unit: "m", tex: "\\mathrm{m}", label: "length" },
  /** Pelgrom's threshold-mismatch coefficient AVt (mV·µm in the trade). */
  /** Gate area W·L. */
  area: { unit: "m^2", tex: "\\mathrm{m^2}", label: "area" },
  /** Slew rate of a node voltage. */
  slewRate: { unit: "V/s", tex: "\\mathrm{V/s}", label: "slew rate" },
  voltageLength: { unit: "V*m", tex: "\\mathrm{V\\,m}", label: "voltage times length" },
  /** Critical field for velocity saturation (Esat, EKV UCRIT). */
  electricField: { unit: "V/m", tex: "\\mathrm{V/m}", label: "electric field" },
  temperature: { unit: "K", tex: "\\mathrm{K}", label: "temperature" },
  power: { unit: "W", tex: "\\mathrm{W}", label: "power" },
  /** Junction-to-ambient or junction-to-case thermal resistance RθJA, RθJC. */
  thermalResistance: { unit: "K/W", tex: "\\mathrm{K/W}", label: "thermal resistance" },
  capacitance: { unit: "F", tex: "\\mathrm{F}", label: "capacitance" },
  /** Cox, gate capacitance per area. */
  capacitancePerArea: { unit: "F/m^2", tex: "\\mathrm{F/m^2}", label: "capacitance per area" },
  mobility: { unit: "m^2/(V s)", tex: "\\mathrm{m^2/(V\\,s)}", label: "mobility" },
  time: { unit: "s", tex: "\\mathrm{s}", label: "time" },
  /** Transconductance efficiency gm/ID. */
  inverseVoltageEfficiency: { unit: "S/A", tex: "\\mathrm{S/A}", label: "transconductance efficiency" },
  /** Drain current per unit width, the gm/ID method's current density. */
  currentPerWidth: { unit: "A/m", tex: "\\mathrm{A/m}", label: "current per width" },
  /** Gate capacitance per unit width. */
  capacitancePerWidth: { unit: "F/m", tex: "\\mathrm{F/m}", label: "capacitance per width" },
  frequency: { unit: "Hz", tex: "\\mathrm{Hz}", label: "frequency" },
  dimensionless: { unit: "", tex: "", label: "dimensionless ratio" },
  /** A ratio read and shown in per cent (tolerances, spreads, bands): 0.05 is "5 %". */
  fraction: { unit: "", tex: "\\%", label: "fraction" },
  /** A number of things (cases, corners, iterations): shown without decimals when whole. */
  count: { unit: "", tex: "", label: "count" },
} as const;

export type Dimension = keyof typeof dimensions;

declare const dimensionBrand: unique symbol;

/** A number in SI units, branded with its dimension. */
export type Quantity<D extends Dimension> = number & { readonly [dimensionBrand]: D };

export type Volts = Quantity<"voltage">;
export type Amperes = Quantity<"current">;
export type Ohms = Quantity<"resistance">;
export type Siemens = Quantity<"conductance">;
export type AmperesPerVoltSquared = Quantity<"transconductanceParameter">;
export type PerVolt = Quantity<"inverseVoltage">;
export type SqrtVolts = Quantity<"sqrtVoltage">;
export type VoltsPerKelvin = Quantity<"voltagePerKelvin">;
export type Meters = Quantity<"length">;
export type VoltMeters = Quantity<"voltageLength">;
export type SquareMeters = Quantity<"area">;
export type VoltsPerSecond = Quantity<"slewRate">;
export type VoltsPerMeter = Quantity<"electricField">;
export type Kelvin = Quantity<"temperature">;
export type Watts = Quantity<"power">;
export type KelvinPerWatt = Quantity<"thermalResistance">;
export type Farads = Quantity<"capacitance">;
export type FaradsPerSquareMeter = Quantity<"capacitancePerArea">;
export type Mobility = Quantity<"mobility">;
export type Seconds = Quantity<"time">;
export type SiemensPerAmpere = Quantity<"inverseVoltageEfficiency">;
export type Ratio = Quantity<"dimensionless">;
export type AmperesPerMeter = Quantity<"currentPerWidth">;
export type FaradsPerMeter = Quantity<"capacitancePerWidth">;
export type Hertz = Quantity<"frequency">;
export type Count = Quantity<"count">;
export type Fraction = Quantity<"fraction">;

/** Brand a plain SI number; the caller vouches for the unit. */
export const volts = (v: number) => v as Volts;
export const amperes = (v: number) => v as Amperes;
export const ohms = (v: number) => v as Ohms;
export const siemens = (v: number) => v as Siemens;
export const amperesPerVoltSquared = (v: number) => v as AmperesPerVoltSquared;
export const perVolt = (v: number) => v as PerVolt;
export const sqrtVolts = (v: number) => v as SqrtVolts;
export const voltsPerKelvin = (v: number) => v as VoltsPerKelvin;
export const meters = (v: number) => v as Meters;
export const voltMeters = (v: number) => v as VoltMeters;
export const voltsPerMeter = (v: number) => v as VoltsPerMeter;
export const kelvin = (v: number) => v as Kelvin;
export const watts = (v: number) => v as Watts;
export const farads = (v: number) => v as Farads;
export const seconds = (v: number) => v as Seconds;
export const hertz = (v: number) => v as Hertz;
export const faradsPerMeter = (v: number) => v as FaradsPerMeter;
export const faradsPerSquareMeter = (v: number) => v as FaradsPerSquareMeter;
export const squareMeters = (v: number) => v as SquareMeters;
export const ratio = (v: number) => v as Ratio;

/** Brand by dimension name, for code that is generic over dimensions. */
export function quantity<D extends Dimension>(value: number, _dimension: D): Quantity<D> {
  return value as Quantity<D>;
}

/** Degrees Celsius to kelvin (exact offset, ITS-90 / SI brochure). */
export const celsius = (c: number) => (c + 273.15) as Kelvin;

/** Physical constants, CODATA 2018 exact values (SI 2019 redefinition). */
export const constants = {
  boltzmann: 1.380649e-23, // J/K
  elementaryCharge: 1.602176634e-19, // C
} as const;

/** Thermal voltage kT/q. */
export function thermalVoltage(t: Kelvin): Volts {
  return ((constants.boltzmann * t) / constants.elementaryCharge) as Volts;
}

/** "a" or "an" before a dimension's label. */
export const dimensionArticle = (label: string): string => (/^[aeiou]/i.test(label) ? "an" : "a");

/** "a current in A", "a dimensionless ratio (a plain number)". */
export function describeDimension(dim: Dimension): string {
  const d = dimensions[dim];
  if (dim === "fraction") return `a fraction (in %, e.g. "5 %", or a plain number, 0.05)`;
  return d.unit === "" ? `${dimensionArticle(d.label)} ${d.label} (a plain number)` : `${dimensionArticle(d.label)} ${d.label} in ${d.unit}`;
}
