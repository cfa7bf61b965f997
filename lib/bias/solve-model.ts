/**
 * Operating-point numerics of the canonical network (solve.ts) for device models
 * without a closed form (square law with mobility degradation, EKV): the channel
 * current comes from the device's own model (`deviceCurrent`).
 *
 * Method: the same monotone residual as solve.ts, f(ID) = ID − Ichannel(ID) for
 * resistor networks (increasing on [0, (VDR − VSR)/(RD + RS)]), Ichannel(VS) − ISS
 * for the current-fed network (decreasing), solved on a sign-changing bracket by
 * regula falsi with the Illinois modification, bisecting when a step stalls.
 * Tolerance as solve.ts: bracket or step below 1e-12 relative, or 1e-18 A / 1e-12 V
 * absolute; at most 200 iterations, else ConvergenceError naming the stage.
 * Allocation-free in the loop.
 */
import type { Device } from "../device/card.js";
import { deviceCurrent, operatingPoint } from "../device/drain-current.js";
import { ConvergenceError } from "../errors.js";
import type { Derivation } from "../record/derivation.js";
import type { BiasNetwork, NetworkSolution } from "./solve.js";

const maxIterations = 200;
const relTol = 1e-12;
const absTolCurrent = 1e-18;
const absTolVoltage = 1e-12;

const ich = (n: BiasNetwork, dev: Device, vg: number, vs: number, vd: number): number =>
  deviceCurrent(dev, vg - vs, vd - vs, n.bodyToRail ? vs - n.vsr : 0);

/** Solve the network with the device's model; fills and returns `out`. */
export function solveModelNetwork(n: BiasNetwork, dev: Device, out: NetworkSolution, origin: string, rec?: Derivation): NetworkSolution {
  rec?.note(
    "Method",
    `The ${dev.card.model === "ekv" ? "EKV" : "square-law-mobility"} model has no closed-form operating point: the ${n.iss > 0 ? "source voltage" : "drain current"} is solved on a sign-changing bracket by regula falsi (Illinois), bisecting when a step stalls; tolerance 1e-12 relative.`,
  );
  if (n.iss > 0) solveFed(n, dev, out, origin);
  else solveResistive(n, dev, out, origin);
  // Threshold and overdrive as the model reports them at the solution.
  const vsb = n.bodyToRail ? out.vs - n.vsr : 0;
  const op = operatingPoint(dev, { vgs: (s(dev) * (out.vg - out.vs)) as never, vds: (s(dev) * (out.vd - out.vs)) as never, vsb: (s(dev) * vsb) as never });
  out.vt = s(dev) * op.vt;
  out.vov = out.vg - out.vs - out.vt;
  rec?.note("Exact solution", `${n.iss > 0 ? "Source voltage" : "Drain current"} solved to ${+(n.iss > 0 ? out.vs : out.id).toPrecision(6)} ${n.iss > 0 ? "V" : "A"} in ${out.iterations} iterations (final bracket ${out.tolerance.toExponential(2)}).`);
  return out;
}

const s = (dev: Device) => (dev.card.polarity === "nmos" ? 1 : -1);

function solveResistive(n: BiasNetwork, dev: Device, out: NetworkSolution, origin: string): void {
  const rt = n.rd + n.rs;
  const node = (x: number) => {
    const vs = n.vsr + x * n.rs;
    const vd = n.vdr - x * n.rd;
    return { vs, vd, vg: n.gateToDrain ? vd : n.vg };
  };
  const f = (x: number): number => {
    const vs = n.vsr + x * n.rs;
    const vd = n.vdr - x * n.rd;
    return x - ich(n, dev, n.gateToDrain ? vd : n.vg, vs, vd);
  };
  if (rt === 0) {
    const vg = n.gateToDrain ? n.vdr : n.vg;
    set(out, ich(n, dev, vg, n.vsr, n.vdr), vg, n.vsr, n.vdr, "direct", 0, 0);
    return;
  }
  let lo = 0;
  let hi = (n.vdr - n.vsr) / rt;
  let flo = f(lo);
  let fhi = f(hi);
  if (flo >= 0) {
    const p = node(0);
    set(out, 0, p.vg, p.vs, p.vd, "bracketed-regula-falsi", 1, 0);
    return;
  }
  let side = 0;
  for (let it = 1; it <= maxIterations; it++) {
    let x = (lo * fhi - hi * flo) / (fhi - flo);
    if (!(x > lo && x < hi)) x = 0.5 * (lo + hi);
    const fx = f(x);
    if (fx !== fx) throw new ConvergenceError(`the residual is not a number at ID = ${x} A (check the network and card values)`, origin);
    if (fx > 0) {
      hi = x;
      fhi = fx;
      if (side === 1) flo /= 2;
      side = 1;
    } else {
      lo = x;
      flo = fx;
      if (side === -1) fhi /= 2;
      side = -1;
    }
    const tol = relTol * x + absTolCurrent;
    if (fx === 0 || hi - lo <= tol || Math.abs(fx) <= tol) {
      const p = node(x);
      set(out, x, p.vg, p.vs, p.vd, "bracketed-regula-falsi", it, hi - lo);
      return;
    }
  }
  throw new ConvergenceError(`operating point did not converge in ${maxIterations} iterations (bracket ${lo}…${hi} A)`, origin);
}

function solveFed(n: BiasNetwork, dev: Device, out: NetworkSolution, origin: string): void {
  const vd = n.vdr - n.iss * n.rd;
  const g = (vs: number) => ich(n, dev, n.vg, vs, vd) - n.iss;
  // At VS = VD the channel carries nothing, so g < 0 there; widen downwards until it turns positive.
  let hi = vd;
  let lo = vd - 1;
  let width = 1;
  let k = 0;
  let glo = g(lo);
  while (glo <= 0) {
    hi = lo;
    width *= 2;
    lo = vd - width;
    glo = g(lo);
    if (++k > 80) throw new ConvergenceError(`no source voltage carries ISS = ${n.iss} A (searched down to ${lo} V)`, origin);
  }
  let ghi = g(hi);
  let side = 0;
  for (let it = 1; it <= maxIterations; it++) {
    let x = (lo * ghi - hi * glo) / (ghi - glo);
    if (!(x > lo && x < hi)) x = 0.5 * (lo + hi);
    const gx = g(x);
    if (gx !== gx) throw new ConvergenceError(`the residual is not a number at VS = ${x} V (check the network and card values)`, origin);
    if (gx > 0) {
      lo = x;
      glo = gx;
      if (side === 1) ghi /= 2;
      side = 1;
    } else {
      hi = x;
      ghi = gx;
      if (side === -1) glo /= 2;
      side = -1;
    }
    const tol = relTol * Math.max(Math.abs(x), Math.abs(vd - x)) + absTolVoltage;
    if (gx === 0 || hi - lo <= tol) {
      set(out, n.iss, n.vg, x, vd, "bracketed-regula-falsi", it, hi - lo);
      return;
    }
  }
  throw new ConvergenceError(`source voltage did not converge in ${maxIterations} iterations (bracket ${lo}…${hi} V)`, origin);
}

function set(out: NetworkSolution, id: number, vg: number, vs: number, vd: number, method: NetworkSolution["method"], it: number, tol: number): void {
  out.id = id;
  out.vg = vg;
  out.vs = vs;
  out.vd = vd;
  out.method = method;
  out.iterations = it;
  out.tolerance = tol;
}
