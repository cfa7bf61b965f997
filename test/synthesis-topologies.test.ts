import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { netlistSynthesisTopologies, synthesize, synthesisTopologies as allTopologies } from "../lib/bias/synthesis.js";

// The single-transistor and mirror designers share one specification shape; the netlist designers (pairs, cascodes) are tested in synthesis-pairs.test.ts.
const synthesisTopologies = allTopologies.filter((t): t is Exclude<typeof t, "diff-pair" | "diff-pair-mirror-load" | "cascode-stage" | "cascode-mirror"> => !netlistSynthesisTopologies.includes(t));
import { toleranceAnalysis } from "../lib/bias/tolerance.js";
import { thresholdMagnitude } from "../lib/device/threshold.js";
import { InfeasibleError, InputError } from "../lib/errors.js";
import { Derivation } from "../lib/record/derivation.js";
import type { DeviceCard } from "../lib/device/card.js";
import type { Amperes, Meters, Ohms, SqrtVolts, Volts } from "../lib/quantity.js";
import { expectReevaluates } from "./support/reevaluate.js";
import { designShape, type FlatCase } from "./support/design-shape.js";

// Cards invented for the tests.
const nCard = { name: "syn-n (invented)", polarity: "nmos", kp: 200e-6, vt0: 0.6 } as DeviceCard;
const pCard = { name: "syn-p (invented)", polarity: "pmos", kp: 80e-6, vt0: -0.7 } as DeviceCard;
const common = { supplies: { vdd: 5 as Volts }, id: 1e-3 as Amperes, sizing: { vov: 0.3 as Volts, l: 1e-6 as Meters }, series: "exact" as const };

describe("hand calculations with the square law (λ = 0, γ = 0; invented examples)", () => {
  it("fixed gate: VG = Vt + VOV = 0.9 V; VD at mid-swing (5 + 0.9 − 0.6)/2 = 2.65 V → RD = 2.35 kΩ", () => {
    const r = synthesize(designShape({ ...common, topology: "fixed-gate", card: nCard }));
    expect(r.ideal.components).toEqual({ vg: expect.closeTo(0.9, 12), rd: expect.closeTo(2350, 8) });
    expect(r.deviation.id.relative).toBeCloseTo(0, 10);
  });

  it("drain feedback: VD = VG = 0.9 V → RD = 4.1 kΩ; RF for Rin = 200 kΩ gives exactly that input resistance", () => {
    const r = synthesize(designShape({ ...common, topology: "drain-feedback", card: nCard, feedback: { rin: 200e3 as Ohms } }));
    expect(r.ideal.components.rd).toBeCloseTo(4100, 8);
    // RF = (Rin·(1 + gm·RD) − RD) with gm = 2·1 mA/0.3 V, gds = 0.
    expect(r.ideal.components.rf).toBeCloseTo(200e3 * (1 + (2e-3 / 0.3) * 4100) - 4100, 4);
    expect(r.analysis.metrics.amplifiers[0]!.rin).toBeCloseTo(200e3, 4);
    expect(r.analysis.nodes.drain).toBeCloseTo(0.9, 10);
  });

  it("source follower with body at the rail: VS = (5 − 0.3)/2 = 2.35 V → RS = 2.35 kΩ, VG = VS + Vt(VSB = 2.35 V) + VOV", () => {
    const card = { ...nCard, gamma: 0.4, phi: 0.7 } as DeviceCard;
    const r = synthesize(designShape({ ...common, topology: "source-follower", card, body: "rail" }));
    expect(r.ideal.components.rs).toBeCloseTo(2350, 8);
    const vt = thresholdMagnitude(0.6 as Volts, 0.4 as SqrtVolts, 0.7 as Volts, 2.35 as Volts);
    expect(r.ideal.vg).toBeCloseTo(2.35 + vt + 0.3, 12);
    expect(r.analysis.nodes.source).toBeCloseTo(2.35, 9);
  });

  it("current-source bias on ±5 V: a quarter of the 10 V span across the source → VS = −2.5 V, VG = −1.6 V, ISS = ID", () => {
    const r = synthesize(designShape({ ...common, topology: "current-source-bias", card: nCard, supplies: { vdd: 5 as Volts, vss: -5 as Volts } }));
    expect(r.ideal.components.vg).toBeCloseTo(-1.6, 12);
    expect(r.ideal.components.iss).toBe(1e-3);
    // VD = (5 + (−1.6) − 0.6)/2 = 1.4 V → RD = 3.6 kΩ.
    expect(r.ideal.components.rd).toBeCloseTo(3600, 8);
  });

  it("current mirror 1:1: VGS = 0.9 V → RREF = (5 − 0.9)/1 mA = 4.1 kΩ; output halfway between compliance 0.3 V and 5 V → RLOAD = 2.35 kΩ", () => {
    const r = synthesize(designShape({ ...common, topology: "current-mirror", card: nCard }));
    expect(r.ideal.components.rref).toBeCloseTo(4100, 8);
    expect(r.ideal.components.rload).toBeCloseTo(2350, 8);
    expect(r.stage.devices!.reference!.w).toBeCloseTo(r.stage.device.w, 18);
    expect(r.analysis.currents.drainMagnitude).toBeCloseTo(1e-3, 15);
  });

  it("current mirror 1:4 with λ: the reference current is chosen so the output meets IOUT at its own VDS", () => {
    // IOUT = IREF·N·(1 + λ·VDS2)/(1 + λ·VGS1): with VDS2 ≠ VGS1 the reference is not IOUT/N.
    const card = { ...nCard, lambda: 0.05 } as DeviceCard;
    const r = synthesize(designShape({ ...common, topology: "current-mirror", card, ratio: 4 }));
    expect(r.stage.devices!.reference!.w).toBeCloseTo(r.stage.device.w / 4, 18);
    expect(r.deviation.id.relative).toBeCloseTo(0, 10);
    const iref = r.analysis.currents.reference!;
    const vds2 = r.analysis.nodes.drain!;
    const vgs1 = r.analysis.nodes.gate!;
    expect(1e-3 / iref).toBeCloseTo((4 * (1 + 0.05 * vds2)) / (1 + 0.05 * vgs1), 9);
  });

  it("diode-connected PMOS load: VOUT = (0.3 + 5 − 0.7)/2 = 2.3 V, VOV2 = 5 − 2.3 − 0.7 = 2 V → (W/L)2 = 2·0.1 mA/(80 µA/V²·4 V²) = 0.625", () => {
    const r = synthesize(designShape({ ...common, id: 1e-4 as Amperes, topology: "diode-load", card: nCard, load: { card: pCard, l: 1e-6 as Meters } }));
    expect(r.ideal.vd).toBeCloseTo(2.3, 12);
    expect(r.ideal.components.vg).toBeCloseTo(0.9, 12);
    expect(r.stage.devices!.load!.w).toBeCloseTo(0.625e-6, 18);
    expect(r.analysis.nodes.drain).toBeCloseTo(2.3, 9);
    // λ = 0, no body effect: |Av| = gm1/gm2 = VOV2/VOV1 = 2/0.3.
    expect(Math.abs(r.analysis.metrics.amplifiers[0]!.gain)).toBeCloseTo(2 / 0.3, 9);
  });

  it("diode load from a gain, same-type load with the body effect: the analysis gives that gain", () => {
    const card = { ...nCard, lambda: 0.02, gamma: 0.4, phi: 0.7 } as DeviceCard;
    const r = synthesize(designShape({ ...common, id: 1e-4 as Amperes, topology: "diode-load", card, load: { card, l: 1e-6 as Meters }, body: "rail", output: { gain: 3 } }));
    expect(r.deviation.gain!.relative).toBeCloseTo(0, 9);
    expect(r.deviation.id.relative).toBeCloseTo(0, 10);
    expect(() => synthesize(designShape({ ...common, id: 1e-4 as Amperes, topology: "diode-load", card, load: { card, l: 1e-6 as Meters }, body: "rail", output: { gain: 300 } }))).toThrow(/exceeds the most this sizing gives/);
  });

  it("PMOS follower with a stated output voltage mirrors the NMOS equations", () => {
    // PMOS on 5 V, output at 3 V: RS = (5 − 3)/1 mA = 2 kΩ; VG = 3 − 0.7 − 0.3 = 2 V; divider a tenth of ID → RG1 = 3 V/0.1 mA, RG2 = 2 V/0.1 mA.
    const r = synthesize(designShape({ ...common, topology: "source-follower", card: pCard, output: { vs: 3 as Volts } }));
    expect(r.ideal.components.rs).toBeCloseTo(2000, 8);
    expect(r.ideal.components.rg1).toBeCloseTo(30000, 6);
    expect(r.ideal.components.rg2).toBeCloseTo(20000, 6);
  });
});

const specArb = fc.record({
  topology: fc.constantFrom(...synthesisTopologies),
  pmos: fc.boolean(),
  vdd: fc.double({ min: 3, max: 15, noNaN: true }),
  vss: fc.constantFrom(0, -5),
  id: fc.double({ min: 1e-5, max: 1e-2, noNaN: true }),
  vov: fc.double({ min: 0.1, max: 0.5, noNaN: true }),
  vt: fc.double({ min: 0.3, max: 1.0, noNaN: true }),
  kp: fc.double({ min: 2e-5, max: 5e-4, noNaN: true }),
  lambda: fc.constantFrom(0, 0.02),
  gamma: fc.constantFrom(0, 0.4),
  body: fc.constantFrom("source" as const, "rail" as const),
  withSource: fc.boolean(),
  gain: fc.option(fc.double({ min: 1, max: 5, noNaN: true }), { nil: undefined }),
});
type Gen = typeof specArb extends fc.Arbitrary<infer T> ? T : never;
function toSpec(g: Gen, series: FlatCase["series"]): FlatCase {
  const base = {
    card: { name: "random (invented)", polarity: g.pmos ? "pmos" : "nmos", kp: g.kp, vt0: g.pmos ? -g.vt : g.vt, lambda: g.lambda, gamma: g.gamma, phi: 0.7 } as DeviceCard,
    supplies: { vdd: g.vdd as Volts, vss: g.vss as Volts },
    id: g.id as Amperes,
    sizing: { vov: g.vov as Volts, l: 1e-6 as Meters },
    body: g.body,
    series,
  };
  const drain = g.gain !== undefined ? { drain: { gain: g.gain } } : {};
  switch (g.topology) {
    case "four-resistor":
      return { ...base, topology: "four-resistor", ...drain };
    case "fixed-gate":
      return { ...base, topology: "fixed-gate", ...drain, ...(g.withSource ? { source: { fraction: 0.2 } } : {}) };
    case "drain-feedback":
      return { ...base, topology: "drain-feedback", ...(g.withSource ? { source: { fraction: 0.2 } } : {}) };
    case "source-follower":
      return { ...base, topology: "source-follower" };
    case "current-source-bias":
      return { ...base, topology: "current-source-bias", ...drain };
    case "diode-load":
      return {
        ...base,
        topology: "diode-load",
        load: { card: g.withSource ? base.card : ({ ...base.card, name: "load (invented)", polarity: g.pmos ? "nmos" : "pmos", vt0: g.pmos ? g.vt : -g.vt, kp: g.kp / 2 } as DeviceCard), l: 1e-6 as Meters },
        ...(g.gain !== undefined ? { output: { gain: g.gain } } : {}),
      };
    case "current-mirror":
      return { ...base, topology: "current-mirror", ratio: g.withSource ? 2 : 1, ...(g.gain !== undefined ? { load: "source" as const } : {}) };
  }
}
const attempt = (spec: FlatCase) => {
  try {
    return synthesize(designShape(spec));
  } catch (e) {
    if (e instanceof InfeasibleError) return undefined;
    throw e;
  }
};

describe("synthesis followed by analysis, every topology", () => {
  it("with snapping disabled reproduces ID, the output node and the gain", () => {
    const solved = new Map<string, number>();
    fc.assert(
      fc.property(specArb, (g) => {
        const r = attempt(toSpec(g, "exact"));
        if (!r) return;
        solved.set(g.topology, (solved.get(g.topology) ?? 0) + 1);
        expect(Math.abs(r.deviation.id.relative)).toBeLessThan(1e-9);
        expect(Math.abs(r.deviation.output.error)).toBeLessThan(1e-8);
        if (r.deviation.gain) expect(Math.abs(r.deviation.gain.relative)).toBeLessThan(1e-8);
        expect(r.deviation.inSaturation).toBe(true);
      }),
      { numRuns: 250, seed: 11 },
    );
    for (const t of synthesisTopologies) expect(solved.get(t) ?? 0).toBeGreaterThan(10);
  });

  it("with E24/E96 values stays within the corners the values' own deviations explain", () => {
    let solved = 0;
    fc.assert(
      fc.property(specArb, fc.constantFrom("E24" as const, "E96" as const), (g, series) => {
        const r = attempt(toSpec(g, series));
        if (!r || !r.snap) return; // the diode-loaded stage has no resistor to choose
        const d = Math.max(...r.snap.components.map((c) => Math.abs(c.deviation)));
        const t = toleranceAnalysis(r.idealStage, { resistors: d });
        if (!t.allInSaturation) return;
        solved++;
        const node = r.topology === "source-follower" ? "vs" : "vd";
        const achieved = r.analysis.nodes[node === "vs" ? "source" : "drain"]!;
        expect(r.analysis.currents.drainMagnitude!).toBeGreaterThanOrEqual(t.id.min * (1 - 1e-9));
        expect(r.analysis.currents.drainMagnitude!).toBeLessThanOrEqual(t.id.max * (1 + 1e-9));
        expect(achieved).toBeGreaterThanOrEqual(t[node].min - 1e-9);
        expect(achieved).toBeLessThanOrEqual(t[node].max + 1e-9);
      }),
      { numRuns: 80, seed: 5 },
    );
    expect(solved).toBeGreaterThan(30);
  });
});

describe("recorded derivations", () => {
  it("every recorded design step re-evaluates with mathjs units to the recorded result, for every topology and polarity", () => {
    const specs: FlatCase[] = [
      { ...common, series: "E24", topology: "four-resistor", card: { ...nCard, lambda: 0.02, gamma: 0.4, phi: 0.7 } as DeviceCard, body: "rail", drain: { gain: 2 }, bypassed: false, gate: { rin: 50e3 as Ohms } },
      { ...common, series: "E96", topology: "four-resistor", card: pCard, source: { vrs: 1 as Volts } },
      { ...common, series: "E12", topology: "fixed-gate", card: pCard, source: { fraction: 0.2 }, drain: { vd: 1.5 as Volts } },
      { ...common, series: "E24", topology: "drain-feedback", card: { ...nCard, lambda: 0.02 } as DeviceCard, feedback: { rin: 300e3 as Ohms } },
      { ...common, series: "E48", topology: "source-follower", card: pCard, gate: { current: 50e-6 as Amperes } },
      { ...common, series: "E24", topology: "current-source-bias", card: nCard, supplies: { vdd: 5 as Volts, vss: -5 as Volts }, drain: { gain: 8 } },
      { ...common, series: "E24", topology: "current-mirror", card: { ...pCard, lambda: 0.03 } as DeviceCard, ratio: 2 },
      { ...common, topology: "diode-load", card: { ...nCard, lambda: 0.02, gamma: 0.4, phi: 0.7 } as DeviceCard, load: { card: { ...nCard, gamma: 0.4, phi: 0.7 } as DeviceCard, l: 2e-6 as Meters }, body: "rail", output: { gain: 2 } },
    ];
    for (const spec of specs) {
      const rec = new Derivation(`${spec.topology} ${spec.card.polarity}`);
      synthesize(designShape(spec), rec);
      expect(expectReevaluates(rec)).toBeGreaterThan(10);
    }
  });
});

describe("bad and infeasible specifications", () => {
  it("names the topology choices and the offending field", () => {
    expect(() => synthesize(designShape({ ...common, topology: "cascode", card: nCard } as never))).toThrow(/spec.topology: got "cascode", expected one of the topologies with synthesis/);
    expect(() => synthesize(null as never)).toThrow(InputError);
    expect(() => synthesize(designShape({ ...common, topology: "diode-load", card: nCard } as never))).toThrow(/diode-load spec.load: got nothing/);
    expect(() => synthesize(designShape({ ...common, topology: "current-mirror", card: nCard, ratio: 0 }))).toThrow(/current-mirror spec.ratio: got 0/);
    expect(() => synthesize(designShape({ ...common, topology: "source-follower", card: nCard, output: { vs: -1 as Volts } }))).toThrow(InfeasibleError);
    expect(() => synthesize(designShape({ ...common, topology: "drain-feedback", card: nCard, feedback: { rin: 100 as Ohms } }))).toThrow(/below what any RF gives/);
    expect(() => synthesize(designShape({ ...common, topology: "drain-feedback", card: nCard, feedback: { rf: -1 as Ohms } }))).toThrow(/feedback.rf: got -1/);
    expect(() => synthesize(designShape({ ...common, topology: "fixed-gate", card: nCard, drain: { vd: Number.NaN as Volts } }))).toThrow(/drain.vd: got NaN/);
  });

  it("records the design with its sources and the usual caution", () => {
    const rec = new Derivation("follower");
    synthesize(designShape({ ...common, series: "E12", topology: "source-follower", card: nCard }), rec);
    expect(rec.sources).toContain("IEC 60063 (preferred number series for resistors and capacitors)");
    expect(rec.assumptions.some((a) => /mid-swing .*common practice/.test(a))).toBe(true);
    expect(rec.findings.some((f) => f.severity === "caution" && /verify by simulation/.test(f.text))).toBe(true);
    expect(rec.findings.some((f) => /±10 % for E12 per IEC 60063/.test(f.text))).toBe(true);
  });
});
