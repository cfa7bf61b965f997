/**
 * Inverse design for models without a closed form (square law with mobility
 * degradation, EKV): the gate voltage for a target current, the width for a
 * target current at a gate voltage, and sizing by the gm/ID method.
 *
 * Method: the channel current rises monotonically with VGS, so VGS is found by
 * regula falsi (Illinois) on ln|ID| − ln(target) over a bracket widened until it
 * changes sign; tolerance 1e-12 V or 1e-12 relative; ConvergenceError after 200
 * steps. All three models carry W only in the current factor k'·W, so ID ∝ W at a
 * fixed bias and the width follows by proportion. gm/ID falls monotonically with
 * VGS in every model here, so the gate voltage for a gm/ID target is found the
 * same way. Not on a hot path: each call allocates a few objects.
 */
import { ConvergenceError, InfeasibleError, InputError, requireFinite, requirePositive } from "../errors.js";
import type { Derivation } from "../record/derivation.js";
import type { Amperes, Meters, SiemensPerAmpere, Volts } from "../quantity.js";
import { checkDevice, device, modelOf, polaritySign, type Device, type DeviceCard } from "./card.js";
import { deviceCurrent, operatingPoint } from "./drain-current.js";
import type { GateDrive, GateDriveOptions } from "./inverse.js";
import { derivativeStep } from "./model.js";

const f = (x: number, unit: string) => `${+x.toPrecision(4)} ${unit}`;
/** VDS (device polarity) at which "saturation, no VDS given" is evaluated, with λ and σ set to 0 so it does not matter. */
const farSaturation = 10;

/** The device as evaluated when no VDS is given: λ and σ dropped, so the current no longer depends on VDS beyond VDsat. */
function saturatedView(dev: Device): Device {
  const { lambda: _l, sigma: _s, ...rest } = dev.card;
  return device(rest as DeviceCard, dev.w, dev.l, "saturated view");
}

/** Solve g(x) = 0 for an increasing g on a bracket widened from [lo, hi] by at most 31 V either way (far beyond any gate-oxide rating). */
function solveIncreasing(g: (x: number) => number, lo: number, hi: number, tol: number, what: string, origin: string): number {
  let glo = g(lo);
  let ghi = g(hi);
  for (let k = 0; glo > 0; k++) {
    lo -= 2 ** k;
    glo = g(lo);
    if (k >= 4) throw new InfeasibleError(`${what}: no gate voltage down to ${f(lo, "V")} brings the current that low`, origin);
  }
  for (let k = 0; ghi < 0; k++) {
    hi += 2 ** k;
    ghi = g(hi);
    if (k >= 4) throw new InfeasibleError(`${what}: no gate voltage up to ${f(hi, "V")} reaches it; widen the device or lower the target`, origin);
  }
  let side = 0;
  for (let it = 0; it < 200; it++) {
    let x = (lo * ghi - hi * glo) / (ghi - glo);
    if (!(x > lo && x < hi)) x = 0.5 * (lo + hi);
    const gx = g(x);
    if (gx !== gx) throw new ConvergenceError(`${what}: the residual is not a number at VGS = ${x} V`, origin);
    if (gx > 0) {
      hi = x;
      ghi = gx;
      if (side === 1) glo /= 2;
      side = 1;
    } else {
      lo = x;
      glo = gx;
      if (side === -1) ghi /= 2;
      side = -1;
    }
    if (gx === 0 || hi - lo <= tol * Math.max(1, Math.abs(x))) return x;
  }
  throw new ConvergenceError(`${what}: did not converge in 200 steps (bracket ${lo}…${hi} V)`, origin);
}

function deviceVdsOf(dev: Device, vds: number | undefined, origin: string): number | undefined {
  if (vds === undefined) return undefined;
  const d = polaritySign(dev.card) * requireFinite(vds, origin, "a finite VDS in V");
  if (d < 0) throw new InputError(vds, dev.card.polarity === "nmos" ? "VDS ≥ 0 V for an NMOS in saturation" : "VDS ≤ 0 V for a PMOS in saturation (VSD ≥ 0)", origin);
  return d;
}

/**
 * The gate drive (device polarity, magnitude) at which the device's model carries `id` at the given
 * VDS and VSB (device polarity), whatever the region: plain inversion, no region check. Throws
 * InfeasibleError when no gate voltage within 31 V of Vt0 reaches it, ConvergenceError as solveIncreasing.
 */
export function gateDriveForCurrent(dev: Device, id: number, vds: number, vsb: number, origin = "gateDriveForCurrent"): number {
  const vt0 = polaritySign(dev.card) * dev.card.vt0;
  return solveIncreasing((x) => Math.log(deviceCurrent(dev, x, vds, vsb)) - Math.log(id), vt0 - 0.5, vt0 + 1, 1e-12, `|ID| = ${f(id, "A")}`, origin);
}

/** Gate-source voltage (SPICE sign) for |ID| = `id` in saturation, by numeric inversion of the device's model. */
export function gateVoltageForModel(dev: Device, id: Amperes, opts: GateDriveOptions = {}, rec?: Derivation): GateDrive {
  checkDevice(dev, "gateVoltageFor.dev");
  const i = requirePositive(id, "gateVoltageFor.id", "a drain-current magnitude > 0 in A (for a PMOS give |ID|)");
  const s = polaritySign(dev.card);
  const b = opts.vsb === undefined ? 0 : s * requireFinite(opts.vsb, "gateVoltageFor.opts.vsb", "a finite VSB in V");
  const d = deviceVdsOf(dev, opts.vds, "gateVoltageFor.opts.vds");
  const use = d === undefined ? saturatedView(dev) : dev;
  const vds = d ?? farSaturation;
  const g = gateDriveForCurrent(use, i, vds, b, "gateVoltageFor");
  rec?.note(
    "Gate voltage by numeric inversion",
    `The ${modelOf(dev.card)} model has no closed-form inverse: ${s < 0 ? "VSG" : "VGS"} = ${f(g, "V")} gives |ID| = ${f(i, "A")} (regula falsi on ln ID, tolerance 1e-12 V)${d === undefined ? "; no VDS given, so λ·VDS and σ·VDS are taken as 0 and the device as saturated" : ""}. The model's operating point there:`,
  );
  const op = operatingPoint(use, { vgs: (s * g) as Volts, vds: (s * vds) as Volts, vsb: (s * b) as Volts }, {}, rec);
  if (d !== undefined && op.region !== "saturation")
    throw new InfeasibleError(
      `|ID| = ${f(i, "A")} needs ${s < 0 ? "VSG" : "VGS"} = ${f(g, "V")}, where VDsat = ${f(op.vdsat, "V")} exceeds the VDS = ${f(d, "V")} available: the device would be in triode. Widen the device, lower the current, or give it more VDS.`,
      "gateVoltageFor",
    );
  if (opts.maxGateDrive !== undefined) {
    requirePositive(opts.maxGateDrive, "gateVoltageFor.opts.maxGateDrive", "a gate-drive magnitude |VGS| > 0 in V");
    rec?.check("Gate drive within the limit", g, "voltage", { max: opts.maxGateDrive });
    if (g > opts.maxGateDrive)
      throw new InfeasibleError(`|ID| = ${f(i, "A")} needs ${s < 0 ? "VSG" : "VGS"} = ${f(g, "V")}, above the gate-drive limit ${f(opts.maxGateDrive, "V")}. Widen the device or lower the current.`, "gateVoltageFor");
  }
  return { vgs: (s * g) as Volts, vov: op.vov, vt: op.vt };
}

/** Width that carries |ID| = `id` at gate-source voltage `vgs` (SPICE signs, body at `opts.vsb`), L held: ID ∝ W in every model here. */
export function widthForCurrent(dev: Device, id: Amperes, vgs: Volts, opts: GateDriveOptions = {}, rec?: Derivation): Meters {
  checkDevice(dev, "widthForCurrent.dev");
  const i = requirePositive(id, "widthForCurrent.id", "a drain-current magnitude > 0 in A");
  const s = polaritySign(dev.card);
  const g = s * requireFinite(vgs, "widthForCurrent.vgs", "a finite VGS in V");
  const b = opts.vsb === undefined ? 0 : s * requireFinite(opts.vsb, "widthForCurrent.opts.vsb", "a finite VSB in V");
  const d = deviceVdsOf(dev, opts.vds, "widthForCurrent.opts.vds");
  const use = d === undefined ? saturatedView(dev) : dev;
  const i0 = deviceCurrent(use, g, d ?? farSaturation, b);
  if (!(i0 > 0)) throw new InfeasibleError(`no width carries current at ${s < 0 ? "VSG" : "VGS"} = ${f(g, "V")}: the device is off there`, "widthForCurrent");
  const w = ((dev.w * i) / i0) as Meters;
  rec?.note("Width by proportion", `ID ∝ W at a fixed bias: W = ${f(dev.w, "m")} × ${f(i, "A")} / ${f(i0, "A")} = ${f(w, "m")} (L = ${f(dev.l, "m")} held).`);
  return w;
}

export interface EfficiencySizing {
  /** Gate-source voltage (SPICE sign) that gives the gm/ID target. */
  readonly vgs: Volts;
  /** Width that then carries the target current, L held. */
  readonly w: Meters;
}

/**
 * Sizing by the gm/ID method: the gate voltage where gm/ID equals `gmOverId`
 * (gm/ID is independent of W), then the width that carries |ID| = `id` there.
 * VDS in `opts.vds` (SPICE sign) or, when absent, saturation with λ = σ = 0.
 */
export function sizeByGmOverId(dev: Device, id: Amperes, gmOverId: SiemensPerAmpere, opts: GateDriveOptions = {}, rec?: Derivation): EfficiencySizing {
  checkDevice(dev, "sizeByGmOverId.dev");
  const target = requirePositive(gmOverId, "sizeByGmOverId.gmOverId", "a gm/ID target > 0 in S/A");
  const s = polaritySign(dev.card);
  const b = opts.vsb === undefined ? 0 : s * requireFinite(opts.vsb, "sizeByGmOverId.opts.vsb", "a finite VSB in V");
  const d = deviceVdsOf(dev, opts.vds, "sizeByGmOverId.opts.vds");
  const use = d === undefined ? saturatedView(dev) : dev;
  const vds = d ?? farSaturation;
  const h = derivativeStep;
  const eff = (x: number) => {
    const i = deviceCurrent(use, x, vds, b);
    return (deviceCurrent(use, x + h, vds, b) - deviceCurrent(use, x - h, vds, b)) / (2 * h * i);
  };
  const vt0 = s * dev.card.vt0;
  // gm/ID falls with VGS: solve −(gm/ID − target) = 0, increasing.
  const g = solveIncreasing((x) => target - eff(x), vt0 - 0.3, vt0 + 1, 1e-12, `gm/ID = ${f(target, "S/A")}`, "sizeByGmOverId");
  rec?.note("gm/ID method", `gm/ID = ${f(target, "S/A")} at ${s < 0 ? "VSG" : "VGS"} = ${f(g, "V")} (regula falsi; gm by central difference, step 10 µV).`);
  const w = widthForCurrent(dev, id, (s * g) as Volts, opts, rec);
  return { vgs: (s * g) as Volts, w };
}
