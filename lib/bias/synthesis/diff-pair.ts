/**
 * Design of the differential pair with resistive loads from a specification
 * (device polarity, the tail at the source-side rail):
 *
 *   common mode to cover VIC,min … VIC,max (absolute), designed at their middle;
 *   M1/M2 sized for ITAIL/2 at the stated overdrive (or width) by the card's model;
 *   RD from the output node VD = VDR − RD·ITAIL/2, or from the gain |Adm| = gm·(RD ∥ ro);
 *   VD must stay above VIC,max − Vt + margin (M1 saturated at the highest input);
 *   the common source at VIC,min − VGS1 leaves the tail its headroom: an ideal tail
 *   needs the margin, a tail transistor (tail.l) takes VOV5 = headroom − margin and
 *   its gate bias VTAIL = VSR + Vt + VOV5.
 *
 * RD is then chosen from the series by re-solving (on-chip resistors: "exact").
 * Failure mode: InfeasibleError in numbers when the range, the output or the
 * gain leaves no room.
 */
import { InfeasibleError, InputError } from "../../errors.js";
import type { Meters, Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import type { Stage } from "../topology.js";
import type { PairFigures } from "../topologies/diff-pair.js";
import { fmt } from "../topologies/two-transistor.js";
import { checkSpecBase, deviceRails, figure, type SpecBase, type SynthesisResult } from "./common.js";
import { recordSpec } from "./core.js";
import { chooseAndSolve, defaultMargin, netlistResult, positive, sizeTransistor, transconductances } from "./netlist-design.js";

/** On-chip or board-level pair; no power ratings (the resistors run at microwatts). */
export interface DiffPairSpec extends Omit<SpecBase, "dissipation"> {
  readonly topology: "diff-pair";
  /** Input common-mode range to cover (absolute volts). */
  readonly commonMode: { readonly min: Volts; readonly max: Volts };
  /** Drain node (output common mode, absolute) or differential gain magnitude; mid-swing when omitted. */
  readonly drain?: { readonly vd: Volts } | { readonly gain: number };
  /** A tail transistor of this length (same card); an ideal tail current when omitted. */
  readonly tail?: { readonly l: Meters };
  /** Saturation margin kept at each limit; 0.1 V when omitted. */
  readonly margin?: Volts;
}

const origin = "diff-pair spec";

export function synthesizeDiffPair(spec: DiffPairSpec, rec?: Derivation): SynthesisResult {
  checkSpecBase(spec, origin);
  const { vdr, vsr, s } = deviceRails(spec.card, spec.supplies);
  const card = spec.card;
  const vt = s * card.vt0;
  if (!(vt > 0)) throw new InputError(card.vt0, "an enhancement device (|Vt0| > 0 in its polarity)", `${origin}.card.vt0`);
  const cm = spec.commonMode;
  if (!cm || typeof cm !== "object") throw new InputError(cm, "commonMode { min, max } in V (absolute)", `${origin}.commonMode`, "invalid-design");
  for (const k of ["min", "max"] as const) if (typeof cm[k] !== "number" || !Number.isFinite(cm[k])) throw new InputError(cm[k], "a finite voltage in V (absolute)", `${origin}.commonMode.${k}`, "invalid-design");
  if (!(cm.max >= cm.min)) throw new InputError(cm.max, `a highest common mode ≥ the lowest (${fmt(cm.min)} V)`, `${origin}.commonMode.max`, "invalid-design");
  for (const k of ["min", "max"] as const)
    if (cm[k] < (spec.supplies.vss ?? 0) || cm[k] > spec.supplies.vdd) throw new InputError(cm[k], `a common mode within the rails ${fmt(spec.supplies.vss ?? 0)} … ${fmt(spec.supplies.vdd)} V`, `${origin}.commonMode.${k}`);
  const m = spec.margin === undefined ? defaultMargin : positive(spec.margin, `${origin}.margin`, "a saturation margin in V");
  const lo = Math.min(s * cm.min, s * cm.max);
  const hi = Math.max(s * cm.min, s * cm.max);
  const half = spec.id / 2;
  recordSpec(spec, origin, rec);
  rec?.input("VIC,min", cm.min, "voltage", `${origin}.commonMode.min`);
  rec?.input("VIC,max", cm.max, "voltage", `${origin}.commonMode.max`);
  rec?.assume("Every device through its own model; the input pair's body effect (body at a rail) is left to the re-solve.");

  const vic = (lo + hi) / 2;
  const top = hi - vt + m; // lowest output that keeps M1 saturated at the highest input
  // Output node and RD: iterate the sizing (λ makes W depend on VDS) with the output.
  let vd = spec.drain && "vd" in spec.drain ? s * spec.drain.vd : (top + vdr) / 2;
  let sized = sizeTransistor(card, spec.sizing, half, Math.max(vd - (vic - vt - (("vov" in spec.sizing && spec.sizing.vov) || 0.2)), 0.05), `${origin}.sizing`);
  let rd = 0;
  for (let it = 0; it < 4; it++) {
    const vs = vic - sized.vgs;
    const { gm, gds } = transconductances(card, sized, vd - vs);
    if (spec.drain && "gain" in spec.drain) {
      const g = positive(spec.drain.gain, `${origin}.drain.gain`, "a gain magnitude");
      const inv = gm / g - gds;
      if (!(inv > 0))
        throw new InfeasibleError(`a differential gain of ${fmt(g)} exceeds what the input pair gives with no load (gm/gds = ${fmt(gm / gds)} at VOV = ${fmt(sized.vov)} V): lengthen the devices or lower the overdrive`, `${origin}.drain.gain`);
      rd = 1 / inv;
      vd = vdr - rd * half;
    } else rd = (vdr - vd) / half;
    if (!(rd > 0) || vd < top) break;
    sized = sizeTransistor(card, spec.sizing, half, vd - vs, `${origin}.sizing`);
  }
  if (!(rd > 0)) throw new InfeasibleError(`the output node ${fmt(s * vd)} V leaves no drop for the load resistors (drain-side rail ${fmt(s * vdr)} V)`, `${origin}.drain.vd`);
  if (vd < top)
    throw new InfeasibleError(
      `the output node ${fmt(s * vd)} V (RD = ${fmt(rd)} Ω carrying ${fmt(half)} A) is beyond ${fmt(s * top)} V = VIC,max − Vt + margin (${fmt(s * hi)} − ${fmt(vt)} + ${fmt(m)} V, device polarity): M1 would leave saturation at the highest common mode. Expected a smaller gain or drop across RD, or a lower highest common mode`,
      `${origin}.${spec.drain ? ("gain" in spec.drain ? "drain.gain" : "drain.vd") : "commonMode.max"}`,
    );
  sized = sizeTransistor(card, spec.sizing, half, vd - (vic - sized.vgs), `${origin}.sizing`, rec);
  // Tail headroom at the lowest common mode.
  const vsLow = lo - sized.vgs;
  const headroom = vsLow - vsr;
  const tailGate: { vtail?: number; itail?: number } = {};
  let tail: Stage["device"] | undefined;
  if (spec.tail) {
    const l5 = positive(spec.tail.l, `${origin}.tail.l`, "a tail channel length in m") as Meters;
    const vov5 = headroom - m;
    if (!(vov5 >= 0.05))
      throw new InfeasibleError(
        `the tail cannot supply the pair at the lowest common mode ${fmt(cm.min)} V: the common source sits ${fmt(headroom)} V from the rail (VIC,min − VGS1 with VGS1 = ${fmt(sized.vgs)} V), leaving the tail ${fmt(vov5)} V of overdrive after the ${fmt(m)} V margin; expected at least 0.05 V: raise the lowest common mode or lower the input overdrive`,
        `${origin}.commonMode.min`,
      );
    const vsNom = vic - sized.vgs;
    const t = sizeTransistor(card, { vov: vov5, l: l5 }, spec.id, vsNom - vsr, `${origin}.tail`, rec);
    tail = { card, w: t.w, l: t.l };
    tailGate.vtail = s * (vsr + t.vgs);
  } else {
    if (!(headroom >= m))
      throw new InfeasibleError(
        `the tail cannot supply the pair at the lowest common mode ${fmt(cm.min)} V: the common source would sit ${fmt(headroom)} V from its rail, expected at least the ${fmt(m)} V margin: raise the lowest common mode or lower the input overdrive`,
        `${origin}.commonMode.min`,
      );
    tailGate.itail = spec.id;
  }
  const ideal: Stage = {
    topology: "diff-pair",
    name: spec.name ?? "designed differential pair",
    device: { card, w: sized.w, l: sized.l },
    ...(tail ? { devices: { tail } } : {}),
    components: { rd, vcm: s * vic, ...tailGate },
    supplies: spec.supplies,
    ...(spec.body ? { body: spec.body } : {}),
    ...(spec.options ? { options: spec.options } : {}),
    ...(spec.limits ? { limits: spec.limits } : {}),
  };
  const gainTarget = spec.drain && "gain" in spec.drain ? spec.drain.gain : undefined;
  const score = (a: ReturnType<typeof pairOf>) => {
    const p = a.pair;
    const dg = gainTarget ? Math.abs(p.differentialGain) / gainTarget - 1 : (s * a.nodes.d1! - vd) / (vdr - vsr);
    const di = p.tailCurrent / spec.id - 1;
    return Math.hypot(dg, di);
  };
  const chosen = chooseAndSolve(spec, ideal, ["rd"], (a) => score(pairOf(a)), rec);
  const pa = pairOf(chosen.analysis);
  rec?.check("Designed range reaches the lowest common mode", s > 0 ? cm.min - pa.pair.commonModeRange.lower : pa.pair.commonModeRange.upper - cm.min, "voltage", { min: 0 });
  rec?.check("Designed range reaches the highest common mode", s > 0 ? pa.pair.commonModeRange.upper - cm.max : cm.max - pa.pair.commonModeRange.lower, "voltage", { min: 0 });
  return netlistResult({
    topology: "diff-pair",
    card,
    main: sized,
    ideal,
    chosen,
    nodes: { vg: s * vic, vs: s * (vic - sized.vgs), vd: s * vd },
    current: { target: spec.id, achieved: pa.pair.tailCurrent },
    output: { target: s * vd, achieved: pa.nodes.d1! },
    ...(gainTarget ? { gain: figure(gainTarget, Math.abs(pa.pair.differentialGain)) } : {}),
  });
}

const pairOf = (a: unknown) => a as { readonly nodes: Readonly<Record<string, number>>; readonly pair: PairFigures };
