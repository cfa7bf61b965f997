/**
 * Device mismatch by Pelgrom's law (Pelgrom, Duinmaijer & Welbers, "Matching
 * properties of MOS transistors", IEEE JSSC 24(5), 1433–1440, 1989):
 * σ(ΔVt) = AVt/√(W·L) and σ(Δβ/β) = Aβ/√(W·L) for a pair of identical devices,
 * so each device carries σ/√2 of its own.
 *
 * Closed forms (catalog pair.catalog.ts) for the input-referred offset of a
 * differential pair (with and without the load mirror) and of the two-stage
 * amplifier (its second stage and bias mirror referred through the first
 * stage's gain; derivation in DEVELOPERS.md), the current error of a mirror,
 * and the gate area a target offset needs.
 *
 * Monte Carlo: per-device mismatch on top of global (per-polarity, NMOS and
 * PMOS independent) threshold and k′ variation, about the solved operating
 * point. Method: each device is evaluated through its own model (square law,
 * mobility or EKV card: `DeviceModel.current` on its parameter vector, set up
 * once) at its solved VDS and VSB; a sample shifts its gate by ΔVt and scales
 * its current by 1 + Δβ, then re-solves the balance of the circuit (a secant
 * on the gate voltage, to 1e-10 of the current). Figures: the input-referred offset of a pair or of the two-stage amplifier (o1 moved to where M6 carries M7's current), the tail current,
 * the input common-mode range; the output-current error and the compliance of
 * a mirror. Statistics stream (mean, σ, extremes, the yield of every check,
 * and each random variable's share of every figure's variance, the
 * sensitivity ranking) in constant memory. PRNG: xoshiro128** seeded by
 * splitmix32, normals by Box–Muller. The inner loop allocates nothing.
 * Failure modes: InputError for AVt missing, a bad sample count, or samples
 * kept beyond memory.
 */
import { device } from "../device/card.js";
import { evaluateFormula } from "../device/capacitance.js";
import type { VectorCurrent } from "../device/model.js";
import { modelFor, parameterVector } from "../device/models/index.js";
import { ConvergenceError, InfeasibleError, InputError } from "../errors.js";
import * as pf from "../formulas/pair.formulas.js";
import type { Meters, Ratio, SiemensPerAmpere, SquareMeters, Volts, VoltMeters } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import type { DeviceCard } from "../device/card.js";
import type { StageAnalysis, StageDevice } from "./topology.js";
import type { TwoStageAnalysis } from "./topologies/two-stage.js";

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
  /**
   * Variance shares (sum 1): the input pair's ΔVt and Δβ, the load's ΔVt and Δβ, and, for the two-stage
   * amplifier, the second stage and bias mirror (M5–M8, and the load's common level) referred through the first stage's gain.
   */
  readonly shares: { readonly inputVt: number; readonly inputBeta: number; readonly loadVt: number; readonly loadBeta: number; readonly secondStage: number };
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
    return { sigma: s, shares: { inputVt: v1 / t, inputBeta: b1 / t, loadVt: 0, loadBeta: 0, secondStage: 0 } };
  }
  const load = pelgrom(stage.devices!.load!, "devices.load", rec);
  const gm3 = a.devices!.M3!.smallSignal.gm;
  const s = rec
    ? rec.calc(pf.pairOffsetMirrorLoad, [inp.sigmaVt, inp.sigmaBeta, gmId, gm3, gm1, load.sigmaVt, load.sigmaBeta], stage.topology === "two-stage-miller" ? "the first stage" : undefined)
    : pf.pairOffsetMirrorLoad.fn(inp.sigmaVt, inp.sigmaBeta, gmId, gm3, gm1, load.sigmaVt, load.sigmaBeta);
  const v1 = inp.sigmaVt ** 2;
  const b1 = (inp.sigmaBeta / gmId) ** 2;
  const v3 = (gm3 / gm1) ** 2 * load.sigmaVt ** 2;
  const b3 = (load.sigmaBeta / gmId) ** 2;
  let total = s;
  let second = 0;
  if (stage.topology === "two-stage-miller") {
    const g = secondStageSpreads(stage, a, load, rec);
    total = evaluateFormula(pf.twoStageOffset, { sVos1: s, sG6: g.gate6, sG3: g.level3, sG8: g.reference8, A1: g.gain }, rec) as Volts;
    second = (g.gate6 ** 2 + g.level3 ** 2 + g.reference8 ** 2) / g.gain ** 2;
  }
  const t = v1 + b1 + v3 + b3 + second || 1;
  return { sigma: total, shares: { inputVt: v1 / t, inputBeta: b1 / t, loadVt: v3 / t, loadBeta: b3 / t, secondStage: second / t } };
}

/**
 * The two-stage amplifier's mismatch is linearised about (closed form) or sampled around (Monte Carlo) an
 * amplifying point: every device saturated, which the open-loop output only reaches at its balancing input.
 */
function requireAmplifying(a: StageAnalysis, origin: string): void {
  for (const m of ["M2", "M3", "M4", "M5", "M6", "M7", "M8"]) {
    const r = a.devices?.[m]?.region;
    if (r !== "saturation")
      throw new InfeasibleError(`${m} is in ${r ?? "no region"}, not saturation: the offset is defined about an amplifying point. Balance the open-loop output first (inputForOutput gives the input vid that centres it)`, `${origin}: ${m}`);
  }
  if (a.op.region !== "saturation") throw new InfeasibleError(`M1 is in ${a.op.region}, not saturation: balance the open-loop output first (inputForOutput gives the input vid that centres it)`, `${origin}: M1`);
}

/** Pelgrom's law for a device whose mismatch is optional (tail, second stage, bias): 0, and said so, when its card has no AVt. */
function optionalPelgrom(dev: StageDevice, origin: string, rec?: Derivation): PairSigmas {
  if (dev.card.avt !== undefined) return pelgrom(dev, origin, rec);
  rec?.assume(`Card ${dev.card.name} (${origin}) gives no AVt: its mismatch taken as 0.`);
  return { sigmaVt: 0 as Volts, sigmaBeta: 0 as Ratio };
}

/**
 * The two-stage amplifier's second-stage spreads (V) and the first stage's gain magnitude.
 * Linearised about the solved point, every device's ΔVt and Δβ independent: o1 must sit where M6 carries M7's
 * current, while the first stage's symmetric point is the load's own gate level; their difference reaches the
 * input divided by |A1|. M5 and M7 mirror M8, so M8 enters both and cancels when M6 and M3 work at equal gm/ID;
 * the load pair enters through its common part only, which is uncorrelated with its difference in the first
 * stage's term (derivation: DEVELOPERS.md, mismatch). The Monte Carlo solves each sample without linearising.
 */
function secondStageSpreads(stage: PairStage, a: StageAnalysis, load: PairSigmas, rec?: Derivation): { gate6: Volts; level3: Volts; reference8: Volts; gain: Ratio } {
  requireAmplifying(a, "pairOffset");
  const devs = stage.devices!;
  const d = a.devices!;
  const eff = (name: string) => (d[name]!.smallSignal.gm / Math.abs(d[name]!.op.channelCurrent)) as SiemensPerAmpere;
  const s5 = optionalPelgrom(devs.tail!, "devices.tail", rec);
  const s6 = optionalPelgrom(devs.second!, "devices.second", rec);
  const s7 = optionalPelgrom(devs.sink!, "devices.sink", rec);
  const s8 = devs.reference ? optionalPelgrom(devs.reference, "devices.reference", rec) : s5;
  const [g3, g5, g6, g7, g8] = [eff("M3"), eff("M5"), eff("M6"), eff("M7"), eff("M8")];
  const gain = Math.abs((a as TwoStageAnalysis).twoStage.firstStageGain) as Ratio;
  rec?.note("Second stage", `o1 must sit where M6 carries M7's current; its mismatch, and the tail's through the load's level, reach the input divided by the first stage's gain |A1| = ${+gain.toPrecision(4)} (nodal analysis at the solved point).`);
  // by symbol name, so each formula takes what it reads
  const values = {
    sVt5: s5.sigmaVt, sBeta5: s5.sigmaBeta, sVt6: s6.sigmaVt, sBeta6: s6.sigmaBeta, sVt7: s7.sigmaVt, sBeta7: s7.sigmaBeta, sVt8: s8.sigmaVt, sBeta8: s8.sigmaBeta,
    sVtLd: load.sigmaVt, sBetaLd: load.sigmaBeta, gmIdLd: g3, gmId5: g5, gmId6: g6, gmId7: g7, gmId8: g8,
  };
  const gate6 = evaluateFormula(pf.secondStageGateSpread, values, rec) as Volts;
  const level3 = evaluateFormula(pf.loadLevelSpread, values, rec) as Volts;
  const reference8 = evaluateFormula(pf.referenceShare, values, rec, devs.reference ? undefined : "M8 is drawn like the tail M5") as Volts;
  return { gate6, level3, reference8, gain };
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
  /** The limit (of `MonteCarloOptions.limits`) the check counts against; without it every sample passes. */
  readonly limit: keyof NonNullable<MonteCarloOptions["limits"]>;
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

/**
 * A device in the sampling plan: its model's current on its own parameter
 * vector, the solved bias it is held at, the nominal current and gm there, its
 * own mismatch σ (per device), its polarity. Set up once per run.
 */
interface PlanDevice {
  readonly name: string;
  readonly current: VectorCurrent;
  readonly p: Float64Array;
  /** Solved VGS, VDS, VSB in device polarity; VDS follows VGS for a diode-connected device. */
  readonly vgs: number;
  readonly vds: number;
  /** VDS this sample (device polarity): the solved one, except where a sample moves the node (the two-stage's o1). */
  vdsNow: number;
  readonly vsb: number;
  readonly diode: boolean;
  /** Solved |Vt|, channel current magnitude, gm and saturation voltage. */
  readonly vt: number;
  readonly i: number;
  readonly gm: number;
  readonly vdsat: number;
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
  readonly checks: readonly { readonly name: string; readonly limit: CheckYield["limit"] }[];
  /** Numbers the evaluator needs (rails in device polarity, tail, resistor…). */
  readonly p: Float64Array;
}

type DeviceState = { readonly op: StageAnalysis["op"]; readonly smallSignal: { readonly gm: number } };

function planDevice(name: string, st: DeviceState, sd: StageDevice, sigmas: PairSigmas, diode = false): PlanDevice {
  const a = st.op;
  const i = Math.abs(a.channelCurrent);
  const gm = st.smallSignal.gm;
  if (!(i > 0) || !(gm > 0)) throw new InputError(a.region, `a conducting device ${name} at the operating point (Monte Carlo perturbs about it)`, `mismatch: ${name}`);
  const dev = device(sd.card, sd.w, sd.l, `mismatch: ${name}`);
  return {
    name,
    current: modelFor(dev.card).current,
    p: parameterVector(dev),
    vgs: a.vgsDevice,
    vds: a.vdsDevice,
    vdsNow: a.vdsDevice,
    vsb: a.vsbDevice,
    diode,
    vt: Math.abs(a.vt),
    i,
    gm,
    vdsat: a.vdsat,
    sVt: sigmas.sigmaVt / Math.SQRT2,
    sB: sigmas.sigmaBeta / Math.SQRT2,
    nmos: sd.card.polarity === "nmos",
  };
}

function buildPlan(stage: PairStage & { readonly components: Readonly<Record<string, number>>; readonly supplies: { vdd: number; vss?: number } }, a: StageAnalysis): Plan {
  const sign = a.polarity === "nmos" ? 1 : -1;
  const vdd = stage.supplies.vdd;
  const vss = stage.supplies.vss ?? 0;
  const vdr = sign > 0 ? vdd : -vss;
  const vsr = sign > 0 ? vss : -vdd;
  const dev = stage.device;
  const d = a.devices ?? {};
  // The two-stage amplifier: its first stage (five-transistor amplifier) as below, with M5 and the second
  // stage's M7 mirrored from M8 fed by iref, and o1 moved to where M6 carries M7's current.
  if (stage.topology === "diff-pair" || stage.topology === "diff-pair-mirror-load" || stage.topology === "two-stage-miller") {
    const inSig = pelgrom(dev, "device");
    const devices: PlanDevice[] = [planDevice("M1", d.M1 ?? a, dev, inSig), planDevice("M2", d.M2!, dev, inSig)];
    const tail = stage.devices?.tail;
    const mirror = stage.topology !== "diff-pair";
    const twoStage = stage.topology === "two-stage-miller";
    if (mirror) {
      const ld = stage.devices!.load!;
      const ls = pelgrom(ld, "devices.load");
      devices.push(planDevice("M3", d.M3!, ld, ls, true), planDevice("M4", d.M4!, ld, ls));
    }
    const tailAt = tail ? devices.length : -1;
    if (tail) devices.push(planDevice("M5", d.M5!, tail, optionalPelgrom(tail, "devices.tail")));
    if (twoStage) {
      requireAmplifying(a, "mismatchMonteCarlo");
      const sd = stage.devices!;
      const ref = sd.reference ?? tail!;
      devices.push(planDevice("M6", d.M6!, sd.second!, optionalPelgrom(sd.second!, "devices.second")), planDevice("M7", d.M7!, sd.sink!, optionalPelgrom(sd.sink!, "devices.sink")), planDevice("M8", d.M8!, ref, optionalPelgrom(ref, sd.reference ? "devices.reference" : "devices.tail"), true));
    }
    const itail = tail ? 0 : stage.components.itail!;
    // p: rails, sign, ideal tail current, (unused), the tail's index (−1: ideal), rd, mirror flag, two-stage flag, iref
    const p = Float64Array.of(vdr, vsr, sign, itail, 0, tailAt, stage.components.rd ?? 0, mirror ? 1 : 0, twoStage ? 1 : 0, twoStage ? stage.components.iref! : 0);
    return {
      kind: mirror ? "pair-mirror" : "pair-resistive",
      devices,
      figures: [
        { name: "input-referred offset", unit: "V" },
        { name: "tail current", unit: "A" },
        { name: "input common mode, lowest", unit: "V" },
        { name: "input common mode, highest", unit: "V" },
      ],
      checks: [
        { name: "|offset| within its limit", limit: "maxOffset" },
        { name: "lowest input common mode reached", limit: "commonModeMin" },
        { name: "highest input common mode reached", limit: "commonModeMax" },
      ],
      p,
    };
  }
  if (stage.topology === "current-mirror" || stage.topology === "cascode-mirror") {
    const sig = pelgrom(dev, "device");
    const cascode = stage.topology === "cascode-mirror";
    const wide = cascode && stage.components.vcas !== undefined;
    const ref = cascode ? d.M1! : d.reference!;
    // The reference is diode-connected except M1 of the wide-swing mirror (its gate sits on top of the stack).
    const devices: PlanDevice[] = [planDevice("M1", ref, dev, sig, !wide), planDevice("M2", d.M2 ?? a, dev, sig)];
    let vgCas = 0;
    if (cascode) {
      const cd = stage.devices!.cascode!;
      const cs = optionalPelgrom(cd, "devices.cascode");
      devices.push(planDevice("M3", d.M3!, cd, cs, !wide), planDevice("M4", d.M4!, cd, cs));
      vgCas = wide ? sign * stage.components.vcas! : sign * a.nodes.a!;
    }
    const p = Float64Array.of(vdr, vsr, sign, devices[0]!.i, devices[1]!.i, cascode ? 1 : 0, wide ? 1 : 0, vgCas);
    return {
      kind: "mirror",
      devices,
      figures: [
        { name: "output-current error", unit: "" },
        ...(cascode ? [{ name: "output compliance", unit: "V" }] : []),
      ],
      checks: [{ name: "|current error| within its limit", limit: "maxCurrentError" }, ...(cascode ? [{ name: "output above compliance", limit: "outputVoltage" } as const] : [])],
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
  const dvt = new Float64Array(nd);
  const beta = new Float64Array(nd);
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
      dvt[i] = d.sVt * z[2 * i]! + (d.nmos ? dvtN : dvtP);
      beta[i] = (1 + d.sB * z[2 * i + 1]!) * (1 + (d.nmos ? dkN : dkP));
    }
    evaluate(plan.kind, plan.p, devs, dvt, beta, fig, pass, lim);
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
  const checks = plan.checks.map(({ name, limit }, c) => ({ name, limit, passed: ok[c]!, yield: ok[c]! / n }));
  const result: MonteCarloResult = { samples: n, seed, figures, checks, rate: seconds > 0 ? (nd * n) / seconds : Infinity };
  if (kept) {
    const byName: Record<string, Float64Array> = {};
    plan.figures.forEach((f, i) => (byName[f.name] = kept[i]!));
    return { ...result, kept: byName };
  }
  return result;
}

/** Channel current of a perturbed device at gate-source voltage `x` (device polarity): ΔVt enters as a gate shift (exact for every model, whose threshold is gate-referred), Δβ as a factor on the current. */
function perturbed(d: PlanDevice, dvt: number, beta: number, x: number): number {
  return beta * d.current(d.p, x - dvt, d.diode ? x : d.vdsNow, d.vsb);
}

/**
 * The gate-source voltage (device polarity) at which device `a` (and, when
 * given, `b` on the same gate and source) carries `target` in all: a secant
 * iteration from the square-law estimate, the slope kept at its last good
 * value where a device is off, steps limited to 0.5 V. Converged when the
 * current is within 1e-10·target (a gate error of about 1e-10·VOV).
 * Allocation-free. Failure mode: ConvergenceError after 60 steps.
 */
function gateFor(a: PlanDevice, dvtA: number, betaA: number, b: PlanDevice | undefined, dvtB: number, betaB: number, target: number): number {
  const nominal = betaA * a.i + (b ? betaB * b.i : 0);
  const tol = 1e-10 * target + 1e-18;
  const root = Math.sqrt(target / nominal);
  let slope = (betaA * a.gm + (b ? betaB * b.gm : 0)) * root;
  let x0 = a.vgs + (b ? (dvtA + dvtB) / 2 : dvtA) + ((2 * a.i) / a.gm) * (root - 1);
  let f0 = perturbed(a, dvtA, betaA, x0) + (b ? perturbed(b, dvtB, betaB, x0) : 0) - target;
  if (Math.abs(f0) <= tol) return x0;
  let step = Math.max(-maxGateStep, Math.min(maxGateStep, -f0 / slope));
  let x1 = x0 + step;
  for (let it = 0; it < 60; it++) {
    const f1 = perturbed(a, dvtA, betaA, x1) + (b ? perturbed(b, dvtB, betaB, x1) : 0) - target;
    if (Math.abs(f1) <= tol) return x1;
    const s = (f1 - f0) / (x1 - x0);
    if (s > 0 && Number.isFinite(s)) slope = s;
    step = Math.max(-maxGateStep, Math.min(maxGateStep, -f1 / slope));
    x0 = x1;
    f0 = f1;
    x1 += step;
    if (Math.abs(step) <= 1e-15 + 1e-13 * Math.abs(x1)) return x1;
  }
  throw new ConvergenceError(`the gate voltage of ${a.name}${b ? ` and ${b.name}` : ""} for ${target.toExponential(4)} A did not settle in 60 secant steps (last residual ${f0.toExponential(3)} A, expected within 1e-10 of the current)`, "mismatchMonteCarlo");
}
const maxGateStep = 0.5;

/**
 * One sample, each device through its own model at its solved VDS and VSB
 * (the circuit held at its solved point: the offset is the differential
 * input that returns the outputs there). Pairs: the tail current (ideal, or
 * M5 at its solved VGS), the split between the sides (equal for resistive
 * loads; for a mirror load the diode's VGS at which M3 and M4 together carry
 * the tail), each input's VGS for its current, the offset as their
 * difference. Mirrors: the reference VGS for IREF, the output current there
 * against its nominal, and the cascode's compliance. Device order as in
 * buildPlan. Writes figures and check results; allocates nothing.
 */
function evaluate(kind: Kind, p: Float64Array, devs: readonly PlanDevice[], dvt: Float64Array, beta: Float64Array, fig: Float64Array, pass: Uint8Array, lim: NonNullable<MonteCarloOptions["limits"]>): void {
  const vdr = p[0]!;
  const vsr = p[1]!;
  const sign = p[2]!;
  const m1 = devs[0]!;
  const m2 = devs[1]!;
  if (kind === "mirror") {
    const iref = p[3]!;
    const iout = p[4]!;
    const vgs = gateFor(m1, dvt[0]!, beta[0]!, undefined, 0, 0, iref);
    const err = perturbed(m2, dvt[1]!, beta[1]!, vgs) / iout - 1;
    fig[0] = err;
    pass[0] = lim.maxCurrentError === undefined || Math.abs(err) <= lim.maxCurrentError ? 1 : 0;
    if (p[5]! > 0) {
      // Cascode gate: held (wide swing) or the top of the reference stack, VSR + VGS1 + VGS3.
      const vg = p[6]! > 0 ? p[7]! : vsr + vgs + gateFor(devs[2]!, dvt[2]!, beta[2]!, undefined, 0, 0, iref);
      const cmp = vg - (devs[3]!.vt + dvt[3]!);
      fig[1] = sign * cmp;
      pass[1] = lim.outputVoltage === undefined || sign * lim.outputVoltage >= cmp ? 1 : 0;
    }
    return;
  }
  // Pairs. Tail current: ideal, or M5 at its solved VGS (the two-stage's: M8's gate for iref).
  const t = p[5]!;
  let itail = p[3]!;
  let vdsatTail = 0;
  if (t >= 0) {
    const m5 = devs[t]!;
    let vgs5 = m5.vgs;
    if (p[8]! > 0) {
      // Two-stage: M8 carries iref; M7 sinks its mirrored current; o1 (M4's drain, M6's gate) sits where M6
      // carries that current, so M4's and M2's VDS move by the change of M6's VGS (the output held by the loop).
      const [m6, m7, m8] = [devs[t + 1]!, devs[t + 2]!, devs[t + 3]!];
      vgs5 = gateFor(m8, dvt[t + 3]!, beta[t + 3]!, undefined, 0, 0, p[9]!);
      const shift = gateFor(m6, dvt[t + 1]!, beta[t + 1]!, undefined, 0, 0, perturbed(m7, dvt[t + 2]!, beta[t + 2]!, vgs5)) - m6.vgs;
      devs[3]!.vdsNow = devs[3]!.vds + shift;
      m2.vdsNow = m2.vds - shift;
    }
    itail = perturbed(m5, dvt[t]!, beta[t]!, vgs5);
    vdsatTail = m5.vdsat - dvt[t]!;
  }
  let i1 = itail / 2;
  let vgsLoad = 0;
  if (p[7]! > 0) {
    const m3 = devs[2]!;
    vgsLoad = gateFor(m3, dvt[2]!, beta[2]!, devs[3]!, dvt[3]!, beta[3]!, itail);
    i1 = perturbed(m3, dvt[2]!, beta[2]!, vgsLoad);
    // M1's drain is the load's diode: its VDS moves opposite to the diode's VGS
    m1.vdsNow = m1.vds - (vgsLoad - m3.vgs);
  }
  const vgs1 = gateFor(m1, dvt[0]!, beta[0]!, undefined, 0, 0, i1);
  const vgs2 = gateFor(m2, dvt[1]!, beta[1]!, undefined, 0, 0, itail - i1);
  const off = sign * (vgs1 - vgs2);
  fig[0] = off;
  fig[1] = itail;
  // Input common-mode range (device polarity): the common source needs the tail's saturation voltage; M1 stays saturated while its drain is above its gate less Vt1.
  const low = vsr + vdsatTail + (vgs1 + vgs2) / 2;
  const vt1 = m1.vt + dvt[0]!;
  const high = p[7]! > 0 ? vdr - vgsLoad + vt1 : vdr - (p[6]! * itail) / 2 + vt1;
  fig[2] = sign > 0 ? low : -high;
  fig[3] = sign > 0 ? high : -low;
  pass[0] = lim.maxOffset === undefined || Math.abs(off) <= lim.maxOffset ? 1 : 0;
  pass[1] = lim.commonModeMin === undefined || fig[2]! <= lim.commonModeMin ? 1 : 0;
  pass[2] = lim.commonModeMax === undefined || fig[3]! >= lim.commonModeMax ? 1 : 0;
}
