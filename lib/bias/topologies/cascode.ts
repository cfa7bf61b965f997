/**
 * Cascodes, NMOS or PMOS (the polarity of `device`):
 * - `cascode-stage`: common-source M1 (device, gate held at `vg`) under a
 *   cascode M2 (`devices.cascode`, gate held at `vcas`), load `rd` to the
 *   drain-side rail; output at M2's drain.
 * - `cascode-mirror`: reference current `iref` into a stacked reference branch
 *   M3 (cascode) over M1, output branch M4 (cascode) over M2, the output held
 *   at `vout`. Without `vcas` the cascode gates sit at the top of the
 *   reference stack (both reference devices diode-connected); with `vcas` the
 *   cascode gates are held at it and M1/M2's gates tie to the top of the
 *   reference stack (the wide-swing bias), so the lower devices may sit at the
 *   edge of saturation and the compliance drops by one threshold.
 * Solved by nodal analysis in every region.
 */
import { InputError } from "../../errors.js";
import * as pf from "../../formulas/pair.formulas.js";
import type { Amperes, Farads, Ohms, Ratio, Volts } from "../../quantity.js";
import type { Netlist, NetMosfet } from "../circuit.js";
import type { AmplifierMetrics } from "../topology.js";
import { circuitTopology, requireWithinRails, type CircuitBuild, type CircuitTopologySpec } from "./multi-transistor.js";
import { fmt, stageCheck, swingInVolts } from "./two-transistor.js";

export interface CascodeStageComponents {
  readonly vg: Volts;
  readonly vcas: Volts;
  readonly rd: Ohms;
  readonly cload?: Farads;
}

export interface CascodeMirrorComponents {
  readonly iref: Amperes;
  readonly vout: Volts;
  readonly vcas?: Volts;
}

export interface CascodeFigures {
  /** Output resistance looking into the cascode drain (hand formula, Infinity with λ = 0). */
  readonly cascodeResistance: Ohms;
  /** Output compliance (absolute): the output voltage at which the cascode device leaves saturation. */
  readonly compliance: Volts;
  /** Output distance from compliance in device polarity (≥ 0: cascode saturated). */
  readonly complianceMargin: Volts;
}

export interface CascodeStageFigures extends CascodeFigures {
  /** Small-signal gain vout/vg by nodal analysis. */
  readonly gain: number;
  readonly handGain: number;
  /** Output resistance of the stage (RD in parallel with the cascode) by nodal analysis. */
  readonly outputResistance: Ohms;
}

export interface CascodeMirrorFigures extends CascodeFigures {
  readonly referenceCurrent: Amperes;
  readonly outputCurrent: Amperes;
  /** IOUT/IREF. */
  readonly ratio: Ratio;
  /** The cascode gate bias that puts M1/M2 at the edge of saturation (absolute). */
  readonly wideSwingBias: Volts;
  /** The cascode gate bias beyond which the reference cascode M3 leaves saturation (absolute). */
  readonly wideSwingBiasLimit: Volts;
}

const cascodeRole = { meaning: "the cascode device (same polarity)", required: true, polarity: "same" } as const;

export const cascodeStageSpec: CircuitTopologySpec<"cascode-stage", CascodeStageComponents, { cascode: CascodeStageFigures }> = {
  id: "cascode-stage",
  title: "Common-source stage with a cascode device",
  description: "Input M1 (device) with its gate held at vg, cascode M2 (devices.cascode) with its gate held at vcas, load resistor rd from the output (M2's drain) to the drain-side rail.",
  components: [
    { name: "vg", dim: "voltage", required: true, meaning: "gate voltage of the input device (absolute)" },
    { name: "vcas", dim: "voltage", required: true, meaning: "gate voltage of the cascode device (absolute)" },
    { name: "rd", dim: "resistance", required: true, meaning: "load resistor from the output to the drain-side rail" },
    { name: "cload", dim: "capacitance", required: false, meaning: "load capacitance at the output (recorded only)" },
  ],
  roles: { cascode: cascodeRole },
  build(stage, c, main, devs, rails, clm, o): CircuitBuild {
    requireWithinRails(c.vg, rails, `${o}: components.vg`, "an input gate voltage");
    requireWithinRails(c.vcas, rails, `${o}: components.vcas`, "a cascode gate voltage");
    if (!(c.rd > 0)) throw new InputError(c.rd, "a load resistance rd > 0 Ω", `${o}: components.rd`);
    const bodyCas = stage.body === "rail" ? rails.srail : "x";
    const mosfets: NetMosfet[] = [
      { name: "1", role: "input", device: main, d: "x", g: "vg", s: rails.srail, b: rails.srail },
      { name: "2", role: "cascode", device: devs.cascode!, d: "out", g: "vcas", s: "x", b: bodyCas },
    ];
    const net: Netlist = {
      name: `${o} (cascode-stage)`,
      fixed: { vdd: rails.vdd, vss: rails.vss, vg: c.vg, vcas: c.vcas },
      unknown: ["x", "out"],
      resistors: [{ name: "D", a: rails.drail, b: "out", r: c.rd }],
      sources: [],
      mosfets,
      clm,
      guess: { x: c.vcas - rails.sign * (Math.abs(devs.cascode!.card.vt0) + 0.1), out: (rails.vdd + rails.vss) / 2 },
    };
    return { net, main: "1", assumeSaturated: ["M1", "M2"] };
  },
  figures(s, c, rec) {
    const r = s.rails;
    const sign = r.sign;
    const m1 = s.devices.M1!;
    const m2 = s.devices.M2!;
    const rcas = rec
      ? rec.calc(pf.cascodeOutputResistance, [m1.smallSignal.gds, m2.smallSignal.gds, m2.smallSignal.gm, m2.smallSignal.gmb])
      : pf.cascodeOutputResistance.fn(m1.smallSignal.gds, m2.smallSignal.gds, m2.smallSignal.gm, m2.smallSignal.gmb);
    const hAv = rec ? rec.calc(pf.cascodeGain, [m1.smallSignal.gm, c.rd, rcas]) : pf.cascodeGain.fn(m1.smallSignal.gm, c.rd, rcas);
    const av = s.response({ vg: 1 }).out!;
    const ro = s.response({}, { out: 1 }).out!;
    rec?.note("Gain by nodal analysis", `Av = ${fmt(av)}, output resistance ${fmt(ro)} Ω (RD in parallel with the cascode).`);
    const vgc = (sign * c.vcas) as Volts;
    const vtc = Math.abs(m2.op.vt) as Volts;
    const cmp = rec ? rec.calc(pf.cascodeCompliance, [vgc, vtc]) : pf.cascodeCompliance.fn(vgc, vtc);
    const vout = sign * s.sol.nodes.out!;
    const margin = vout - cmp;
    const check = stageCheck("Output above the cascode's compliance (device polarity)", margin, "voltage", { min: s.stage.limits?.minSaturationMargin ?? 0 }, rec, `compliance ${fmt(sign * cmp)} V`);
    const amplifiers: AmplifierMetrics[] = [
      { kind: "cascode", inputNode: "vg", outputNode: "out", gain: av as never, rin: Infinity as Ohms, rout: ro as Ohms, note: "nodal analysis at the solved point; unloaded" },
    ];
    const findings: string[] = [];
    if (m1.region !== "saturation") findings.push(`M1 is in ${m1.region}: raise vcas (device polarity) so M1's drain sits at least VOV1 above its source.`);
    if (m2.region !== "saturation") findings.push(`M2 (cascode) is in ${m2.region}.`);
    return {
      metrics: { amplifiers, swing: [swingInVolts(sign, "out", vout, r.vdr, cmp, "drain-side rail (no drop in RD)", "cascode leaves saturation (VD = VG,cas − Vt)")], checks: [check] },
      findings,
      extra: { cascode: { cascodeResistance: rcas, compliance: (sign * cmp) as Volts, complianceMargin: margin as Volts, gain: av, handGain: hAv, outputResistance: ro as Ohms } },
    };
  },
};

export const cascodeMirrorSpec: CircuitTopologySpec<"cascode-mirror", CascodeMirrorComponents, { cascode: CascodeMirrorFigures }> = {
  id: "cascode-mirror",
  title: "Cascode current mirror",
  description:
    "Reference current iref into M3 (cascode) over M1, output M4 (cascode) over M2 (device: M1/M2; devices.cascode: M3/M4), output held at vout. Without vcas both reference devices are diode-connected; with vcas the cascode gates are held there and M1/M2's gates tie to the top of the reference stack (wide-swing bias). NMOS sinks, PMOS sources.",
  components: [
    { name: "iref", dim: "current", required: true, meaning: "reference current into the reference stack" },
    { name: "vout", dim: "voltage", required: true, meaning: "output voltage held by an ideal source (absolute)" },
    { name: "vcas", dim: "voltage", required: false, meaning: "cascode gate bias for the wide-swing connection (absolute); omit for the stacked-diode mirror" },
  ],
  roles: { cascode: cascodeRole },
  build(stage, c, main, devs, rails, clm, o): CircuitBuild {
    requireWithinRails(c.vout, rails, `${o}: components.vout`, "an output voltage");
    if (c.vcas !== undefined) requireWithinRails(c.vcas, rails, `${o}: components.vcas`, "a cascode gate bias");
    const cas = devs.cascode!;
    const body = (s: string) => (stage.body === "rail" ? rails.srail : s);
    const wide = c.vcas !== undefined;
    const gLow = wide ? "a" : "m";
    const gCas = wide ? "vcas" : "a";
    const mosfets: NetMosfet[] = [
      { name: "1", role: "reference", device: main, d: "m", g: gLow, s: rails.srail, b: rails.srail },
      { name: "2", role: "output", device: main, d: "x", g: gLow, s: rails.srail, b: rails.srail },
      { name: "3", role: "reference cascode", device: cas, d: "a", g: gCas, s: "m", b: body("m") },
      { name: "4", role: "output cascode", device: cas, d: "out", g: gCas, s: "x", b: body("x") },
    ];
    const fixed: Record<string, number> = { vdd: rails.vdd, vss: rails.vss, out: c.vout };
    if (wide) fixed.vcas = c.vcas!;
    const step = Math.abs(main.card.vt0) + 0.3;
    const net: Netlist = {
      name: `${o} (cascode-mirror)`,
      fixed,
      unknown: ["a", "m", "x"],
      resistors: [],
      sources: [rails.sign > 0 ? { name: "REF", from: rails.drail, to: "a", i: c.iref } : { name: "REF", from: "a", to: rails.drail, i: c.iref }],
      mosfets,
      clm,
      guess: { m: rails.sign * (rails.vsr + step), a: rails.sign * (rails.vsr + 2 * step), x: rails.sign * (rails.vsr + step) },
    };
    return { net, main: "2", assumeSaturated: ["M1", "M2", "M3", "M4"] };
  },
  figures(s, c, rec) {
    const r = s.rails;
    const sign = r.sign;
    const m1 = s.devices.M1!;
    const m2 = s.devices.M2!;
    const m3 = s.devices.M3!;
    const m4 = s.devices.M4!;
    const iout = Math.abs(m4.op.channelCurrent);
    const rcas = rec
      ? rec.calc(pf.cascodeOutputResistance, [m2.smallSignal.gds, m4.smallSignal.gds, m4.smallSignal.gm, m4.smallSignal.gmb])
      : pf.cascodeOutputResistance.fn(m2.smallSignal.gds, m4.smallSignal.gds, m4.smallSignal.gm, m4.smallSignal.gmb);
    const vgc = (sign * s.sol.nodes[c.vcas !== undefined ? "vcas" : "a"]!) as Volts;
    const vtc = Math.abs(m4.op.vt) as Volts;
    const cmp = rec ? rec.calc(pf.cascodeCompliance, [vgc, vtc]) : pf.cascodeCompliance.fn(vgc, vtc);
    const margin = sign * c.vout - cmp;
    const vgs3 = Math.abs(m3.op.vgsDevice) as Volts;
    const ws = rec ? rec.calc(pf.wideSwingBias, [r.vsr as Volts, m1.op.vov, vgs3], "M1 at its saturation edge, VDS1 = VOV1") : pf.wideSwingBias.fn(r.vsr as Volts, m1.op.vov, vgs3);
    const check = stageCheck("Output above the cascode mirror's compliance (device polarity)", margin, "voltage", { min: s.stage.limits?.minSaturationMargin ?? 0 }, rec, `compliance ${fmt(sign * cmp)} V`);
    const findings: string[] = [];
    const vt3 = Math.abs(m3.op.vt) as Volts;
    const wsMax = rec ? rec.calc(pf.wideSwingBiasMax, [r.vsr as Volts, Math.abs(m1.op.vgsDevice) as Volts, vt3], "M3 saturated needs VD3 = VGS1 ≥ VG3 − Vt3") : pf.wideSwingBiasMax.fn(r.vsr as Volts, Math.abs(m1.op.vgsDevice) as Volts, vt3);
    if (c.vcas !== undefined && sign * c.vcas > wsMax)
      findings.push(`vcas = ${fmt(c.vcas)} V pushes the reference cascode M3 into triode: the wide-swing bias must stay within ${fmt(sign * ws)} V to ${fmt(sign * wsMax)} V (absolute).`);
    if (c.vcas !== undefined && sign * c.vcas < ws)
      findings.push(`vcas = ${fmt(c.vcas)} V leaves M1 short of saturation: the wide-swing bias needs at least ${fmt(sign * ws)} V (device polarity ${fmt(ws)} V); add a margin for process spread (common practice: 0.1–0.2 V).`);
    if (m4.region !== "saturation") findings.push(`The output cascode M4 is in ${m4.region}: the output is beyond compliance (${fmt(sign * cmp)} V).`);
    findings.push("Mirror accuracy also depends on mismatch between M1 and M2: see the mismatch figures (Pelgrom's law).");
    return {
      metrics: { amplifiers: [], swing: [swingInVolts(sign, "out", sign * c.vout, r.vdr, cmp, "drain-side rail", "output compliance (M4 leaves saturation)")], checks: [check] },
      findings,
      extra: {
        cascode: {
          cascodeResistance: rcas,
          compliance: (sign * cmp) as Volts,
          complianceMargin: margin as Volts,
          referenceCurrent: c.iref,
          outputCurrent: iout as Amperes,
          ratio: (iout / c.iref) as Ratio,
          wideSwingBias: (sign * ws) as Volts,
          wideSwingBiasLimit: (sign * wsMax) as Volts,
        },
      },
    };
  },
};

export const cascodeStage = circuitTopology(cascodeStageSpec);
export const cascodeMirror = circuitTopology(cascodeMirrorSpec);
