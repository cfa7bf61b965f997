/**
 * Device capacitances at an operating point, each a recorded catalog step
 * (lib/formulas/capacitance.catalog.ts):
 *
 * - Level 1 card with a `capacitance` block: Meyer's gate capacitances with the
 *   overlaps, region by region as SPICE evaluates them (accumulation,
 *   depletion, the smoothed weak-inversion band −φF < VOV ≤ 0, triode,
 *   saturation), and the drain and source junction capacitances from CJ, MJ,
 *   PB, CJSW, MJSW, FC and AD, AS, PD, PS. Agrees with ngspice 39 Level 1's
 *   reported @m[cgs], @m[cgd], @m[cgb], @m[cbd], @m[cbs] to rounding
 *   (test/capacitance-ngspice.test.ts) when the card has no LD (Leff = L).
 * - Discrete part with `datasheetCapacitances`: Cgs = Ciss − Crss, Cgd = Crss,
 *   Cds = Coss − Crss, taken as constant at the datasheet's VDS (an assumption
 *   the record states; Crss and Coss fall as VDS rises).
 *
 * Failure mode: a card with neither block, or a block with a bad field, throws
 * InputError naming the parameter and where it is usually found. Not on a hot
 * path: one call per analysis.
 */
import type { Formula } from "../formulas/define.js";
import * as cf from "../formulas/capacitance.formulas.js";
import { InputError } from "../errors.js";
import type { Farads, Meters } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { defaultPhi, type DeviceCard } from "./card.js";
import { checkDiffusionGeometry, checkTableCapacitances, junctionDefaults, type DiffusionGeometry } from "./capacitance-card.js";
import type { OperatingPoint } from "./drain-current.js";

/** Terminal capacitances of one device at its operating point (physical drain and source). */
export interface DeviceCapacitances {
  readonly cgs: Farads;
  readonly cgd: Farads;
  readonly cgb: Farads;
  readonly cdb: Farads;
  readonly csb: Farads;
  /** Drain-source capacitance: a discrete part's Coss − Crss; 0 for a Level 1 card. */
  readonly cds: Farads;
  readonly from: "level1-meyer" | "datasheet" | "characterisation-table";
  /** Diffusion geometry used for the junctions (Level 1 only). */
  readonly geometry?: DiffusionGeometry;
}

/** Permittivity of SiO2 as ngspice takes it: 3.9 × 8.854214871e-12 F/m. */
export const oxidePermittivity = 3.9 * 8.854214871e-12;

/** Evaluate a catalog formula with named arguments, recording it when `rec` is given. */
export function evaluateFormula(f: Formula, args: Readonly<Record<string, number>>, rec?: Derivation, because?: string): number {
  const vals = f.vars.map((v) => {
    const x = args[v];
    if (x === undefined) throw new Error(`internal: ${f.id} needs ${v}`);
    return x;
  });
  const r = f.fn(...vals);
  rec?.step(f, vals, r, because);
  return r;
}

export const missingCapacitanceHelp =
  "capacitance data: a model card's `capacitance` block (TOX, and CGSO, CGDO, CGBO, CJ, MJ, PB, CJSW, MJSW from the foundry's or vendor's SPICE model card) or a discrete part's `datasheetCapacitances` (Ciss, Crss, Coss at the stated VDS, from the datasheet's capacitance table), or a foundry device's `tableCapacitances` (Cgs, Cgd, Cgg per width from a characterisation table, `tableCapacitances(sized, table)`)";

/** Whether a card carries any capacitance data. */
export const hasCapacitanceData = (card: DeviceCard): boolean => card.capacitance !== undefined || card.datasheetCapacitances !== undefined || card.tableCapacitances !== undefined;

/**
 * Capacitances of one device at its operating point. `op` is the operating
 * point from the device model (device polarity, source/drain swap flagged).
 */
export function deviceCapacitances(
  dev: { readonly card: DeviceCard; readonly w: Meters; readonly l: Meters; readonly diffusion?: DiffusionGeometry },
  op: OperatingPoint,
  origin = "device",
  rec?: Derivation,
): DeviceCapacitances {
  const card = dev.card;
  if (card.capacitance) return level1(dev, op, origin, rec);
  if (card.datasheetCapacitances) return fromDatasheet(card, op, rec);
  if (card.tableCapacitances) return fromTable(dev, origin, rec);
  throw new InputError(undefined, missingCapacitanceHelp, `${origin}.card${card.name ? ` "${card.name}"` : ""}: capacitance`, "invalid-design");
}

function fromTable(dev: { readonly card: DeviceCard; readonly w: Meters }, origin: string, rec?: Derivation): DeviceCapacitances {
  const t = checkTableCapacitances(dev.card.tableCapacitances!, (f) => `${origin}.card.${f}`);
  const from = `card ${dev.card.name}: characterisation table ${t.table.slice(0, 12)}, ${t.at}`;
  if (rec) {
    rec.input("Cgs/W", t.cgsPerWidth, "capacitancePerWidth", from);
    rec.input("Cgd/W", t.cgdPerWidth, "capacitancePerWidth", from);
    rec.input("Cgg/W", t.cggPerWidth, "capacitancePerWidth", from);
    rec.cite(`characterisation table ${t.table} (the simulator's BSIM4 capacitances of the foundry device)`);
    rec.assume(
      `Gate capacitances per width from the characterisation table at the operating point it was read at (${t.at}), scaled by W; the junction capacitances (Cdb, Csb) are not in the table and are taken as 0: add the drain junction to the load capacitance where it matters.`,
    );
  }
  const W = dev.w;
  let cgs: number;
  let cgd: number;
  const o = t.overlap;
  if (o) {
    rec?.note("Overlap capacitances", `The table holds the simulator's intrinsic capacitances; the overlaps come from the model card (${o.source}) at |VGS| = ${fmt(o.vgs)} V, |VGD| = ${fmt(o.vgs - o.vds)} V.`);
    const side = (cgxo: number, cgxl: number, ck: number, vgx: number, name: string) => {
      if (rec) {
        rec.input(`${name}O`, cgxo, "capacitancePerWidth", o.source);
        rec.input(`${name}L`, cgxl, "capacitancePerWidth", o.source);
      }
      return vgx >= 0 || cgxl === 0
        ? evaluateFormula(cf.overlapAccumulated, { CGXO: cgxo, CGXL: cgxl }, rec, `${name}: the overlapped diffusion accumulated`)
        : evaluateFormula(cf.overlapDepleted, { CGXO: cgxo, CGXL: cgxl, Vgx: vgx, CKAPPA: ck }, rec, `${name}: the overlapped diffusion depleted`);
    };
    const covS = side(o.cgso, o.cgsl ?? 0, o.ckappas ?? 0.6, o.vgs, "CGS");
    const covD = side(o.cgdo, o.cgdl ?? 0, o.ckappad ?? 0.6, o.vgs - o.vds, "CGD");
    cgs = evaluateFormula(cf.tableGateSourceOverlap, { CgsW: t.cgsPerWidth, CovW: covS, W }, rec);
    cgd = evaluateFormula(cf.tableGateDrainOverlap, { CgdW: t.cgdPerWidth, CovW: covD, W }, rec);
  } else {
    rec?.find("caution", "The table's capacitances are the simulator's intrinsic ones, without the overlaps: give the model card's overlap parameters (tableCapacitances(sized, overlap)), or the gate-drain capacitance and the Miller effect are underestimated.");
    cgs = evaluateFormula(cf.tableGateSource, { CgsW: t.cgsPerWidth, W }, rec);
    cgd = evaluateFormula(cf.tableGateDrain, { CgdW: t.cgdPerWidth, W }, rec);
  }
  const cgb = evaluateFormula(cf.tableGateBody, { CggW: t.cggPerWidth, CgsW: t.cgsPerWidth, CgdW: t.cgdPerWidth, W }, rec);
  const z = 0 as Farads;
  return { cgs: cgs as Farads, cgd: cgd as Farads, cgb: cgb as Farads, cdb: z, csb: z, cds: z, from: "characterisation-table" };
}

function fromDatasheet(card: DeviceCard, op: OperatingPoint, rec?: Derivation): DeviceCapacitances {
  const d = card.datasheetCapacitances!;
  if (rec) {
    rec.input("Ciss", d.ciss, "capacitance", `card ${card.name}: datasheet at VDS = ${d.vds} V`);
    rec.input("Crss", d.crss, "capacitance", `card ${card.name}: datasheet at VDS = ${d.vds} V`);
    rec.input("Coss", d.coss, "capacitance", `card ${card.name}: datasheet at VDS = ${d.vds} V`);
    rec.assume(
      `Datasheet capacitances taken as constant at their test condition VDS = ${d.vds} V; the stage runs at |VDS| = ${fmt(Math.abs(op.vdsDevice))} V. Crss and Coss are junction-like and grow as VDS falls (roughly ∝ (1 + VDS/φ)^−m), so below the test VDS the real Cgd and Cds are larger and the upper corner lower.`,
    );
  }
  const cgs = evaluateFormula(cf.datasheetGateSource, { Ciss: d.ciss, Crss: d.crss }, rec);
  const cgd = evaluateFormula(cf.datasheetGateDrain, { Crss: d.crss }, rec);
  const cds = evaluateFormula(cf.datasheetDrainSource, { Coss: d.coss, Crss: d.crss }, rec);
  if (Math.abs(op.vdsDevice) < 0.5 * d.vds)
    rec?.find("caution", `The stage's |VDS| = ${fmt(Math.abs(op.vdsDevice))} V is well below the datasheet's ${d.vds} V: Cgd and Cds are underestimated, so the upper corner is optimistic.`);
  const z = 0 as Farads;
  return { cgs: cgs as Farads, cgd: cgd as Farads, cgb: z, cdb: z, csb: z, cds: cds as Farads, from: "datasheet" };
}

function level1(
  dev: { readonly card: DeviceCard; readonly w: Meters; readonly l: Meters; readonly diffusion?: DiffusionGeometry },
  op: OperatingPoint,
  origin: string,
  rec?: Derivation,
): DeviceCapacitances {
  const card = dev.card;
  const c = card.capacitance!;
  const W = dev.w;
  const L = dev.l;
  const CGSO = c.cgso ?? 0;
  const CGDO = c.cgdo ?? 0;
  const CGBO = c.cgbo ?? 0;
  const phi = card.phi ?? defaultPhi;
  if (rec) {
    const from = `card ${card.name}`;
    rec.input("tox", c.tox, "length", from);
    rec.input("CGSO", CGSO, "capacitancePerWidth", c.cgso === undefined ? `${from} (omitted: SPICE default 0)` : from);
    rec.input("CGDO", CGDO, "capacitancePerWidth", c.cgdo === undefined ? `${from} (omitted: SPICE default 0)` : from);
    rec.input("CGBO", CGBO, "capacitancePerWidth", c.cgbo === undefined ? `${from} (omitted: SPICE default 0)` : from);
    rec.assume("Meyer gate capacitances with constant overlaps, as SPICE Level 1 (no charge conservation; no LD, so the effective length is the drawn L).");
  }
  const Cox = evaluateFormula(cf.oxideCapacitance, { epsox: oxidePermittivity, tox: c.tox }, rec);
  const Cch = evaluateFormula(cf.channelCapacitance, { Cox, W, L }, rec);
  // Meyer in the device's own orientation (after a source/drain swap), then mapped back.
  const VOV = op.vov;
  const VDS = op.vdsDevice;
  let cgsD: number;
  let cgdD: number;
  let cgb: number;
  if (VOV <= -phi) {
    rec?.note("Gate capacitance", "VOV ≤ −2φF: the surface is accumulated, the gate couples to the body.");
    cgb = evaluateFormula(cf.gateBodyAccumulation, { Cch, CGBO, L }, rec);
    cgsD = evaluateFormula(cf.gateSourceOverlap, { CGSO, W }, rec);
    cgdD = evaluateFormula(cf.gateDrainOverlap, { CGDO, W }, rec);
  } else if (VOV <= 0) {
    rec?.note("Gate capacitance", "−2φF < VOV ≤ 0: depletion; the gate-body coupling falls linearly towards threshold and, within φF of it, gate-source coupling builds up.");
    cgb = evaluateFormula(cf.gateBodyDepletion, { VOV, phi, Cch, CGBO, L }, rec);
    cgsD = VOV <= -phi / 2 ? evaluateFormula(cf.gateSourceOverlap, { CGSO, W }, rec) : evaluateFormula(cf.gateSourceWeak, { VOV, phi, Cch, CGSO, W }, rec);
    cgdD = evaluateFormula(cf.gateDrainOverlap, { CGDO, W }, rec);
  } else if (VDS >= VOV) {
    rec?.note("Gate capacitance", "Saturation: the channel is pinched off at the drain, so the gate's channel charge belongs to the source.");
    cgsD = evaluateFormula(cf.gateSourceSaturation, { Cch, CGSO, W }, rec);
    cgdD = evaluateFormula(cf.gateDrainOverlap, { CGDO, W }, rec);
    cgb = evaluateFormula(cf.gateBodyOverlap, { CGBO, L }, rec);
  } else {
    rec?.note("Gate capacitance", "Triode: the channel charge divides between source and drain.");
    cgsD = evaluateFormula(cf.gateSourceTriode, { Cch, VOV, VDS, CGSO, W }, rec);
    cgdD = evaluateFormula(cf.gateDrainTriode, { Cch, VOV, VDS, CGDO, W }, rec);
    cgb = evaluateFormula(cf.gateBodyOverlap, { CGBO, L }, rec);
  }
  // Overlaps belong to the physical terminals; in reverse mode swap the intrinsic parts only.
  let cgs = cgsD;
  let cgd = cgdD;
  if (op.reversed) {
    cgs = cgdD - CGDO * W + CGSO * W;
    cgd = cgsD - CGSO * W + CGDO * W;
    rec?.note("Reverse mode", "VDS < 0: source and drain swap roles, so the intrinsic parts of Cgs and Cgd swap (overlaps stay with their terminals).");
  }
  const geometry = diffusionGeometry(dev, origin, rec);
  // Body-junction voltages of the physical drain and source, device polarity.
  const vbsDev = -op.vsbDevice;
  const vbdDev = vbsDev - VDS;
  const vbs = op.reversed ? vbdDev : vbsDev;
  const vbd = op.reversed ? vbsDev : vbdDev;
  const CJ = c.cj ?? 0;
  const CJSW = c.cjsw ?? 0;
  const MJ = c.mj ?? junctionDefaults.mj;
  const MJSW = c.mjsw ?? junctionDefaults.mjsw;
  const PB = c.pb ?? junctionDefaults.pb;
  const FC = c.fc ?? junctionDefaults.fc;
  if (rec) {
    const from = `card ${card.name}`;
    rec.input("CJ", CJ, "capacitancePerArea", c.cj === undefined ? `${from} (omitted: SPICE default 0)` : from);
    rec.input("CJSW", CJSW, "capacitancePerWidth", c.cjsw === undefined ? `${from} (omitted: SPICE default 0)` : from);
    rec.input("MJ", MJ, "dimensionless", c.mj === undefined ? `${from} (omitted: SPICE default 0.5)` : from);
    rec.input("MJSW", MJSW, "dimensionless", c.mjsw === undefined ? `${from} (omitted: ngspice default 0.5)` : from);
    rec.input("PB", PB, "voltage", c.pb === undefined ? `${from} (omitted: SPICE default 0.8 V)` : from);
    rec.input("FC", FC, "dimensionless", c.fc === undefined ? `${from} (omitted: SPICE default 0.5)` : from);
  }
  const cdb =
    vbd < FC * PB
      ? evaluateFormula(cf.drainJunction, { CJ, AD: geometry.ad, VBD: vbd, PB, MJ, CJSW, PerD: geometry.pd, MJSW }, rec)
      : evaluateFormula(cf.drainJunctionForward, { CJ, AD: geometry.ad, FC, MJ, VBD: vbd, PB, CJSW, PerD: geometry.pd, MJSW }, rec, "the drain junction is forward biased beyond FC·PB");
  const csb =
    vbs < FC * PB
      ? evaluateFormula(cf.sourceJunction, { CJ, AS: geometry.as, VBS: vbs, PB, MJ, CJSW, PerS: geometry.ps, MJSW }, rec)
      : evaluateFormula(cf.sourceJunctionForward, { CJ, AS: geometry.as, FC, MJ, VBS: vbs, PB, CJSW, PerS: geometry.ps, MJSW }, rec, "the source junction is forward biased beyond FC·PB");
  return { cgs: cgs as Farads, cgd: cgd as Farads, cgb: cgb as Farads, cdb: cdb as Farads, csb: csb as Farads, cds: 0 as Farads, from: "level1-meyer", geometry };
}

/** AD, AS, PD, PS: stated on the device, else from the card's diffusion length, else 0 (SPICE's default). */
export function diffusionGeometry(
  dev: { readonly card: DeviceCard; readonly w: Meters; readonly diffusion?: DiffusionGeometry },
  origin = "device",
  rec?: Derivation,
): DiffusionGeometry {
  if (dev.diffusion) {
    const g = checkDiffusionGeometry(dev.diffusion, `${origin}.diffusion`);
    if (rec) {
      rec.input("AD", g.ad, "area", `${origin}.diffusion.ad`);
      rec.input("AS", g.as, "area", `${origin}.diffusion.as`);
      rec.input("PD", g.pd, "length", `${origin}.diffusion.pd`);
      rec.input("PS", g.ps, "length", `${origin}.diffusion.ps`);
    }
    return g;
  }
  const Ldif = dev.card.capacitance?.diffusionLength;
  if (Ldif !== undefined) {
    rec?.input("Ldif", Ldif, "length", `card ${dev.card.name}: capacitance.diffusionLength`);
    rec?.note("Diffusion geometry", "The device states no AD/AS/PD/PS: each diffusion is taken as a W × Ldif rectangle.");
    const W = dev.w;
    return {
      ad: evaluateFormula(cf.drainAreaDefault, { W, Ldif }, rec),
      as: evaluateFormula(cf.sourceAreaDefault, { W, Ldif }, rec),
      pd: evaluateFormula(cf.drainPerimeterDefault, { W, Ldif }, rec),
      ps: evaluateFormula(cf.sourcePerimeterDefault, { W, Ldif }, rec),
    } as DiffusionGeometry;
  }
  if (dev.card.capacitance && ((dev.card.capacitance.cj ?? 0) > 0 || (dev.card.capacitance.cjsw ?? 0) > 0))
    rec?.find("caution", "Junction capacitances are 0: the device states no AD/AS/PD/PS and the card no diffusionLength (SPICE's default areas are 0). State them for a realistic output pole.");
  return { ad: 0, as: 0, pd: 0, ps: 0 } as unknown as DiffusionGeometry;
}

const fmt = (x: number) => String(+x.toPrecision(4));

