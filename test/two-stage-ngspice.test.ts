/**
 * Oracle: ngspice 39 Level 1 `.ac` (Debian package ngspice, batch mode) on the
 * decks pinchoff exports for the two-stage Miller amplifier
 * (lib/bias/frequency-spice.ts: differential drive AC ±0.5 V, Cc with its
 * nulling resistor, CL). Seeded random amplifiers, NMOS and PMOS input, with
 * invented Level 1 cards carrying capacitance blocks; the second stage sized
 * for no systematic offset and the open-loop output centred by
 * `inputForOutput`; Cc given, or designed for a target phase margin, with
 * Rz = 0, Rz = 1/gm6, or Rz placing the zero on the second pole.
 *
 * Asserted: the DC gain within 2 % everywhere; where the analysis's own
 * conditions hold (fp2 ≥ 2·GBW, fm ≥ 10·GBW, fp2 ≥ 10·fp1, as the record
 * checks) the unity-gain frequency within 10 % and the phase margin within 3°,
 * and a designed Cc meets its target phase margin in ngspice within 3°; where
 * they do not, the looser 10 % and 5° (the hand model is still close, but
 * nothing states how close).
 */
import { describe, expect, it } from "vitest";
import "../lib/bias/analyze.js";
import { analyzeFrequency, type FrequencyAnalysis } from "../lib/bias/frequency.js";
import { acCircuit } from "../lib/bias/frequency-spice.js";
import type { CompensationSpec } from "../lib/bias/frequency-two-stage.js";
import { inputForOutput, type TwoStageAnalysis, type TwoStageStage } from "../lib/bias/topologies/two-stage.js";
import type { DeviceCard, Polarity } from "../lib/device/card.js";
import { amperes, farads, meters, volts } from "../lib/quantity.js";
import { mulberry32 } from "../lib/random.js";
import { fallsThrough, runAc } from "./support/ac.js";

const rand = mulberry32(20261211);
const span = (lo: number, hi: number) => lo + rand() * (hi - lo);
const logSpan = (lo: number, hi: number) => Math.exp(span(Math.log(lo), Math.log(hi)));

/** An invented Level 1 card with a capacitance block (seeded). */
function invented(pol: Polarity, name: string): DeviceCard {
  const s = pol === "nmos" ? 1 : -1;
  return {
    name,
    polarity: pol,
    kp: (pol === "nmos" ? logSpan(60e-6, 250e-6) : logSpan(20e-6, 90e-6)) as never,
    vt0: volts(s * span(0.4, 0.9)),
    lambda: span(0.02, 0.1) as never,
    gamma: span(0, 0.6) as never,
    phi: volts(span(0.6, 0.85)),
    provenance: "invented: seeded random test card",
    capacitance: { tox: meters(logSpan(5e-9, 25e-9)), cgso: span(1e-10, 4e-10) as never, cgdo: span(1e-10, 4e-10) as never, cgbo: span(0, 2e-10) as never, cj: span(2e-4, 1e-3) as never, mj: span(0.3, 0.5) as never, pb: volts(span(0.7, 0.95)), cjsw: span(1e-10, 4e-10) as never, mjsw: span(0.2, 0.4) as never, diffusionLength: meters(span(0.5e-6, 2e-6)) },
  } as DeviceCard;
}

interface Case {
  readonly id: string;
  readonly stage: TwoStageStage;
  readonly dc: TwoStageAnalysis;
  readonly fa: FrequencyAnalysis;
  readonly target?: number;
}

function randomAmplifier(i: number): Case | undefined {
  const pol: Polarity = rand() < 0.5 ? "nmos" : "pmos";
  const op: Polarity = pol === "nmos" ? "pmos" : "nmos";
  const inCard = invented(pol, `ts-in-${i}`);
  const ldCard = invented(op, `ts-ld-${i}`);
  const tlCard = invented(pol, `ts-tl-${i}`);
  const l = logSpan(0.5e-6, 2e-6);
  const s4 = logSpan(2, 20);
  const s5 = logSpan(2, 20);
  const s7 = s5 * logSpan(1, 6);
  // No systematic offset: (W/L)6/(W/L)4 = 2·(W/L)7/(W/L)5, M6 on the load's card and M7 on the tail's.
  const s6 = (2 * s4 * s7) / s5;
  const dev = (card: DeviceCard, s: number) => ({ card, w: meters(s * l), l: meters(l) });
  const vdd = span(2.5, 5);
  const iref = logSpan(5e-6, 100e-6);
  const stage: TwoStageStage = {
    topology: "two-stage-miller",
    name: `ts${i}`,
    device: dev(inCard, logSpan(2, 40)),
    devices: { load: dev(ldCard, s4), tail: dev(tlCard, s5), second: dev(ldCard, s6), sink: dev(tlCard, s7) },
    components: { iref: amperes(iref), vcm: volts(pol === "nmos" ? span(0.5, 0.7) * vdd : span(0.3, 0.5) * vdd) },
    supplies: { vdd: volts(vdd) },
    body: rand() < 0.5 ? "source" : "rail",
  };
  const cl = farads(logSpan(1e-12, 20e-12));
  const pick = rand();
  const comp: CompensationSpec = pick < 0.35 ? { cc: farads(cl * span(0.2, 1)) } : pick < 0.7 ? { targetPhaseMargin: span(50, 70), nulling: "cancel-zero" } : pick < 0.85 ? { targetPhaseMargin: span(45, 60) } : { cc: farads(cl * span(0.2, 1)), nulling: "cancel-pole" };
  try {
    const centred = inputForOutput(stage);
    const st = { ...stage, components: { ...stage.components, vid: centred.vid } };
    const dc = centred.analysis;
    const all = ["M2", "M3", "M4", "M5", "M6", "M7", "M8"].every((m) => dc.devices?.[m]?.region === "saturation" && dc.devices[m]!.op.saturationMargin > 0.1);
    if (!all || dc.op.saturationMargin < 0.1) return undefined;
    const fa = analyzeFrequency(st, dc, { load: { capacitance: cl }, compensation: comp });
    return { id: `${pol} #${i} ${JSON.stringify(comp)}`, stage: st, dc, fa, ...(comp.targetPhaseMargin !== undefined ? { target: comp.targetPhaseMargin } : {}) };
  } catch {
    return undefined;
  }
}

const cases: Case[] = [];
for (let i = 0; cases.length < 100 && i < 5000; i++) {
  const k = randomAmplifier(i);
  if (k) cases.push(k);
}

const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe("two-stage Miller amplifier against ngspice 39 Level 1 .ac", () => {
  it("unity-gain frequency within 10 % and phase margin within 3° on seeded random amplifiers where the conditions hold", () => {
    expect(cases.length).toBe(100);
    const lines: string[] = [];
    const outs: string[] = [];
    cases.forEach((k, i) => {
      const ac = acCircuit(k.stage as never, k.dc, k.fa, `w${i}_`);
      lines.push(...ac.lines);
      outs.push(ac.output);
    });
    const sweep = { pointsPerDecade: 100, start: 1e-2, stop: 1e11 };
    const mag = runAc(lines.join("\n"), outs, sweep);
    const ph = runAc(lines.join("\n"), outs, sweep, "vp");
    const stats = { amplifiers: cases.length, compared: 0, flagged: 0, designed: 0, worstGain: 0, worstFu: 0, worstPm: 0, worstTarget: 0, pmMin: 180, pmMax: 0, flaggedWorstFu: 0, flaggedWorstPm: 0 };
    const fails: string[] = [];
    const wrap = (x: number) => Math.atan2(Math.sin(x), Math.cos(x));
    /** ngspice's phase margin at its own unity-gain frequency: the lag from DC, unwrapped (the sweep starts where the phase has already left the DC gain's 0 or 180°). */
    const simulatedMargin = (k: Case, i: number, fu: number) => {
      const p = ph.mag[i]!;
      let lag = wrap((k.fa.midbandGain < 0 ? Math.PI : 0) - p[0]!);
      for (let j = 1; j < mag.freq.length && mag.freq[j]! <= fu; j++) lag -= wrap(p[j]! - p[j - 1]!);
      return 180 - (lag * 180) / Math.PI;
    };
    cases.forEach((k, i) => {
      const t = k.fa.twoStage!;
      const m = mag.mag[i]!;
      const eg = rel(m[0]!, t.dcGain);
      stats.worstGain = Math.max(stats.worstGain, eg);
      if (!(eg <= 0.02)) fails.push(`${k.id}: DC gain ${t.dcGain} vs ngspice ${m[0]}`);
      if (t.unityGain === undefined) return;
      const fu = fallsThrough(mag.freq, m, 1)!;
      const eu = rel(t.unityGain, fu);
      const pmSim = simulatedMargin(k, i, fu);
      const dp = Math.abs(t.phaseMargin! - pmSim);
      if (!t.conditionsHold) {
        // Outside the stated conditions the estimates are reported, and held to a looser 10 % and 5°.
        stats.flagged++;
        stats.flaggedWorstFu = Math.max(stats.flaggedWorstFu, eu);
        stats.flaggedWorstPm = Math.max(stats.flaggedWorstPm, dp);
        if (!(eu <= 0.1 && dp <= 5)) fails.push(`${k.id} (conditions not holding): unity gain ${t.unityGain} vs ${fu}, phase margin ${t.phaseMargin} vs ${pmSim}`);
        return;
      }
      stats.compared++;
      stats.worstFu = Math.max(stats.worstFu, eu);
      if (!(eu <= 0.1)) fails.push(`${k.id}: unity gain ${t.unityGain} vs ngspice ${fu}`);
      stats.pmMin = Math.min(stats.pmMin, pmSim);
      stats.pmMax = Math.max(stats.pmMax, pmSim);
      stats.worstPm = Math.max(stats.worstPm, dp);
      if (!(dp <= 3)) fails.push(`${k.id}: phase margin ${t.phaseMargin} vs ngspice ${pmSim}`);
      if (k.target !== undefined) {
        stats.designed++;
        const dt = Math.abs(pmSim - k.target);
        stats.worstTarget = Math.max(stats.worstTarget, dt);
        if (!(dt <= 3)) fails.push(`${k.id}: designed for ${k.target}°, ngspice gives ${pmSim}°`);
      }
    });
    console.log(`two-stage oracle: ${JSON.stringify(stats)}`);
    if (fails.length) console.log(fails.join("\n"));
    expect(fails).toEqual([]);
    expect(stats.compared).toBeGreaterThanOrEqual(30);
    expect(stats.designed).toBeGreaterThanOrEqual(15);
  }, 300_000);
});
