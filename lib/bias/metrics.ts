/**
 * Stage metrics at the operating point: small-signal gain, input and output
 * resistance for the usual amplifier views (common source with and without
 * degeneration, source follower, common gate, drain feedback), output swing
 * limits, and checks with margins. Each figure is a catalog formula, recorded
 * when a Derivation is given. Signal figures are unloaded (no load resistor,
 * coupling and bypass capacitors ideal) — hand-analysis figures to verify by
 * simulation.
 */
import * as bf from "../formulas/bias.formulas.js";
import { dimensions, type Dimension, type Ohms, type Ratio, type Siemens, type Volts } from "../quantity.js";
import { checkMargin, type Derivation, type Severity } from "../record/derivation.js";
import type { SolvedStage } from "./stage.js";
import { ratingChecks } from "../device/discrete-part.js";
import type { AmplifierMetrics, StageCheck, SwingLimits } from "./topology.js";

type Fn = { fn: (...a: any[]) => number };
function calc<F extends Fn>(f: F, args: Parameters<F["fn"]>, rec: Derivation | undefined, because?: string): number {
  const r = f.fn(...args);
  rec?.step(f as any, args as unknown as number[], r, because);
  return r;
}

const g = (s: SolvedStage) => ({ gm: s.ss.gm as Siemens, gmb: s.gmbEff as Siemens, gds: s.ss.gds as Siemens });

/** Common-source views with output at the drain: source at AC ground and, with rs > 0, unbypassed. */
export function commonSourceViews(s: SolvedStage, rin: number, rinNote: string, rec?: Derivation, halfCircuit = false): AmplifierMetrics[] {
  const { gm, gmb, gds } = g(s);
  const rd = s.net.rd as Ohms;
  const rs = s.net.rs as Ohms;
  const out: AmplifierMetrics[] = [];
  rec?.note("Common source", halfCircuit ? "Differential half-circuit: the source node is a virtual AC ground." : rs > 0 ? "Source resistor bypassed at signal frequencies (source at AC ground):" : "Source at AC ground:");
  const av = calc(bf.commonSourceGain, [gm, rd, gds], rec);
  const ro = calc(bf.commonSourceOutput, [rd, gds], rec);
  out.push({
    kind: "common-source",
    inputNode: "gate",
    outputNode: "drain",
    gain: av as Ratio,
    rin: rin as Ohms,
    rout: ro as Ohms,
    note: `${halfCircuit ? "differential half-circuit, source at virtual ground" : rs > 0 ? "RS bypassed" : "source at its rail"}; ${rinNote}; unloaded`,
  });
  if (rs > 0 && !halfCircuit) {
    rec?.note("Common source with degeneration", `RS unbypassed; ${s.gmbEff > 0 ? "gmb enters because the body is at the rail" : "body at the source, so gmb does not enter"}:`);
    const avd = calc(bf.degeneratedGain, [gm, rd, gmb, rs, gds], rec);
    const rod = calc(bf.degeneratedOutput, [rd, gm, gmb, rs, gds], rec);
    out.push({
      kind: "common-source-degenerated",
      inputNode: "gate",
      outputNode: "drain",
      gain: avd as Ratio,
      rin: rin as Ohms,
      rout: rod as Ohms,
      note: `RS unbypassed, ro and ${s.gmbEff > 0 ? "gmb" : "no gmb (body at source)"} included; ${rinNote}; unloaded`,
    });
  }
  return out;
}

/** Source follower: input at the gate, output at the source, drain at AC ground. */
export function followerView(s: SolvedStage, rin: number, rinNote: string, rec?: Derivation): AmplifierMetrics {
  const { gm, gmb, gds } = g(s);
  const rs = s.net.rs as Ohms;
  rec?.note("Source follower", `Output at the source, drain at AC ground${s.net.rd > 0 ? " (RD bypassed)" : ""}:`);
  const av = calc(bf.followerGain, [gm, rs, gmb, gds], rec);
  const ro = calc(bf.followerOutput, [rs, gm, gmb, gds], rec);
  return { kind: "source-follower", inputNode: "gate", outputNode: "source", gain: av as Ratio, rin: rin as Ohms, rout: ro as Ohms, note: `ro and ${s.gmbEff > 0 ? "gmb" : "no gmb (body at source)"} included; ${rinNote}; unloaded` };
}

/** Common gate: input at the source (ideal current source in parallel), gate at AC ground, output at the drain. */
export function commonGateView(s: SolvedStage, rec?: Derivation): AmplifierMetrics {
  const { gm, gmb, gds } = g(s);
  const rd = s.net.rd as Ohms;
  rec?.note("Common gate", "Input at the source, gate at AC ground; the ideal bias current source adds no conductance:");
  const av = calc(bf.commonGateGain, [gm, gmb, gds, rd], rec);
  const rin = calc(bf.commonGateInput, [gds, rd, gm, gmb], rec);
  const ro = calc(bf.commonSourceOutput, [rd, gds], rec, "output resistance with the source driven from an ideal voltage source");
  return { kind: "common-gate", inputNode: "source", outputNode: "drain", gain: av as Ratio, rin: rin as Ohms, rout: ro as Ohms, note: "driven from an ideal voltage source; ro and gmb included; unloaded" };
}

/** Drain-feedback stage: input at the gate through a coupling capacitor, RF from drain to gate, source at AC ground. */
export function feedbackView(s: SolvedStage, rf: number, rec?: Derivation): AmplifierMetrics {
  const { gm, gds } = g(s);
  const rd = s.net.rd as Ohms;
  rec?.note("Drain feedback", `Input at the gate, RF from drain to gate, source at AC ground${s.net.rs > 0 ? " (RS bypassed)" : ""}:`);
  const av = calc(bf.feedbackGain, [gm, rf as Ohms, rd, gds], rec);
  const rin = calc(bf.feedbackInput, [rf as Ohms, av as Ratio], rec);
  const ro = calc(bf.feedbackOutput, [rd, rf as Ohms, gds], rec, "input driven from an ideal voltage source");
  return { kind: "common-source", inputNode: "gate", outputNode: "drain", gain: av as Ratio, rin: rin as Ohms, rout: ro as Ohms, note: "RF feedback included (Miller input resistance); ro included; unloaded" };
}

function toAbsolute(s: SolvedStage, node: string, uq: number, uUp: number, uLo: number, upWhy: string, loWhy: string): SwingLimits {
  const q = s.sign * uq;
  const a = s.sign * uUp;
  const b = s.sign * uLo;
  const upper = Math.max(a, b);
  const lower = Math.min(a, b);
  const flip = s.sign < 0;
  return {
    node,
    quiescent: q as Volts,
    upper: upper as Volts,
    lower: lower as Volts,
    headroomUp: (upper - q) as Volts,
    headroomDown: (q - lower) as Volts,
    upperLimit: flip ? loWhy : upWhy,
    lowerLimit: flip ? upWhy : loWhy,
  };
}

/** Drain swing: towards the drain rail until the device cuts off, towards the source until the triode edge VG − Vt (gate held). */
export function drainSwing(s: SolvedStage, rec?: Derivation): SwingLimits {
  const vmin = calc(bf.triodeEdgeDrain, [s.sol.vg as Volts, s.sol.vt as Volts], rec, "the drain may fall to VG − Vt before the device leaves saturation");
  const up = s.net.rd > 0 ? s.net.vdr : s.sol.vd;
  rec?.note("Drain swing", `The drain can rise to the drain rail (${s.sign * s.net.vdr} V) as the device cuts off, and fall to the triode edge.`);
  return toAbsolute(s, "drain", s.sol.vd, up, Math.min(vmin, s.sol.vd), s.net.rd > 0 ? "drain rail (device cut off, no drop in RD)" : "drain tied to its rail", "triode edge VD = VG − Vt (gate held at its bias)");
}

/** Follower output swing: up to VD − VOV (triode, overdrive held), down to the source rail (device cuts off). */
export function sourceSwing(s: SolvedStage, rec?: Derivation): SwingLimits {
  const vmax = calc(bf.followerUpperSwing, [s.sol.vd as Volts, s.vov as Volts], rec, "the source may rise to VD − VOV before the device enters triode");
  rec?.note("Source swing", "The source can fall to the source rail, where the device cuts off (RS load).");
  return toAbsolute(s, "source", s.sol.vs, Math.max(vmax, s.sol.vs), s.net.vsr, "triode edge VS = VD − VOV (overdrive held, common practice)", "source rail (device cut off)");
}

/** A pass/fail check with its margin, recorded when `rec` is given (the rule of Derivation.check). */
export function stageCheck(name: string, value: number, dim: Dimension, bounds: { min?: number; max?: number }, rec?: Derivation, detail?: string): StageCheck {
  const { passed, margin } = rec ? rec.check(name, value, dim, bounds, detail) : checkMargin(value, bounds);
  return { name, passed, value, unit: dimensions[dim].unit, ...bounds, margin };
}

const near = 0.05; // V: closer than this to a region edge earns a caution (common practice)

/** Checks with margins and the reader's cautions. */
export function stageMetrics(s: SolvedStage, pDev: number, pTotal: number, rec?: Derivation): { checks: StageCheck[]; findings: string[] } {
  const lim = s.stage.limits ?? {};
  const checks: StageCheck[] = [];
  const found: Array<[Severity, string]> = [];
  const pol = s.sign < 0 ? { gs: "VSG", ds: "VSD", vt: "|Vt|" } : { gs: "VGS", ds: "VDS", vt: "Vt" };
  checks.push(stageCheck(`Overdrive ${pol.gs} − ${pol.vt}`, s.vov, "voltage", { min: lim.minOverdrive ?? 0 }, rec, "the device must be on"));
  if (s.vov > 0) {
    const m = calc(bf.saturationMargin, [s.vds as Volts, s.vov as Volts], rec, "margin to the triode edge");
    checks.push(stageCheck(`Saturation margin ${pol.ds} − VOV`, m, "voltage", { min: lim.minSaturationMargin ?? 0 }, rec));
    if (m < 0) found.push(["warning", `The device is in triode: ${pol.ds} = ${r(s.vds)} V is below VOV = ${r(s.vov)} V by ${r(-m)} V; it acts as a voltage-controlled resistor, not an amplifier.`]);
    else if (m < near) found.push(["caution", `Saturation margin is only ${r(m)} V: tolerances or temperature may push the device into triode.`]);
    if (s.vov < near) found.push(["caution", `Overdrive is only ${r(s.vov)} V: the device is near weak inversion, where the square law overstates the current (common practice).`]);
  } else {
    found.push(["warning", `The device is in cutoff: ${pol.gs} − ${pol.vt} = ${r(s.vov)} V ≤ 0, so no channel forms and ID = 0 (subthreshold leakage not modelled). Raise the gate drive or lower |Vt| to turn it on.`]);
  }
  if (lim.maxDevicePower !== undefined) checks.push(stageCheck("Transistor dissipation", pDev, "power", { max: lim.maxDevicePower }, rec));
  if (lim.maxTotalPower !== undefined) checks.push(stageCheck("Total supply power", pTotal, "power", { max: lim.maxTotalPower }, rec));
  // A discrete part carries its absolute maximum ratings: checked in every analysis that uses it.
  const part = s.stage.device.part;
  if (part) checks.push(...ratingChecks(part, { vgs: s.sol.vg - s.sol.vs, vds: s.vds, id: s.sol.id, power: pDev }, (name, value, dim, max, detail) => stageCheck(name, value, dim, { max }, rec, detail), rec));
  if (s.net.iss > 0) {
    const head = s.sol.vs - s.net.vsr;
    checks.push(stageCheck("Current-source headroom (source node to its rail)", head, "voltage", { min: lim.minSourceHeadroom ?? 0 }, rec, "a real current source needs some voltage across it"));
    if (head < 0) found.push(["warning", `The source node sits ${r(-head)} V beyond the rail the current source returns to: a real current source cannot do that, so this ideal-source result is not realisable.`]);
    found.push(["note", "The bias current source is ideal (infinite output resistance, no compliance limit)."]);
  }
  found.push(["caution", "Hand analysis with the square law is approximate: verify by simulation and measurement, and respect the device ratings."]);
  for (const [sev, text] of found) rec?.find(sev, text);
  return { checks, findings: found.map(([, t]) => t) };
}

const r = (x: number) => String(+x.toPrecision(4));
