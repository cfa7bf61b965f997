/**
 * Device mismatch by Pelgrom's law (Pelgrom, Duinmaijer & Welbers, "Matching
 * properties of MOS transistors", IEEE JSSC 24(5), 1433–1440, 1989):
 * σ(ΔVt) = AVt/√(W·L) and σ(Δβ/β) = Aβ/√(W·L) for a pair of identical devices,
 * so each device carries σ/√2 of its own.
 *
 * Closed forms (catalog pair.catalog.ts) for the input-referred offset of a
 * differential pair (with and without the load mirror), the current error of
 * a mirror, and the gate area a target offset needs.
 *
 * Monte Carlo: per-device mismatch on top of global (per-polarity, NMOS and
 * PMOS independent) threshold and k′ variation, about the solved operating
 * point. Method: each device keeps its solved |Vt| and its effective k
 * (2·I/VOV², which carries the solved (1 + λ·VDS)); a sample perturbs them and
 * re-solves the balance of the circuit in closed form with the square law
 * (λ frozen). Figures: the input-referred offset of a pair, the tail current,
 * the input common-mode range; the output-current error and the compliance of
 * a mirror. Statistics stream (mean, σ, extremes, the yield of every check,
 * and each random variable's share of every figure's variance, the
 * sensitivity ranking) in constant memory. PRNG: xoshiro128** seeded by
 * splitmix32, normals by Box–Muller. The inner loop allocates nothing.
 * Failure modes: InputError for AVt missing, a bad sample count, or samples
 * kept beyond memory.
 */
import { InputError } from "../errors.js";
import * as pf from "../formulas/pair.formulas.js";
import type { Meters, Ratio, SiemensPerAmpere, SquareMeters, Volts, VoltMeters } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import type { DeviceCard } from "../device/card.js";
import type { StageAnalysis, StageDevice } from "./topology.js";

/** σ(ΔVt) and σ(Δβ/β) of a matched pair of devices drawn W × L. */
export interface PairSigmas {
  readonly sigmaVt: Volts;
  readonly sigmaBeta: Ratio;
}

/** Pelgrom's law for a pair of `dev`; AVt is required, Aβ is taken as 0 (and said so) when the card has none. */
export function pelgrom(dev: StageDevice, origin: string, rec?: Derivation): PairSigmas {
  const c = dev.card;
  if (c.avt === undefined)
    throw new InputError(c.avt, "a Pelgrom threshold coefficient avt on the card, in V·m (e.g. 5e-9 V·m = 5 mV·µm; the process's matching data gives it)", `${origin}.card${c.name ? ` "${c.name}"` : ""}.avt`);
  if (!(c.avt >= 0)) throw new InputError(c.avt, "avt ≥ 0 in V·m", `${origin}.card.avt`);
  const abeta = (c.abeta ?? 0) as Meters;
  if (c.abeta === undefined) rec?.assume(`Card ${c.name} gives no Aβ: current-factor mismatch taken as 0.`);
  const sVt = rec ? rec.calc(pf.pelgromThreshold, [c.avt, dev.w, dev.l], origin) : pf.pelgromThreshold.fn(c.avt, dev.w, dev.l);
  const sB = rec ? rec.calc(pf.pelgromCurrentFactor, [abeta, dev.w, dev.l], origin) : pf.pelgromCurrentFactor.fn(abeta, dev.w, dev.l);
  return { sigmaVt: sVt, sigmaBeta: sB };
}

export interface OffsetEstimate {
  /** σ of the input-referred offset. */
  readonly sigma: Volts;
  /** Variance shares of the input pair's ΔVt and Δβ and the load's ΔVt and Δβ (sum 1). */
  readonly shares: { readonly inputVt: number; readonly inputBeta: number; readonly loadVt: number; readonly loadBeta: number };
}

type PairStage = { readonly topology: string; readonly device: StageDevice; readonly devices?: Readonly<Record<string, StageDevice>> };

/** σ of the input-referred offset of an analysed pair (with the load mirror's share for the five-transistor amplifier). */
export function pairOffset(stage: PairStage, a: StageAnalysis, rec?: Derivation): OffsetEstimate {
  if (stage.topology !== "diff-pair" && stage.topology !== "diff-pair-mirror-load" && stage.topology !== "two-stage-miller")
    throw new InputError(stage.topology, `"diff-pair", "diff-pair-mirror-load" or "two-stage-miller"`, "pairOffset: stage.topology");
  const inp = pelgrom(stage.device, "device", rec);
  const m1 = a.op;
  const gm1 = a.smallSignal.gm;
  const gmId = (gm1 / Math.abs(m1.channelCurrent)) as SiemensPerAmpere;
  if (!(gmId > 0)) throw new InputError(m1.region, "an input device that conducts (its offset is undefined in cutoff)", "pairOffset: M1");
  if (stage.topology === "diff-pair") {
    const s = rec ? rec.calc(pf.pairOffset, [inp.sigmaVt, inp.sigmaBeta, gmId]) : pf.pairOffset.fn(inp.sigmaVt, inp.sigmaBeta, gmId);
    const v1 = inp.sigmaVt ** 2;
    const b1 = (inp.sigmaBeta / gmId) ** 2;
    const t = v1 + b1 || 1;
    return { sigma: s, shares: { inputVt: v1 / t, inputBeta: b1 / t, loadVt: 0, loadBeta: 0 } };
  }
  const load = pelgrom(stage.devices!.load!, "devices.load", rec);
  const gm3 = a.devices!.M3!.smallSignal.gm;
  const s = rec
    ? rec.calc(pf.pairOffsetMirrorLoad, [inp.sigmaVt, inp.sigmaBeta, gmId, gm3, gm1, load.sigmaVt, load.sigmaBeta])
    : pf.pairOffsetMirrorLoad.fn(inp.sigmaVt, inp.sigmaBeta, gmId, gm3, gm1, load.sigmaVt, load.sigmaBeta);
  const v1 = inp.sigmaVt ** 2;
  const b1 = (inp.sigmaBeta / gmId) ** 2;
  const v3 = (gm3 / gm1) ** 2 * load.sigmaVt ** 2;
  const b3 = (load.sigmaBeta / gmId) ** 2;
  const t = v1 + b1 + v3 + b3 || 1;
  return { sigma: s, shares: { inputVt: v1 / t, inputBeta: b1 / t, loadVt: v3 / t, loadBeta: b3 / t } };
}

/** σ of the relative output-current error of a mirror pair (the current-mirror's M1/M2, or the cascode mirror's lower pair). */
export function mirrorError(dev: StageDevice, gmOverId: SiemensPerAmpere, rec?: Derivation): Ratio {
  const p = pelgrom(dev, "device", rec);
  return rec ? rec.calc(pf.mirrorCurrentError, [p.sigmaBeta, gmOverId, p.sigmaVt]) : pf.mirrorCurrentError.fn(p.sigmaBeta, gmOverId, p.sigmaVt);
}

/** The gate area W·L each input device needs for a target offset σ at a given gm/ID (input pair only). */
export function gateAreaForOffset(card: DeviceCard, gmOverId: SiemensPerAmpere, target: Volts, rec?: Derivation): SquareMeters {
  if (card.avt === undefined) throw new InputError(card.avt, "a Pelgrom threshold coefficient avt on the card, in V·m", `gateAreaForOffset: card "${card.name}".avt`);
  if (!(target > 0) || !Number.isFinite(target)) throw new InputError(target, "a target offset σ > 0 V", "gateAreaForOffset: target");
  if (!(gmOverId > 0) || !Number.isFinite(gmOverId)) throw new InputError(gmOverId, "gm/ID > 0 in S/A", "gateAreaForOffset: gmOverId");
  const abeta = (card.abeta ?? 0) as Meters;
  return rec ? rec.calc(pf.offsetGateArea, [card.avt as VoltMeters, abeta, gmOverId, target]) : pf.offsetGateArea.fn(card.avt as VoltMeters, abeta, gmOverId, target);
}

// ---------------------------------------------------------------- Monte Carlo

/** Global (die-to-die) variation per polarity: σ of the threshold shift and of the relative k′ shift, plus a fixed corner offset. */
export interface GlobalVariation {
  readonly sigmaVt?: number;
  readonly sigmaK?: number;
  /** A corner: fixed shifts added to every sample (threshold magnitude in V, k′ relative). */
  readonly cornerVt?: number;
  readonly cornerK?: number;
}

export interface MonteCarloOptions {
  readonly samples: number;
  readonly seed?: number;
  readonly nmos?: GlobalVariation;
  readonly pmos?: GlobalVariation;
  /** Check limits (absolute volts for ranges, as for the stage; offsets and errors as magnitudes). */
  readonly limits?: {
    readonly maxOffset?: number;
    readonly maxCurrentError?: number;
    /** The input common-mode range the pair must cover (absolute volts). */
    readonly commonModeMin?: number;
    readonly commonModeMax?: number;
    /** The lowest (NMOS) or highest (PMOS) output the mirror must sink or source at (absolute). */
    readonly outputVoltage?: number;
  };
  /** Keep every sample's figures (for a histogram): bounded by memory. */
  readonly keep?: boolean;
}

export interface FigureStatistics {
  readonly name: string;
  readonly unit: string;
  readonly mean: number;
  readonly sigma: number;
  readonly min: number;
  readonly max: number;
  /** Random variables ranked by their share of this figure's variance (correlation², from the streaming sums). */
  readonly sensitivity: readonly { readonly variable: string; readonly share: number }[];
}

export interface CheckYield {
  readonly name: string;
  readonly passed: number;
  readonly yield: number;
}

export interface MonteCarloResult {
  readonly samples: number;
  readonly seed: number;
  readonly figures: readonly FigureStatistics[];
  readonly checks: readonly CheckYield[];
  /** Device-samples per second of this run (devices × samples / time). */
  readonly rate: number;
  /** Per figure, every sample, when `keep` was asked. */
  readonly kept?: Readonly<Record<string, Float64Array>>;
}

/** Largest number of samples, and largest memory for kept samples (bytes). */
export const maxSamples = 100_000_000;
export const maxKeptBytes = 256 * 1024 * 1024;

/** A device in the sampling plan: nominal |Vt| and effective k, its own mismatch σ (per device), its polarity. */
interface PlanDevice {
  readonly name: string;
  readonly vt: number;
  readonly k: number;
  readonly sVt: number;
  readonly sB: number;
  readonly nmos: boolean;
}

/** The circuits the sampler knows, each a plain-number evaluator over perturbed devices. */
type Kind = "pair-resistive" | "pair-mirror" | "mirror";

interface Plan {
  readonly kind: Kind;
  readonly devices: readonly PlanDevice[];
  readonly figures: readonly { name: string; unit: string }[];
  readonly checks: readonly string[];
  /** Numbers the evaluator needs (rails in device polarity, tail, resistor…). */
  readonly p: Float64Array;
}

function planDevice(name: string, a: StageAnalysis["op"], card: DeviceCard, sigmas: PairSigmas): PlanDevice {
  const i = Math.abs(a.channelCurrent);
  const vov = a.vov;
  if (!(vov > 0) || !(i > 0)) throw new InputError(a.region, `a conducting device ${name} at the operating point (Monte Carlo perturbs about it)`, `mismatch: ${name}`);
  return { name, vt: Math.abs(a.vt), k: (2 * i) / (vov * vov), sVt: sigmas.sigmaVt / Math.SQRT2, sB: sigmas.sigmaBeta / Math.SQRT2, nmos: card.polarity === "nmos" };
}

function buildPlan(stage: PairStage & { readonly components: Readonly<Record<string, number>>; readonly supplies: { vdd: number; vss?: number } }, a: StageAnalysis): Plan {
  const sign = a.polarity === "nmos" ? 1 : -1;
  const vdd = stage.supplies.vdd;
  const vss = stage.supplies.vss ?? 0;
  const vdr = sign > 0 ? vdd : -vss;
  const vsr = sign > 0 ? vss : -vdd;
  const dev = stage.device;
  const d = a.devices ?? {};
  // The two-stage amplifier's offset is its first stage's (five-transistor amplifier): the second stage's
  // mismatch reaches the input divided by the first stage's gain and is left out.
  if (stage.topology === "diff-pair" || stage.topology === "diff-pair-mirror-load" || stage.topology === "two-stage-miller") {
    const inSig = pelgrom(dev, "device");
    const devices: PlanDevice[] = [planDevice("M1", a.op, dev.card, inSig), planDevice("M2", d.M2!.op, dev.card, inSig)];
    const tail = stage.devices?.tail;
    const mirror = stage.topology !== "diff-pair";
    if (mirror) {
      const ld = stage.devices!.load!;
      const ls = pelgrom(ld, "devices.load");
      devices.push(planDevice("M3", d.M3!.op, ld.card, ls), planDevice("M4", d.M4!.op, ld.card, ls));
    }
    let vgsTail = 0;
    if (tail) {
      const ts = tail.card.avt !== undefined ? pelgrom(tail, "devices.tail") : { sigmaVt: 0 as Volts, sigmaBeta: 0 as Ratio };
      devices.push(planDevice("M5", d.M5!.op, tail.card, ts));
      vgsTail = d.M5!.op.vgsDevice;
    }
    const itail = tail ? 0 : stage.components.itail!;
    const p = Float64Array.of(vdr, vsr, sign, itail, vgsTail, tail ? 1 : 0, stage.components.rd ?? 0, mirror ? 1 : 0);
    return {
      kind: mirror ? "pair-mirror" : "pair-resistive",
      devices,
      figures: [
        { name: "input-referred offset", unit: "V" },
        { name: "tail current", unit: "A" },
        { name: "input common mode, lowest", unit: "V" },
        { name: "input common mode, highest", unit: "V" },
      ],
      checks: ["|offset| within its limit", "lowest input common mode reached", "highest input common mode reached"],
      p,
    };
  }
  if (stage.topology === "current-mirror" || stage.topology === "cascode-mirror") {
    const sig = pelgrom(dev, "device");
    const cascode = stage.topology === "cascode-mirror";
    const refOp = cascode ? d.M1!.op : d.reference!.op;
    const outOp = cascode ? a.op : a.op;
    const devices: PlanDevice[] = [planDevice("M1", refOp, dev.card, sig), planDevice("M2", outOp, dev.card, sig)];
    let casVt = 0;
    let vgCas = 0;
    let wide = 0;
    if (cascode) {
      const cd = stage.devices!.cascode!;
      const cs = cd.card.avt !== undefined ? pelgrom(cd, "devices.cascode") : { sigmaVt: 0 as Volts, sigmaBeta: 0 as Ratio };
      devices.push(planDevice("M3", d.M3!.op, cd.card, cs), planDevice("M4", d.M4!.op, cd.card, cs));
      casVt = Math.abs(d.M4!.op.vt);
      wide = stage.components.vcas !== undefined ? 1 : 0;
      vgCas = wide ? sign * stage.components.vcas! : sign * a.nodes.a!;
    }
    const iref = Math.abs(refOp.channelCurrent);
    const iout = Math.abs(outOp.channelCurrent);
    const p = Float64Array.of(vdr, vsr, sign, iref, iout, cascode ? 1 : 0, wide, vgCas, casVt);
    return {
      kind: "mirror",
      devices,
      figures: [
        { name: "output-current error", unit: "" },
        ...(cascode ? [{ name: "output compliance", unit: "V" }] : []),
      ],
      checks: cascode ? ["|current error| within its limit", "output above compliance"] : ["|current error| within its limit"],
      p,
    };
  }
  throw new InputError(stage.topology, `a stage with matched devices: "diff-pair", "diff-pair-mirror-load", "two-stage-miller", "current-mirror" or "cascode-mirror"`, "mismatchMonteCarlo: stage.topology");
}

/** A seeded xoshiro128** generator with Box–Muller normals; state in plain numbers. */
class Normal {
  private a: number;
  private b: number;
  private c: number;
  private d: number;
  private spare = 0;
  private has = false;
  constructor(seed: number) {
    let s = seed >>> 0;
    const next = () => {
      s = (s + 0x9e3779b9) >>> 0;
      let z = s;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
      return (z ^ (z >>> 16)) >>> 0;
    };
    this.a = next();
    this.b = next();
    this.c = next();
    this.d = next() | 1;
  }
  /** Uniform on (0, 1). */
  uniform(): number {
    const r = Math.imul(rotl(Math.imul(this.b, 5), 7), 9) >>> 0;
    const t = (this.b << 9) >>> 0;
    this.c ^= this.a;
    this.d ^= this.b;
    this.b ^= this.c;
    this.a ^= this.d;
    this.c ^= t;
    this.d = rotl(this.d, 11);
    return (r + 0.5) / 4294967296;
  }
  gauss(): number {
    if (this.has) {
      this.has = false;
      return this.spare;
    }
    const u = this.uniform();
    const v = this.uniform();
    const r = Math.sqrt(-2 * Math.log(u));
    this.spare = r * Math.sin(2 * Math.PI * v);
    this.has = true;
    return r * Math.cos(2 * Math.PI * v);
  }
}
const rotl = (x: number, k: number) => ((x << k) | (x >>> (32 - k))) >>> 0;

/**
 * Monte Carlo of an analysed stage with matched devices: per-device Pelgrom
 * mismatch on top of global NMOS and PMOS variation (independent), about the
 * solved operating point. Streams the statistics; allocation-free per sample.
 */
export function mismatchMonteCarlo(
  stage: PairStage & { readonly components: Readonly<Record<string, number>>; readonly supplies: { vdd: number; vss?: number } },
  analysis: StageAnalysis,
  opts: MonteCarloOptions,
): MonteCarloResult {
  const n = opts.samples;
  if (!Number.isInteger(n) || n < 2 || n > maxSamples)
    throw new InputError(n, `a whole number of samples from 2 to ${maxSamples} (statistics stream in constant memory; the bound keeps a run within minutes)`, "mismatchMonteCarlo: samples");
  const plan = buildPlan(stage, analysis);
  const nf = plan.figures.length;
  if (opts.keep && n * nf * 8 > maxKeptBytes)
    throw new InputError(n, `at most ${Math.floor(maxKeptBytes / (8 * nf))} samples when every sample is kept (${nf} figures × 8 bytes within ${maxKeptBytes / 1048576} MiB): sample counts beyond memory; run without keep for statistics only`, "mismatchMonteCarlo: samples");
  const seed = opts.seed ?? 1;
  const rng = new Normal(seed);
  const devs = plan.devices;
  const nd = devs.length;
  // Random variables: per device ΔVt and Δβ, then NMOS Vt, NMOS k′, PMOS Vt, PMOS k′.
  const nv = 2 * nd + 4;
  const names: string[] = [];
  for (const d of devs) names.push(`${d.name} Vt`, `${d.name} β`);
  names.push("NMOS global Vt", "NMOS global k′", "PMOS global Vt", "PMOS global k′");
  const z = new Float64Array(nv);
  const vt = new Float64Array(nd);
  const k = new Float64Array(nd);
  const fig = new Float64Array(nf);
  const sum = new Float64Array(nf);
  const sum2 = new Float64Array(nf);
  const lo = new Float64Array(nf).fill(Infinity);
  const hi = new Float64Array(nf).fill(-Infinity);
  const zsum = new Float64Array(nv);
  const yz = new Float64Array(nf * nv);
  const ok = new Float64Array(plan.checks.length);
  const pass = new Uint8Array(plan.checks.length);
  const kept = opts.keep ? plan.figures.map(() => new Float64Array(n)) : undefined;
  const gN = opts.nmos ?? {};
  const gP = opts.pmos ?? {};
  const sgN = gN.sigmaVt ?? 0;
  const skN = gN.sigmaK ?? 0;
  const sgP = gP.sigmaVt ?? 0;
  const skP = gP.sigmaK ?? 0;
  const lim = opts.limits ?? {};
  const t0 = performance.now();
  for (let s = 0; s < n; s++) {
    for (let j = 0; j < nv; j++) z[j] = rng.gauss();
    const dvtN = (gN.cornerVt ?? 0) + sgN * z[2 * nd]!;
    const dkN = (gN.cornerK ?? 0) + skN * z[2 * nd + 1]!;
    const dvtP = (gP.cornerVt ?? 0) + sgP * z[2 * nd + 2]!;
    const dkP = (gP.cornerK ?? 0) + skP * z[2 * nd + 3]!;
    for (let i = 0; i < nd; i++) {
      const d = devs[i]!;
      vt[i] = d.vt + d.sVt * z[2 * i]! + (d.nmos ? dvtN : dvtP);
      k[i] = d.k * (1 + d.sB * z[2 * i + 1]!) * (1 + (d.nmos ? dkN : dkP));
    }
    evaluate(plan.kind, plan.p, vt, k, fig, pass, lim);
    for (let f = 0; f < nf; f++) {
      const y = fig[f]!;
      sum[f] = sum[f]! + y;
      sum2[f] = sum2[f]! + y * y;
      if (y < lo[f]!) lo[f] = y;
      if (y > hi[f]!) hi[f] = y;
      const row = f * nv;
      for (let j = 0; j < nv; j++) yz[row + j] = yz[row + j]! + y * z[j]!;
      if (kept) kept[f]![s] = y;
    }
    for (let j = 0; j < nv; j++) zsum[j] = zsum[j]! + z[j]!;
    for (let c = 0; c < ok.length; c++) ok[c] = ok[c]! + pass[c]!;
  }
  const seconds = (performance.now() - t0) / 1000;
  const figures: FigureStatistics[] = plan.figures.map((f, i) => {
    const mean = sum[i]! / n;
    const varY = Math.max(0, sum2[i]! / n - mean * mean) * (n / (n - 1));
    const sens = names
      .map((variable, j) => {
        // cov(y, z_j) = E[y·z_j] − E[y]·E[z_j]; var(z_j) = 1, so the share is cov²/var(y).
        const cov = yz[i * nv + j]! / n - mean * (zsum[j]! / n);
        return { variable, share: varY > 0 ? (cov * cov) / varY : 0 };
      })
      .filter((x) => x.share > 1e-4)
      .sort((a, b) => b.share - a.share);
    return { name: f.name, unit: f.unit, mean, sigma: Math.sqrt(varY), min: lo[i]!, max: hi[i]!, sensitivity: sens };
  });
  const checks = plan.checks.map((name, c) => ({ name, passed: ok[c]!, yield: ok[c]! / n }));
  const result: MonteCarloResult = { samples: n, seed, figures, checks, rate: seconds > 0 ? (nd * n) / seconds : Infinity };
  if (kept) {
    const byName: Record<string, Float64Array> = {};
    plan.figures.forEach((f, i) => (byName[f.name] = kept[i]!));
    return { ...result, kept: byName };
  }
  return result;
}

/**
 * One sample: square law, λ frozen at the operating point. Device order as in
 * buildPlan. Pairs: balance of the two sides (equal drain voltages for
 * resistive loads, the load mirror's copy for a mirror load), the offset as
 * the gate-voltage difference that holds it. Mirrors: the output current
 * against its nominal. Writes figures and check results; allocates nothing.
 */
function evaluate(kind: Kind, p: Float64Array, vt: Float64Array, k: Float64Array, fig: Float64Array, pass: Uint8Array, lim: NonNullable<MonteCarloOptions["limits"]>): void {
  const vdr = p[0]!;
  const vsr = p[1]!;
  const sign = p[2]!;
  if (kind === "mirror") {
    const iref = p[3]!;
    const iout = p[4]!;
    // The reference sets VGS; the output copies it: Iout = (k2/2)·(VGS − Vt2)², nominal ratio iout/iref.
    const vgs = vt[0]! + Math.sqrt((2 * iref) / k[0]!);
    const ov = vgs - vt[1]!;
    const out = ov > 0 ? 0.5 * k[1]! * ov * ov : 0;
    const err = out / iout - 1;
    fig[0] = err;
    pass[0] = lim.maxCurrentError === undefined || Math.abs(err) <= lim.maxCurrentError ? 1 : 0;
    if (p[5]! > 0) {
      // Cascode gate: held (wide swing) or the top of the reference stack, VSR + VGS1 + VGS3.
      const vg = p[6]! > 0 ? p[7]! : vsr + vgs + vt[2]! + Math.sqrt((2 * iref) / k[2]!);
      const cmp = vg - vt[3]!;
      fig[1] = sign * cmp;
      pass[1] = lim.outputVoltage === undefined || sign * lim.outputVoltage >= cmp ? 1 : 0;
    }
    return;
  }
  // Pairs. Tail current: ideal, or M5 (last device) at its solved VGS.
  const tailDev = p[5]! > 0;
  const last = k.length - 1;
  let itail = p[3]!;
  let vovTail = 0;
  if (tailDev) {
    vovTail = p[4]! - vt[last]!;
    itail = vovTail > 0 ? 0.5 * k[last]! * vovTail * vovTail : 0;
  }
  let i1 = itail / 2;
  if (p[7]! > 0) {
    // Mirror load: I1 = I3, I4 = (k4/2)·(√(2·I1/k3) + Vt3 − Vt4)² = I2 = Itail − I1, a quadratic in u = √I1.
    const a = Math.sqrt(2 / k[2]!);
    const dv = vt[2]! - vt[3]!;
    const A = 1 + 0.5 * k[3]! * a * a;
    const B = k[3]! * a * dv;
    const C = 0.5 * k[3]! * dv * dv - itail;
    const u = (-B + Math.sqrt(Math.max(0, B * B - 4 * A * C))) / (2 * A);
    i1 = u * u;
  }
  const i2 = itail - i1;
  const vgs1 = vt[0]! + Math.sqrt((2 * Math.max(i1, 0)) / k[0]!);
  const vgs2 = vt[1]! + Math.sqrt((2 * Math.max(i2, 0)) / k[1]!);
  const off = sign * (vgs1 - vgs2);
  fig[0] = off;
  fig[1] = itail;
  // Input common-mode range at balance (device polarity), then absolute.
  const vovIn = Math.sqrt(itail / k[0]!);
  const low = vsr + vovTail + vt[0]! + vovIn;
  const high = p[7]! > 0 ? vdr - vt[2]! - Math.sqrt(itail / k[2]!) + vt[0]! : vdr - (p[6]! * itail) / 2 + vt[0]!;
  fig[2] = sign > 0 ? low : -high;
  fig[3] = sign > 0 ? high : -low;
  pass[0] = lim.maxOffset === undefined || Math.abs(off) <= lim.maxOffset ? 1 : 0;
  pass[1] = lim.commonModeMin === undefined || fig[2]! <= lim.commonModeMin ? 1 : 0;
  pass[2] = lim.commonModeMax === undefined || fig[3]! >= lim.commonModeMax ? 1 : 0;
}
