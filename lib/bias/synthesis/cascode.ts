/**
 * Design of the cascode stage and the cascode current mirror from a
 * specification (device polarity, sources of the lower devices at the
 * source-side rail, the cascodes' bodies at their sources unless body is
 * "rail", which the re-solve then accounts for):
 *
 * Cascode stage: M1 at VDS1 = VOV1 + margin, so its drain X sits at
 * VSR + VOV1 + margin; VG = VSR + VGS1; the cascode M2 (cascode.l, overdrive
 * cascode.vov or VOV1) with VCAS = VX + VGS2; the lowest output VX + VOV2 +
 * margin; RD from the output node, or from the gain |Av| = gm1·(RD ∥ Rcas)
 * with Rcas = ro1 + ro2 + gm2·ro1·ro2 (by the cards' models); an output
 * resistance target is checked on Rcas. RD chosen from the series by re-solving.
 *
 * Cascode mirror, wide-swing bias (1:1): M1/M2 at VDS = VOV1 + margin, the
 * cascodes M3/M4 at VOV3 (cascode.vov, else what the compliance target leaves,
 * else VOV1), VCAS = VSR + VOV1 + margin + VGS3, compliance VSR + VOV1 +
 * margin + VOV3; M3 saturated needs VGS1 − (VOV1 + margin) ≥ VOV3, i.e.
 * Vt ≥ VOV3 + margin.
 *
 * Failure mode: InfeasibleError in numbers when a target leaves no room.
 */
import { InfeasibleError, InputError } from "../../errors.js";
import type { Meters, Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import type { Stage, StageAnalysis } from "../topology.js";
import type { CascodeMirrorFigures, CascodeStageFigures } from "../topologies/cascode.js";
import { fmt } from "../topologies/two-transistor.js";
import { checkSpecBase, deviceRails, figure, type SpecBase, type SynthesisResult } from "./common.js";
import { recordSpec } from "./core.js";
import { chooseAndSolve, defaultMargin, netlistResult, positive, sizeTransistor, transconductances, type Sized } from "./netlist-design.js";

/** The cascode device: its length and, optionally, its overdrive (the lower device's when omitted). */
export interface CascodeSizing {
  readonly l: Meters;
  readonly vov?: Volts;
}

/** On-chip stages: no power ratings (those are for discrete parts). */
export interface CascodeStageSpec extends Omit<SpecBase, "dissipation"> {
  readonly topology: "cascode-stage";
  readonly cascode: CascodeSizing;
  /** Output node (absolute) or gain magnitude; mid-swing between the lowest output and the drain rail when omitted. */
  readonly drain?: { readonly vd: Volts } | { readonly gain: number };
  /** Least output resistance looking into the cascode. */
  readonly outputResistance?: number;
  readonly margin?: Volts;
}

/** No resistors: no series to choose from. */
export interface CascodeMirrorSpec extends Omit<SpecBase, "dissipation" | "series" | "candidates"> {
  readonly topology: "cascode-mirror";
  readonly cascode: CascodeSizing;
  /** Output voltage (absolute); halfway between compliance and the drain rail when omitted. */
  readonly output?: { readonly vout: Volts };
  /** The output voltage (absolute) down to which (NMOS; up to which, PMOS) the mirror must hold its current. */
  readonly compliance?: Volts;
  readonly margin?: Volts;
}

function cascodeOf(c: CascodeSizing | undefined, lower: Sized, origin: string): { l: Meters; vov: number } {
  if (!c || typeof c !== "object") throw new InputError(c, "cascode { l, vov? }: the cascode device's length (and overdrive)", `${origin}.cascode`, "invalid-design");
  const l = positive(c.l, `${origin}.cascode.l`, "a channel length in m") as Meters;
  return { l, vov: c.vov === undefined ? lower.vov : positive(c.vov, `${origin}.cascode.vov`, "an overdrive in V") };
}

const common = (spec: SpecBase, origin: string, rec?: Derivation) => {
  checkSpecBase(spec, origin);
  const { vdr, vsr, s } = deviceRails(spec.card, spec.supplies);
  const vt = s * spec.card.vt0;
  if (!(vt > 0)) throw new InputError(spec.card.vt0, "an enhancement device (|Vt0| > 0 in its polarity)", `${origin}.card.vt0`);
  const m = (spec as { margin?: number }).margin === undefined ? defaultMargin : positive((spec as { margin?: number }).margin, `${origin}.margin`, "a saturation margin in V");
  recordSpec(spec, origin, rec);
  return { vdr, vsr, s, vt, m };
};

const stageOf = (spec: SpecBase, topology: string, main: Sized, cas: Sized, components: Record<string, number>): Stage => ({
  topology,
  name: spec.name ?? `designed ${topology}`,
  device: { card: spec.card, w: main.w, l: main.l },
  devices: { cascode: { card: spec.card, w: cas.w, l: cas.l } },
  components,
  supplies: spec.supplies,
  ...(spec.body ? { body: spec.body } : {}),
  ...(spec.options ? { options: spec.options } : {}),
  ...(spec.limits ? { limits: spec.limits } : {}),
});

export function synthesizeCascodeStage(spec: CascodeStageSpec, rec?: Derivation): SynthesisResult {
  const origin = "cascode-stage spec";
  const { vdr, vsr, s, m } = common(spec, origin, rec);
  // M1: its VDS is its overdrive plus the margin; with a width given the overdrive follows (two passes).
  let m1 = sizeTransistor(spec.card, spec.sizing, spec.id, ("vov" in spec.sizing ? spec.sizing.vov : 0.2) + m, `${origin}.sizing`);
  m1 = sizeTransistor(spec.card, spec.sizing, spec.id, m1.vov + m, `${origin}.sizing`, rec);
  const vx = vsr + m1.vov + m;
  const c = cascodeOf(spec.cascode, m1, origin);
  const lowest = vx + c.vov + m;
  const gainTarget = spec.drain && "gain" in spec.drain ? positive(spec.drain.gain, `${origin}.drain.gain`, "a gain magnitude") : undefined;
  let vd = spec.drain && "vd" in spec.drain ? s * spec.drain.vd : (lowest + vdr) / 2;
  let m2 = sizeTransistor(spec.card, { vov: c.vov, l: c.l }, spec.id, Math.max(vd - vx, c.vov + m), `${origin}.cascode`);
  let rd = (vdr - vd) / spec.id;
  let rcas = Infinity;
  for (let it = 0; it < 4; it++) {
    const g1 = transconductances(spec.card, m1, vx - vsr);
    const g2 = transconductances(spec.card, m2, vd - vx);
    rcas = 1 / g1.gds + 1 / g2.gds + g2.gm / (g1.gds * g2.gds);
    if (gainTarget !== undefined) {
      const inv = g1.gm / gainTarget - 1 / rcas;
      if (!(inv > 0))
        throw new InfeasibleError(`a gain of ${fmt(gainTarget)} exceeds gm1·Rcas = ${fmt(g1.gm * rcas)} (the cascode's own output resistance ${fmt(rcas)} Ω with no load): lengthen the devices or lower the overdrive`, `${origin}.drain.gain`);
      rd = 1 / inv;
      vd = vdr - rd * spec.id;
    } else rd = (vdr - vd) / spec.id;
    if (!(rd > 0) || vd < lowest) break;
    m2 = sizeTransistor(spec.card, { vov: c.vov, l: c.l }, spec.id, Math.max(vd - vx, c.vov + m), `${origin}.cascode`);
  }
  if (!(rd > 0) || vd < lowest)
    throw new InfeasibleError(
      `the output node ${fmt(s * vd)} V (RD = ${fmt(rd)} Ω carrying ${fmt(spec.id)} A) must lie between the lowest output ${fmt(s * lowest)} V (VSR + VOV1 + VOV2 + two margins of ${fmt(m)} V) and the drain-side rail ${fmt(s * vdr)} V: lower the gain or the drop across RD, the current, or the overdrives`,
      `${origin}.${gainTarget !== undefined ? "drain.gain" : "drain.vd"}`,
    );
  m2 = sizeTransistor(spec.card, { vov: c.vov, l: c.l }, spec.id, vd - vx, `${origin}.cascode`, rec);
  if (spec.outputResistance !== undefined && rcas < spec.outputResistance)
    throw new InfeasibleError(`the cascode gives ${fmt(rcas)} Ω looking into its drain, below the ${fmt(spec.outputResistance)} Ω asked: lengthen the devices (λ falls with L) or lower the current`, `${origin}.outputResistance`);
  const ideal = stageOf(spec, "cascode-stage", m1, m2, { vg: s * (vsr + m1.vgs), vcas: s * (vx + m2.vgs), rd });
  const fig = (a: StageAnalysis) => (a as unknown as { cascode: CascodeStageFigures }).cascode;
  const score = (a: StageAnalysis) => {
    const dg = gainTarget !== undefined ? Math.abs(fig(a).gain) / gainTarget - 1 : (s * a.nodes.out! - vd) / (vdr - vsr);
    return Math.hypot(dg, a.currents.drain! / spec.id - 1);
  };
  const chosen = chooseAndSolve(spec, ideal, ["rd"], score, rec);
  const f = fig(chosen.analysis);
  if (spec.outputResistance !== undefined) rec?.check("Output resistance into the cascode", f.cascodeResistance, "resistance", { min: spec.outputResistance });
  return netlistResult({
    topology: "cascode-stage",
    card: spec.card,
    main: m1,
    ideal,
    chosen,
    nodes: { vg: s * (vsr + m1.vgs), vs: s * vsr, vd: s * vd },
    current: { target: spec.id, achieved: chosen.analysis.currents.drain! },
    output: { target: s * vd, achieved: chosen.analysis.nodes.out! },
    ...(gainTarget !== undefined ? { gain: figure(gainTarget, Math.abs(f.gain)) } : {}),
  });
}

export function synthesizeCascodeMirror(spec: CascodeMirrorSpec, rec?: Derivation): SynthesisResult {
  const origin = "cascode-mirror spec";
  const { vdr, vsr, s, vt, m } = common(spec, origin, rec);
  let m1 = sizeTransistor(spec.card, spec.sizing, spec.id, ("vov" in spec.sizing ? spec.sizing.vov : 0.2) + m, `${origin}.sizing`);
  m1 = sizeTransistor(spec.card, spec.sizing, spec.id, m1.vov + m, `${origin}.sizing`, rec);
  const vx = vsr + m1.vov + m;
  if (!spec.cascode || typeof spec.cascode !== "object") throw new InputError(spec.cascode, "cascode { l, vov? }", `${origin}.cascode`, "invalid-design");
  const target = spec.compliance === undefined ? undefined : s * spec.compliance;
  if (target !== undefined && !Number.isFinite(target)) throw new InputError(spec.compliance, "a finite voltage in V (absolute)", `${origin}.compliance`);
  // The cascode overdrive: stated, or what the compliance target leaves (at most the lower devices' own), or VOV1.
  const vov3 = spec.cascode.vov !== undefined ? positive(spec.cascode.vov, `${origin}.cascode.vov`, "an overdrive in V") : target !== undefined ? Math.min(target - vx, m1.vov) : m1.vov;
  const compliance = vx + vov3;
  if (!(vov3 >= 0.05) || (target !== undefined && compliance > target + 1e-12))
    throw new InfeasibleError(
      `a compliance of ${fmt(spec.compliance!)} V leaves the cascodes ${fmt(target! - vx)} V of overdrive above VSR + VOV1 + margin = ${fmt(s * vx)} V${spec.cascode.vov !== undefined ? ` (asked ${fmt(spec.cascode.vov)} V)` : ""}; expected at least 0.05 V: lower the lower devices' overdrive or the margin, or accept a higher compliance`,
      `${origin}.compliance`,
    );
  if (vt < vov3 + m)
    throw new InfeasibleError(`the wide-swing bias cannot keep the reference cascode M3 saturated: it needs Vt ≥ VOV3 + margin (${fmt(vov3)} + ${fmt(m)} V), the card's Vt is ${fmt(vt)} V: lower the cascode overdrive or the margin`, `${origin}.cascode.vov`);
  const vout = spec.output ? s * spec.output.vout : (compliance + m + vdr) / 2;
  if (!Number.isFinite(vout) || vout < compliance + m || vout > vdr)
    throw new InfeasibleError(`the output ${fmt(s * vout)} V lies outside the working range ${fmt(s * (compliance + m))} … ${fmt(s * vdr)} V (compliance plus margin to the rail)`, `${origin}.output.vout`);
  const m3 = sizeTransistor(spec.card, { vov: vov3, l: positive(spec.cascode.l, `${origin}.cascode.l`, "a channel length in m") }, spec.id, vsr + m1.vgs - vx, `${origin}.cascode`, rec);
  const vcas = vx + m3.vgs;
  rec?.note("Wide-swing bias", `VCAS = VSR + VOV1 + margin + VGS3 = ${fmt(s * vcas)} V; compliance VSR + VOV1 + margin + VOV3 = ${fmt(s * compliance)} V.`);
  const ideal = stageOf(spec, "cascode-mirror", m1, m3, { iref: spec.id, vout: s * vout, vcas: s * vcas });
  const chosen = chooseAndSolve(spec, ideal, [], () => 0, rec);
  const f = (chosen.analysis as unknown as { cascode: CascodeMirrorFigures }).cascode;
  if (target !== undefined) rec?.check("Compliance within the target (device polarity)", target - s * f.compliance, "voltage", { min: 0 });
  return netlistResult({
    topology: "cascode-mirror",
    card: spec.card,
    main: m1,
    ideal,
    chosen,
    nodes: { vg: s * (vsr + m1.vgs), vs: s * vsr, vd: s * vx },
    current: { target: spec.id, achieved: f.outputCurrent },
    output: { target: s * (target ?? compliance), achieved: f.compliance },
  });
}
