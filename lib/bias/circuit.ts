/**
 * Operating points of multi-transistor circuits: nodal analysis of a small
 * netlist (resistors, ideal current sources, MOSFETs, nodes held by ideal
 * voltage sources) in absolute node voltages, both polarities.
 *
 * Method: Kirchhoff's current law at every unknown node, solved by a damped
 * Newton iteration. Devices are evaluated only through `drainCurrent`; their
 * partial derivatives (gm, gds, gmb) by central differences (step 1e-6 V, exact
 * to rounding for the square law away from a region edge). A step larger than
 * 0.5 V on any node is scaled down to 0.5 V. The Jacobian carries a 1e-12 S
 * regularisation on its diagonal (never in the residual) so a node whose
 * devices are all off does not make it singular. Fallbacks when plain Newton
 * does not converge in 150 iterations: gmin stepping (a conductance from every
 * unknown node to ground, 1e-3 S down to 0 by decades), then source stepping
 * (all held voltages and source currents ramped from 10 % to 100 %).
 * Tolerance: every node step below 1e-13 V + 1e-12·|V| (or below 1 nV where
 * KCL already holds: a node at the edge of conduction is a double root, where
 * Newton converges only linearly); then the KCL residual is verified at every node: |ΣI| ≤ 1e-15 A + 1e-9·Σ|I| (the sum of the
 * magnitudes of the branch currents meeting there). Failure mode: a
 * ConvergenceError naming the circuit, the node and its residual.
 * Allocation: `compileNetlist` allocates the index and scratch arrays once; the
 * Newton loop and `solveCompiled` allocate nothing.
 */
import type { Device } from "../device/card.js";
import { drainCurrent, type ClmMode } from "../device/drain-current.js";
import { ConvergenceError, InputError } from "../errors.js";
import { diffusionText, spiceNumber } from "./spice.js";
import { modelLine } from "./topologies/two-transistor.js";

export interface NetResistor {
  readonly name: string;
  readonly a: string;
  readonly b: string;
  readonly r: number;
}

/** An ideal current source: `i` flows from node `from` through the source into node `to` (SPICE `I from to i`). */
export interface NetCurrentSource {
  readonly name: string;
  readonly from: string;
  readonly to: string;
  readonly i: number;
}

export interface NetMosfet {
  /** Instance name without the leading M, e.g. "1". */
  readonly name: string;
  /** What it does in the circuit, in words ("input", "tail", "load diode"). */
  readonly role: string;
  readonly device: Device;
  readonly d: string;
  readonly g: string;
  readonly s: string;
  readonly b: string;
}

/** A circuit as data: nodes held at fixed voltages (ideal sources to ground), the unknown nodes, and the elements. Node "0" is ground. */
export interface Netlist {
  readonly name: string;
  readonly fixed: Readonly<Record<string, number>>;
  readonly unknown: readonly string[];
  readonly resistors: readonly NetResistor[];
  readonly sources: readonly NetCurrentSource[];
  readonly mosfets: readonly NetMosfet[];
  readonly clm: ClmMode;
  /** Starting voltages for unknown nodes (the midpoint of the held voltages otherwise). */
  readonly guess?: Readonly<Record<string, number>>;
}

export type CircuitMethod = "newton" | "newton-gmin-stepping" | "newton-source-stepping";

export interface CircuitSolution {
  /** Every node voltage by name, held and solved. */
  readonly nodes: Readonly<Record<string, number>>;
  /** Drain current (SPICE sign, into the drain) per MOSFET name. */
  readonly drain: Readonly<Record<string, number>>;
  /** Resistor currents a→b and source currents by element name. */
  readonly branch: Readonly<Record<string, number>>;
  readonly method: CircuitMethod;
  readonly iterations: number;
  /** Largest KCL residual at any unknown node, A. */
  readonly residual: number;
  /**
   * Solved nodes that float: no current flows through them and every device on
   * them is off (branch currents below 0.1 pA, conductance below 10 nS), so their
   * voltage is not determined by the circuit (any value that keeps those devices
   * off is a solution). Reported, never hidden.
   */
  readonly floating: readonly string[];
}

/** The netlist with nodes as indices and preallocated scratch. Unknown nodes first, then the held ones. */
export interface CompiledNetlist {
  readonly net: Netlist;
  readonly n: number;
  readonly names: readonly string[];
  readonly v: Float64Array;
  readonly held: Float64Array;
  readonly ra: Int32Array;
  readonly rb: Int32Array;
  readonly rg: Float64Array;
  readonly sf: Int32Array;
  readonly st: Int32Array;
  readonly si: Float64Array;
  readonly md: Int32Array;
  readonly mg: Int32Array;
  readonly ms: Int32Array;
  readonly mb: Int32Array;
  readonly devices: readonly Device[];
  readonly f: Float64Array;
  readonly mag: Float64Array;
  readonly jac: Float64Array;
  readonly dv: Float64Array;
  readonly save: Float64Array;
}

const fdStep = 1e-6;
const regularisation = 1e-12;
const maxStep = 0.5;
const maxIterations = 150;

/** Index the netlist and allocate its scratch; throws InputError for an unknown node or a bad element value. */
export function compileNetlist(net: Netlist): CompiledNetlist {
  const names = [...net.unknown];
  const index = new Map<string, number>();
  names.forEach((nm, i) => index.set(nm, i));
  const fixedNames = Object.keys(net.fixed);
  if (!fixedNames.includes("0")) fixedNames.push("0");
  for (const nm of fixedNames) {
    if (index.has(nm)) throw new InputError(nm, "a node either held or solved, not both", `${net.name}: nodes`);
    index.set(nm, names.length);
    names.push(nm);
  }
  const n = net.unknown.length;
  const v = new Float64Array(names.length);
  const held = new Float64Array(names.length);
  for (let i = n; i < names.length; i++) {
    const x = names[i] === "0" ? 0 : net.fixed[names[i]!]!;
    if (!Number.isFinite(x)) throw new InputError(x, "a finite node voltage in V", `${net.name}: node ${names[i]}`);
    held[i] = x;
    v[i] = x;
  }
  const at = (nm: string, what: string): number => {
    const i = index.get(nm);
    if (i === undefined) throw new InputError(nm, `a node of the circuit (${names.join(", ")})`, `${net.name}: ${what}`);
    return i;
  };
  const ra = Int32Array.from(net.resistors, (r) => at(r.a, `R${r.name}`));
  const rb = Int32Array.from(net.resistors, (r) => at(r.b, `R${r.name}`));
  const rg = Float64Array.from(net.resistors, (r) => {
    if (!(r.r > 0) || !Number.isFinite(r.r)) throw new InputError(r.r, "a finite resistance > 0 Ω", `${net.name}: R${r.name}`);
    return 1 / r.r;
  });
  const sf = Int32Array.from(net.sources, (s) => at(s.from, `I${s.name}`));
  const st = Int32Array.from(net.sources, (s) => at(s.to, `I${s.name}`));
  const si = Float64Array.from(net.sources, (s) => {
    if (!Number.isFinite(s.i)) throw new InputError(s.i, "a finite current in A", `${net.name}: I${s.name}`);
    return s.i;
  });
  const md = Int32Array.from(net.mosfets, (m) => at(m.d, `M${m.name}.drain`));
  const mg = Int32Array.from(net.mosfets, (m) => at(m.g, `M${m.name}.gate`));
  const ms = Int32Array.from(net.mosfets, (m) => at(m.s, `M${m.name}.source`));
  const mb = Int32Array.from(net.mosfets, (m) => at(m.b, `M${m.name}.body`));
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = n; i < names.length; i++) {
    lo = Math.min(lo, held[i]!);
    hi = Math.max(hi, held[i]!);
  }
  for (let i = 0; i < n; i++) {
    const g = net.guess?.[names[i]!];
    v[i] = g !== undefined && Number.isFinite(g) ? g : (lo + hi) / 2;
  }
  return {
    net,
    n,
    names,
    v,
    held,
    ra,
    rb,
    rg,
    sf,
    st,
    si,
    md,
    mg,
    ms,
    mb,
    devices: net.mosfets.map((m) => m.device),
    f: new Float64Array(n),
    mag: new Float64Array(n),
    jac: new Float64Array(n * names.length),
    dv: new Float64Array(n),
    save: new Float64Array(n),
  };
}

/**
 * KCL residual (current leaving each unknown node) into c.f, the sum of branch
 * magnitudes into c.mag, and with `jac` the full conductance matrix
 * n × (all nodes) into c.jac (row-major, row stride = all nodes).
 */
function residual(c: CompiledNetlist, gmin: number, scale: number, jac: boolean): void {
  const { n, v, f, mag, ra, rb, rg, sf, st, si, md, mg, ms, mb, devices } = c;
  const w = c.names.length;
  const J = c.jac;
  const clm = c.net.clm;
  f.fill(0);
  mag.fill(0);
  if (jac) J.fill(0);
  for (let i = 0; i < n; i++) {
    f[i] = gmin * v[i]!;
    if (jac) J[i * w + i] = gmin + regularisation;
  }
  for (let e = 0; e < rg.length; e++) {
    const a = ra[e]!;
    const b = rb[e]!;
    const g = rg[e]!;
    const i = (v[a]! - v[b]!) * g;
    if (a < n) {
      f[a] = f[a]! + i;
      mag[a] = mag[a]! + Math.abs(i);
      if (jac) {
        J[a * w + a] = J[a * w + a]! + g;
        J[a * w + b] = J[a * w + b]! - g;
      }
    }
    if (b < n) {
      f[b] = f[b]! - i;
      mag[b] = mag[b]! + Math.abs(i);
      if (jac) {
        J[b * w + b] = J[b * w + b]! + g;
        J[b * w + a] = J[b * w + a]! - g;
      }
    }
  }
  for (let e = 0; e < si.length; e++) {
    const i = si[e]! * scale;
    const a = sf[e]!;
    const b = st[e]!;
    if (a < n) {
      f[a] = f[a]! + i;
      mag[a] = mag[a]! + Math.abs(i);
    }
    if (b < n) {
      f[b] = f[b]! - i;
      mag[b] = mag[b]! + Math.abs(i);
    }
  }
  for (let e = 0; e < devices.length; e++) {
    const dev = devices[e]!;
    const d = md[e]!;
    const g = mg[e]!;
    const s = ms[e]!;
    const b = mb[e]!;
    const vgs = v[g]! - v[s]!;
    const vds = v[d]! - v[s]!;
    const vsb = v[s]! - v[b]!;
    const id = drainCurrent(dev, vgs, vds, vsb, clm);
    if (d < n) {
      f[d] = f[d]! + id;
      mag[d] = mag[d]! + Math.abs(id);
    }
    if (s < n) {
      f[s] = f[s]! - id;
      mag[s] = mag[s]! + Math.abs(id);
    }
    if (!jac) continue;
    const h2 = 2 * fdStep;
    const gm = (drainCurrent(dev, vgs + fdStep, vds, vsb, clm) - drainCurrent(dev, vgs - fdStep, vds, vsb, clm)) / h2;
    const gds = (drainCurrent(dev, vgs, vds + fdStep, vsb, clm) - drainCurrent(dev, vgs, vds - fdStep, vsb, clm)) / h2;
    // ∂id/∂vsb; id depends on vb through vsb = vs − vb.
    const gsb = (drainCurrent(dev, vgs, vds, vsb + fdStep, clm) - drainCurrent(dev, vgs, vds, vsb - fdStep, clm)) / h2;
    // id(vd, vg, vs, vb): ∂/∂vd = gds, ∂/∂vg = gm, ∂/∂vs = −gm − gds + gsb, ∂/∂vb = −gsb.
    if (d < n) stampDevice(J, d * w, d, g, s, b, gm, gds, gsb, 1);
    if (s < n) stampDevice(J, s * w, d, g, s, b, gm, gds, gsb, -1);
  }
}

function stampDevice(J: Float64Array, row: number, d: number, g: number, s: number, b: number, gm: number, gds: number, gsb: number, sign: number): void {
  J[row + d] = J[row + d]! + sign * gds;
  J[row + g] = J[row + g]! + sign * gm;
  J[row + s] = J[row + s]! + sign * (-gm - gds + gsb);
  J[row + b] = J[row + b]! - sign * gsb;
}

/** Solve J[:, :n]·x = rhs in place (Gaussian elimination with partial pivoting); rhs becomes x. False when singular. */
function solveDense(J: Float64Array, stride: number, n: number, rhs: Float64Array): boolean {
  for (let k = 0; k < n; k++) {
    let p = k;
    let best = Math.abs(J[k * stride + k]!);
    for (let r = k + 1; r < n; r++) {
      const a = Math.abs(J[r * stride + k]!);
      if (a > best) {
        best = a;
        p = r;
      }
    }
    if (!(best > 0)) return false;
    if (p !== k) {
      for (let col = 0; col < n; col++) {
        const t = J[k * stride + col]!;
        J[k * stride + col] = J[p * stride + col]!;
        J[p * stride + col] = t;
      }
      const t = rhs[k]!;
      rhs[k] = rhs[p]!;
      rhs[p] = t;
    }
    const piv = J[k * stride + k]!;
    for (let r = k + 1; r < n; r++) {
      const m = J[r * stride + k]! / piv;
      if (m === 0) continue;
      for (let col = k; col < n; col++) J[r * stride + col] = J[r * stride + col]! - m * J[k * stride + col]!;
      rhs[r] = rhs[r]! - m * rhs[k]!;
    }
  }
  for (let k = n - 1; k >= 0; k--) {
    let s = rhs[k]!;
    for (let col = k + 1; col < n; col++) s -= J[k * stride + col]! * rhs[col]!;
    rhs[k] = s / J[k * stride + k]!;
  }
  return true;
}

/** Newton from the current c.v; returns iterations used, or −1 when it did not converge. */
function newton(c: CompiledNetlist, gmin: number, scale: number): number {
  const { n, v, f, dv, held } = c;
  const w = c.names.length;
  for (let i = n; i < w; i++) v[i] = held[i]! * scale;
  for (let it = 1; it <= maxIterations; it++) {
    residual(c, gmin, scale, true);
    for (let i = 0; i < n; i++) dv[i] = -f[i]!;
    if (!solveDense(c.jac, w, n, dv)) return -1;
    let kclOk = true;
    for (let i = 0; i < n; i++) if (Math.abs(f[i]!) > 1e-15 + 1e-9 * c.mag[i]!) kclOk = false;
    let big = 0;
    for (let i = 0; i < n; i++) big = Math.max(big, Math.abs(dv[i]!));
    // Kirchhoff already holds and the step is below 1 nV: a node at the edge of
    // conduction (a double root, where Newton only halves the distance) is settled.
    if (kclOk && big < 1e-9) return it;
    if (!Number.isFinite(big)) return -1;
    const damp = big > maxStep ? maxStep / big : 1;
    let done = damp === 1;
    for (let i = 0; i < n; i++) {
      const step = dv[i]! * damp;
      v[i] = v[i]! + step;
      if (Math.abs(step) > 1e-13 + 1e-12 * Math.abs(v[i]!)) done = false;
    }
    if (done) return it;
  }
  return -1;
}

/** Solve in place from the compiled starting point; returns method, iterations and the verified residual. Allocation-free. */
export function solveCompiled(c: CompiledNetlist): { method: CircuitMethod; iterations: number; residual: number } {
  const { n, v, save } = c;
  for (let i = 0; i < n; i++) save[i] = v[i]!;
  let method: CircuitMethod = "newton";
  let total = newton(c, 0, 1);
  if (total < 0) {
    method = "newton-gmin-stepping";
    for (let i = 0; i < n; i++) v[i] = save[i]!;
    total = 0;
    for (let gmin = 1e-3; gmin >= 1e-13 && total >= 0; gmin /= 10) {
      const it = newton(c, gmin, 1);
      total = it < 0 ? -1 : total + it;
    }
    if (total >= 0) {
      const it = newton(c, 0, 1);
      total = it < 0 ? -1 : total + it;
    }
  }
  if (total < 0) {
    method = "newton-source-stepping";
    for (let i = 0; i < n; i++) v[i] = save[i]! * 0.1;
    total = 0;
    for (let k = 1; k <= 10 && total >= 0; k++) {
      const it = newton(c, 0, k / 10);
      total = it < 0 ? -1 : total + it;
    }
  }
  residual(c, 0, 1, false);
  let worst = 0;
  let at = -1;
  for (let i = 0; i < n; i++) {
    const r = Math.abs(c.f[i]!);
    if (r > 1e-15 + 1e-9 * c.mag[i]! && r >= worst) {
      worst = r;
      at = i;
    }
  }
  if (total < 0 || at >= 0) {
    let maxR = 0;
    let where = 0;
    for (let i = 0; i < n; i++)
      if (Math.abs(c.f[i]!) >= maxR) {
        maxR = Math.abs(c.f[i]!);
        where = i;
      }
    throw new ConvergenceError(
      `the node voltages did not settle (Newton, then gmin stepping, then source stepping): the largest Kirchhoff residual is ${maxR.toExponential(3)} A at node "${c.names[where]}" (V = ${v[where]} V), expected at most 1e-15 A + 1e-9 of the branch currents there`,
      c.net.name,
    );
  }
  let maxR = 0;
  for (let i = 0; i < n; i++) maxR = Math.max(maxR, Math.abs(c.f[i]!));
  return { method, iterations: total, residual: maxR };
}

/** Solve a netlist: node voltages, drain and branch currents, method and verified residual. */
export function solveNetlist(net: Netlist): CircuitSolution & { readonly compiled: CompiledNetlist } {
  const c = compileNetlist(net);
  const r = solveCompiled(c);
  const nodes: Record<string, number> = {};
  c.names.forEach((nm, i) => (nodes[nm] = c.v[i]!));
  const drain: Record<string, number> = {};
  net.mosfets.forEach((m, e) => {
    const v = c.v;
    drain[m.name] = drainCurrent(m.device, v[c.mg[e]!]! - v[c.ms[e]!]!, v[c.md[e]!]! - v[c.ms[e]!]!, v[c.ms[e]!]! - v[c.mb[e]!]!, net.clm);
  });
  const branch: Record<string, number> = {};
  net.resistors.forEach((r, e) => (branch[r.name] = (c.v[c.ra[e]!]! - c.v[c.rb[e]!]!) * c.rg[e]!));
  net.sources.forEach((s) => (branch[s.name] = s.i));
  residual(c, 0, 1, true);
  const w = c.names.length;
  const floating = c.names.slice(0, c.n).filter((_, i) => c.mag[i]! < 1e-13 && c.jac[i * w + i]! - regularisation < 1e-8);
  return { nodes, drain, branch, ...r, floating, compiled: c };
}

/**
 * Small-signal response at the solved point: the change of every node voltage
 * for small changes of held node voltages (`drive`, V per V) and currents
 * injected into solved nodes (`inject`, A). Linear in both, from the same
 * conductance matrix the Newton iteration uses (without its regularisation).
 */
export function smallSignalResponse(c: CompiledNetlist, drive: Readonly<Record<string, number>>, inject: Readonly<Record<string, number>> = {}): Record<string, number> {
  const n = c.n;
  const w = c.names.length;
  const rhs = new Float64Array(n);
  // First without the regularisation; a node whose devices are all off has no
  // conductance, so then again with 1e-12 S to ground there (as SPICE's gmin does).
  for (const keep of [false, true]) {
    residual(c, 0, 1, true);
    if (!keep) for (let i = 0; i < n; i++) c.jac[i * w + i] = c.jac[i * w + i]! - regularisation;
    for (let i = 0; i < n; i++) {
      let s = inject[c.names[i]!] ?? 0;
      for (let j = n; j < w; j++) s -= c.jac[i * w + j]! * (drive[c.names[j]!] ?? 0);
      rhs[i] = s;
    }
    if (solveDense(c.jac, w, n, rhs) && rhs.every(Number.isFinite)) break;
    if (keep) throw new ConvergenceError("the small-signal conductance matrix is singular even with 1e-12 S from every node to ground", c.net.name);
  }
  const out: Record<string, number> = {};
  c.names.forEach((nm, i) => (out[nm] = i < n ? rhs[i]! : (drive[nm] ?? 0)));
  return out;
}

/** SPICE lines of a netlist: one Level 1 .model per device card, held nodes as sources named V<node>, elements, MOSFETs M<name> with a 0 V ammeter VA<name> in the drain lead. */
/** AD/AS/PD/PS on an instance line when the card has a Level 1 capacitance block (the junctions the hand analysis counts). */
const junctionGeometry = (dev: NetMosfet["device"]): string => diffusionText(dev);

export function netlistSpice(net: Netlist, prefix = ""): { lines: string[]; node: (name: string) => string; instance: (name: string) => string; ammeter: (name: string) => string } {
  const p = prefix;
  const node = (nm: string) => (nm === "0" ? "0" : `${p}${nm}`);
  const safe = (s: string) => s.replace(/[^A-Za-z0-9_]/g, "_");
  const lines: string[] = [];
  const models = new Map<object, string>();
  for (const m of net.mosfets)
    if (!models.has(m.device.card)) {
      const name = safe(`${p}mod${models.size + 1}`);
      models.set(m.device.card, name);
      lines.push(modelLine(name, m.device.card));
    }
  for (const [nm, x] of Object.entries(net.fixed)) if (nm !== "0") lines.push(`V${p}${nm} ${node(nm)} 0 ${spiceNumber(x)}`);
  for (const r of net.resistors) lines.push(`R${p}${r.name} ${node(r.a)} ${node(r.b)} ${spiceNumber(r.r)}`);
  for (const s of net.sources) lines.push(`I${p}${s.name} ${node(s.from)} ${node(s.to)} ${spiceNumber(s.i)}`);
  // A 0 V source in each drain lead: i(VA<name>) is the current into that drain.
  for (const m of net.mosfets)
    lines.push(
      `VA${p}${m.name} ${node(m.d)} ${p}dm${m.name} 0`,
      `M${p}${m.name} ${p}dm${m.name} ${node(m.g)} ${node(m.s)} ${node(m.b)} ${models.get(m.device.card)} W=${spiceNumber(m.device.w)} L=${spiceNumber(m.device.l)}${junctionGeometry(m.device)}`,
    );
  return { lines, node, instance: (nm: string) => `M${p}${nm}`, ammeter: (nm: string) => `VA${p}${nm}` };
}
