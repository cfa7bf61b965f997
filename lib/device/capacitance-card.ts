/**
 * Capacitance data of a device, as two blocks a card may carry: the process
 * parameters of a SPICE Level 1 model card (TOX, overlaps, junctions) and the
 * capacitances a discrete part's datasheet states (Ciss, Crss, Coss at one VDS).
 * Plain JSON data in SI units; validated here, computed in ./capacitance.ts.
 */
import { InputError, requireFinite, requireNonNegative, requirePositive } from "../errors.js";
import type { Farads, FaradsPerMeter, FaradsPerSquareMeter, Meters, Ratio, SquareMeters, Volts } from "../quantity.js";

/** SPICE Level 1 capacitance parameters (names as in the model card, lower case). */
export interface ProcessCapacitances {
  /** Gate oxide thickness TOX; required for the Meyer gate capacitances. */
  readonly tox: Meters;
  /** Overlap capacitances per metre of width (CGSO, CGDO) and of length (CGBO); 0 when omitted (SPICE default). */
  readonly cgso?: FaradsPerMeter;
  readonly cgdo?: FaradsPerMeter;
  readonly cgbo?: FaradsPerMeter;
  /** Zero-bias bottom junction capacitance per area CJ; 0 when omitted. */
  readonly cj?: FaradsPerSquareMeter;
  /** Bottom grading coefficient MJ; 0.5 when omitted (SPICE default). */
  readonly mj?: Ratio;
  /** Junction built-in potential PB; 0.8 V when omitted (SPICE default). */
  readonly pb?: Volts;
  /** Zero-bias sidewall capacitance per metre of perimeter CJSW; 0 when omitted. */
  readonly cjsw?: FaradsPerMeter;
  /** Sidewall grading coefficient MJSW; 0.5 when omitted (ngspice Level 1 default). */
  readonly mjsw?: Ratio;
  /** Forward-bias coefficient FC; 0.5 when omitted (SPICE default). */
  readonly fc?: Ratio;
  /**
   * Length of a drain or source diffusion, for the default geometry rule when a
   * device states no AD/AS/PD/PS: AD = AS = W·Ldif, PD = PS = 2·(W + Ldif).
   * Without it and without stated geometry the junction areas are 0, as in SPICE.
   */
  readonly diffusionLength?: Meters;
}

/** Datasheet capacitances of a discrete MOSFET, at the drain-source voltage the datasheet states them. */
export interface DatasheetCapacitances {
  readonly ciss: Farads;
  readonly crss: Farads;
  readonly coss: Farads;
  /** The VDS magnitude of the datasheet's test condition (e.g. 25 V). */
  readonly vds: Volts;
}

/**
 * A foundry device's small-signal capacitances per width, read from a characterisation table at the
 * operating point (`tableCapacitances` in lib/sizing/gm-id.ts): Cgs, Cgd and Cgg over W, with the table's
 * fingerprint and the bias they were read at. Junction capacitances are not in the table.
 */
export interface TableCapacitances {
  readonly cgsPerWidth: FaradsPerMeter;
  readonly cgdPerWidth: FaradsPerMeter;
  readonly cggPerWidth: FaradsPerMeter;
  /** Fingerprint of the characterisation table. */
  readonly table: string;
  /** Where in the table: model, L, |VGS|, |VDS|, |VSB|. */
  readonly at: string;
  /**
   * The model card's overlap parameters and the bias they apply at. The simulator's reported Cgs, Cgd, Cgg
   * (the table's) are the intrinsic ones; the overlaps come from the card (BSIM4 capMod 2).
   */
  readonly overlap?: OverlapParameters;
}

/** BSIM4 overlap parameters of one device (capMod 2), copied from the foundry's model card, with the bias. */
export interface OverlapParameters {
  readonly cgso: FaradsPerMeter;
  readonly cgdo: FaradsPerMeter;
  readonly cgsl?: FaradsPerMeter;
  readonly cgdl?: FaradsPerMeter;
  readonly ckappas?: Volts;
  readonly ckappad?: Volts;
  /** |VGS| and |VDS| at the operating point (device polarity). */
  readonly vgs: Volts;
  readonly vds: Volts;
  /** Where the values come from (the library and model). */
  readonly source: string;
}

/** Validate a table capacitance block: Cgs/W, Cgd/W ≥ 0, Cgg/W at least their sum, a fingerprint. */
export function checkTableCapacitances(c: TableCapacitances, at: (f: string) => string): TableCapacitances {
  if (!c || typeof c !== "object") throw new InputError(c, "table capacitances { cgsPerWidth, cgdPerWidth, cggPerWidth, table, at }", at("tableCapacitances"));
  requireNonNegative(c.cgsPerWidth, at("tableCapacitances.cgsPerWidth"), "Cgs/W ≥ 0 in F/m (characterisation table)");
  requireNonNegative(c.cgdPerWidth, at("tableCapacitances.cgdPerWidth"), "Cgd/W ≥ 0 in F/m (characterisation table)");
  requirePositive(c.cggPerWidth, at("tableCapacitances.cggPerWidth"), "Cgg/W > 0 in F/m (characterisation table)");
  if (c.cggPerWidth < (c.cgsPerWidth + c.cgdPerWidth) * (1 - 1e-9))
    throw new InputError(c.cggPerWidth, `Cgg/W at least Cgs/W + Cgd/W = ${c.cgsPerWidth + c.cgdPerWidth} F/m (Cgg = Cgs + Cgd + Cgb)`, at("tableCapacitances.cggPerWidth"));
  if (typeof c.table !== "string" || c.table === "") throw new InputError(c.table, "the characterisation table's fingerprint", at("tableCapacitances.table"));
  const o = c.overlap;
  if (o !== undefined) {
    for (const f of ["cgso", "cgdo", "cgsl", "cgdl"] as const) if (o[f] !== undefined || f === "cgso" || f === "cgdo") requireNonNegative(o[f]!, at(`tableCapacitances.overlap.${f}`), `${f.toUpperCase()} ≥ 0 in F/m (the foundry's model card)`);
    for (const f of ["ckappas", "ckappad"] as const) if (o[f] !== undefined) requirePositive(o[f]!, at(`tableCapacitances.overlap.${f}`), `${f.toUpperCase()} > 0 in V (the foundry's model card; BSIM4 default 0.6)`);
    requireFinite(o.vgs, at("tableCapacitances.overlap.vgs"), "|VGS| of the operating point in V");
    requireFinite(o.vds, at("tableCapacitances.overlap.vds"), "|VDS| of the operating point in V");
  }
  return c;
}

/** Drain and source diffusion geometry of one device (SPICE AD, AS, PD, PS). */
export interface DiffusionGeometry {
  readonly ad: SquareMeters;
  readonly as: SquareMeters;
  readonly pd: Meters;
  readonly ps: Meters;
}

/** SPICE defaults for omitted junction parameters. */
export const junctionDefaults = { mj: 0.5, pb: 0.8, mjsw: 0.5, fc: 0.5 } as const;

/** Validate a process capacitance block, naming the field. */
export function checkProcessCapacitances(c: ProcessCapacitances, at: (f: string) => string): ProcessCapacitances {
  if (!c || typeof c !== "object") throw new InputError(c, "a capacitance block { tox, cgso?, cgdo?, cgbo?, cj?, mj?, pb?, cjsw?, mjsw?, fc?, diffusionLength? }", at("capacitance"));
  requirePositive(c.tox, at("capacitance.tox"), "the gate oxide thickness TOX > 0 in m (found in the foundry's model card)");
  for (const f of ["cgso", "cgdo", "cgbo", "cjsw"] as const) if (c[f] !== undefined) requireNonNegative(c[f]!, at(`capacitance.${f}`), `${f.toUpperCase()} ≥ 0 in F/m`);
  if (c.cj !== undefined) requireNonNegative(c.cj, at("capacitance.cj"), "CJ ≥ 0 in F/m²");
  for (const f of ["mj", "mjsw"] as const)
    if (c[f] !== undefined && (requireFinite(c[f]!, at(`capacitance.${f}`)) <= 0 || c[f]! >= 1)) throw new InputError(c[f], `a grading coefficient ${f.toUpperCase()} with 0 < ${f.toUpperCase()} < 1`, at(`capacitance.${f}`));
  if (c.pb !== undefined) requirePositive(c.pb, at("capacitance.pb"), "a built-in potential PB > 0 in V");
  if (c.fc !== undefined && (requireFinite(c.fc, at("capacitance.fc")) < 0 || c.fc >= 1)) throw new InputError(c.fc, "a forward-bias coefficient FC with 0 ≤ FC < 1", at("capacitance.fc"));
  if (c.diffusionLength !== undefined) requirePositive(c.diffusionLength, at("capacitance.diffusionLength"), "a diffusion length > 0 in m");
  return c;
}

/** Validate a datasheet capacitance block: Ciss > Crss > 0, Coss ≥ Crss, VDS > 0. */
export function checkDatasheetCapacitances(c: DatasheetCapacitances, at: (f: string) => string): DatasheetCapacitances {
  if (!c || typeof c !== "object") throw new InputError(c, "datasheet capacitances { ciss, crss, coss, vds }", at("datasheetCapacitances"));
  requirePositive(c.crss, at("datasheetCapacitances.crss"), "the reverse transfer capacitance Crss > 0 in F (datasheet)");
  requirePositive(c.ciss, at("datasheetCapacitances.ciss"), "the input capacitance Ciss > 0 in F (datasheet)");
  requirePositive(c.coss, at("datasheetCapacitances.coss"), "the output capacitance Coss > 0 in F (datasheet)");
  requirePositive(c.vds, at("datasheetCapacitances.vds"), "the datasheet's test VDS > 0 in V (magnitude)");
  if (!(c.ciss > c.crss)) throw new InputError(c.ciss, `Ciss above Crss = ${c.crss} F (Ciss = Cgs + Cgd)`, at("datasheetCapacitances.ciss"));
  if (!(c.coss >= c.crss)) throw new InputError(c.coss, `Coss at least Crss = ${c.crss} F (Coss = Cds + Cgd)`, at("datasheetCapacitances.coss"));
  return c;
}

/** Validate a stated diffusion geometry. */
export function checkDiffusionGeometry(g: DiffusionGeometry, origin: string): DiffusionGeometry {
  if (!g || typeof g !== "object") throw new InputError(g, "a diffusion geometry { ad, as, pd, ps } in m² and m", origin);
  for (const f of ["ad", "as"] as const) requireNonNegative(g[f], `${origin}.${f}`, `${f.toUpperCase()} ≥ 0 in m²`);
  for (const f of ["pd", "ps"] as const) requireNonNegative(g[f], `${origin}.${f}`, `${f.toUpperCase()} ≥ 0 in m`);
  return g;
}
