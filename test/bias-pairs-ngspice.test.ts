/**
 * Oracle: ngspice 39 Level 1 (Debian package ngspice, batch mode). Seeded
 * random differential pairs (resistive and mirror load, ideal or transistor
 * tail, inputs balanced or driven until one side is off), cascode stages,
 * cascode mirrors (stacked-diode and wide-swing bias) and two-stage Miller
 * amplifiers (random sizes, the open-loop output often at a rail), NMOS and PMOS, are
 * solved here and by ngspice from the very decks the topologies export
 * (junction saturation current set to 0 in the test, since the square law has
 * no junction leakage). Every node voltage must agree to 1 µV or 1e-6
 * relative, every drain current to 1e-6 relative or 10 pA, every device's
 * region must agree, and the small-signal gains from our nodal conductance
 * matrix must agree with ngspice's `.tf` to 1e-5 relative.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { analyzeStage, stageCircuit } from "../lib/bias/analyze.js";
import type { Netlist } from "../lib/bias/circuit.js";
import { solveNetlist, smallSignalResponse } from "../lib/bias/circuit.js";
import type { Stage } from "../lib/bias/topology.js";
import type { DeviceCard, Polarity } from "../lib/device/card.js";
import { regionOf, type Region } from "../lib/device/region.js";
import { ConvergenceError, InfeasibleError } from "../lib/errors.js";
import { amperes, meters, ohms, volts } from "../lib/quantity.js";
import { cardArb, logUniform, maybeZero, uniform, unit } from "./support/arbitraries.js";
import { runNgspice } from "./support/ngspice.js";

const other = (p: Polarity): Polarity => (p === "nmos" ? "pmos" : "nmos");
const withLambda = (c: DeviceCard): DeviceCard => ({ ...c, lambda: Math.max(c.lambda ?? 0, 0.01) as DeviceCard["lambda"] & number });

/** Supplies and a helper placing a voltage `u` volts from the source-side rail of a `polarity` device. */
const suppliesArb = fc.record({ vdd: uniform(1.8, 5), neg: maybeZero(uniform(0.5, 2.5), 0.5) });
function place(polarity: Polarity, vdd: number, vss: number, u: number): number {
  const x = polarity === "nmos" ? vss + u : vdd - u;
  return Math.min(vdd, Math.max(vss, x));
}

const devArb = (polarity: Polarity, name: string, lambda = false) =>
  fc.record({ card: cardArb(polarity, name).map((c) => (lambda ? withLambda(c) : c)), w: logUniform(1e-6, 100e-6), l: logUniform(0.5e-6, 5e-6) }).map((d) => ({ card: d.card, w: meters(d.w), l: meters(d.l) }));

function pairArb(polarity: Polarity, mirrorLoad: boolean): fc.Arbitrary<Stage> {
  return fc
    .record({
      s: suppliesArb,
      pair: devArb(polarity, `rand-${polarity}`, mirrorLoad),
      load: devArb(other(polarity), `rand-${other(polarity)}-load`, true),
      tail: devArb(polarity, `rand-${polarity}-tail`),
      idealTail: unit.map((u) => u < 0.5),
      itail: logUniform(5e-6, 1e-3),
      vtailU: uniform(0.4, 2.5),
      rd: logUniform(1e3, 200e3),
      cm: uniform(0.15, 0.85),
      driven: unit.map((u) => u < 0.5),
      vid: uniform(-1.5, 1.5),
      rail: unit.map((u) => u < 0.5),
    })
    .map((r): Stage => {
      const vdd = r.s.vdd;
      const vss = -r.s.neg;
      const vcm = vss + r.cm * (vdd - vss);
      const room = 2 * Math.min(vdd - vcm, vcm - vss);
      const vid = r.driven ? Math.max(-room, Math.min(room, mirrorLoad ? r.vid / 5 : r.vid)) : 0;
      const components: Record<string, number> = { vcm, vid };
      if (!mirrorLoad) components.rd = r.rd;
      if (r.idealTail) components.itail = r.itail;
      else components.vtail = place(polarity, vdd, vss, r.vtailU);
      const devices: Record<string, Stage["device"]> = {};
      if (mirrorLoad) devices.load = r.load;
      if (!r.idealTail) devices.tail = r.tail;
      return {
        topology: mirrorLoad ? "diff-pair-mirror-load" : "diff-pair",
        device: r.pair,
        devices,
        components,
        supplies: { vdd: volts(vdd), vss: volts(vss) },
        body: r.rail ? "rail" : "source",
      };
    });
}

function cascodeStageArb(polarity: Polarity): fc.Arbitrary<Stage> {
  return fc
    .record({ s: suppliesArb, m1: devArb(polarity, `rand-${polarity}`), m2: devArb(polarity, `rand-${polarity}-cas`), vg: uniform(0.2, 2.2), vcas: uniform(0.6, 4), rd: logUniform(1e3, 300e3), rail: unit.map((u) => u < 0.5) })
    .map((r): Stage => {
      const vdd = r.s.vdd;
      const vss = -r.s.neg;
      return {
        topology: "cascode-stage",
        device: r.m1,
        devices: { cascode: r.m2 },
        components: { vg: place(polarity, vdd, vss, r.vg), vcas: place(polarity, vdd, vss, r.vcas), rd: ohms(r.rd) },
        supplies: { vdd: volts(vdd), vss: volts(vss) },
        body: r.rail ? "rail" : "source",
      };
    });
}

function cascodeMirrorArb(polarity: Polarity): fc.Arbitrary<Stage> {
  return fc
    .record({ s: suppliesArb, m1: devArb(polarity, `rand-${polarity}`), m3: devArb(polarity, `rand-${polarity}-cas`), iref: logUniform(1e-6, 500e-6), vout: uniform(0, 1), wide: unit.map((u) => u < 0.5), vcas: uniform(0.6, 3), rail: unit.map((u) => u < 0.5) })
    .map((r): Stage => {
      const vdd = r.s.vdd;
      const vss = -r.s.neg;
      const components: Record<string, number> = { iref: amperes(r.iref), vout: place(polarity, vdd, vss, r.vout * (vdd - vss)) };
      if (r.wide) components.vcas = place(polarity, vdd, vss, r.vcas);
      return { topology: "cascode-mirror", device: r.m1, devices: { cascode: r.m3 }, components, supplies: { vdd: volts(vdd), vss: volts(vss) }, body: r.rail ? "rail" : "source" };
    });
}

/** Two-stage Miller amplifiers: random sizes, so the open-loop output often rails (M6 or M7 in triode); Cc and CL carry no DC current. */
function twoStageArb(polarity: Polarity): fc.Arbitrary<Stage> {
  const op = other(polarity);
  return fc
    .record({
      s: suppliesArb,
      pair: devArb(polarity, `rand-${polarity}`, true),
      load: devArb(op, `rand-${op}-load`, true),
      tail: devArb(polarity, `rand-${polarity}-tail`),
      second: devArb(op, `rand-${op}-second`, true),
      sink: devArb(polarity, `rand-${polarity}-sink`, true),
      ownRef: unit.map((u) => u < 0.5),
      ref: devArb(polarity, `rand-${polarity}-ref`),
      iref: logUniform(2e-6, 300e-6),
      cm: uniform(0.15, 0.85),
      driven: unit.map((u) => u < 0.5),
      vid: uniform(-0.05, 0.05),
      rail: unit.map((u) => u < 0.5),
    })
    .map((r): Stage => {
      const vdd = r.s.vdd;
      const vss = -r.s.neg;
      const devices: Record<string, Stage["device"]> = { load: r.load, tail: r.tail, second: r.second, sink: r.sink };
      if (r.ownRef) devices.reference = r.ref;
      return {
        topology: "two-stage-miller",
        device: r.pair,
        devices,
        components: { iref: amperes(r.iref), vcm: vss + r.cm * (vdd - vss), vid: r.driven ? r.vid : 0, cc: 2e-12, cload: 5e-12 },
        supplies: { vdd: volts(vdd), vss: volts(vss) },
        body: r.rail ? "rail" : "source",
      };
    });
}

function solvable(stage: Stage): boolean {
  try {
    analyzeStage(stage);
    return true;
  } catch (e) {
    if (e instanceof InfeasibleError) return false;
    throw e;
  }
}

/** The small-signal inputs .tf is run for, per topology: output node and the held sources driving it. */
const gains: Record<string, { out: string; inputs: string[] }> = {
  "diff-pair": { out: "d1", inputs: ["in1", "in2"] },
  "diff-pair-mirror-load": { out: "out", inputs: ["in1", "in2"] },
  "cascode-stage": { out: "out", inputs: ["vg"] },
  "two-stage-miller": { out: "out", inputs: ["in1", "in2"] },
};

const perCase = 45;
const tally: Record<string, Record<Region, number>> = {};
let circuits = 0;
let tfCompared = 0;
let worstNode = 0;
let worstGain = 0;
let floatingNodes = 0;
let oracleFailed = 0;
let edgeDevices = 0;
const notCompared: Record<string, number> = {};

const cases: Array<[string, (p: Polarity) => fc.Arbitrary<Stage>, number]> = [
  ["diff-pair", (p) => pairArb(p, false), 9100],
  ["diff-pair-mirror-load", (p) => pairArb(p, true), 9200],
  ["cascode-stage", cascodeStageArb, 9300],
  ["cascode-mirror", cascodeMirrorArb, 9400],
  ["two-stage-miller", twoStageArb, 9500],
];

function compareChunk(stages: Stage[], offset: number, topology: string, polarity: Polarity): void {
  const lines = [".options reltol=1e-10 vntol=1e-12 abstol=1e-16 gmin=1e-18"];
  const control: string[] = ["op"];
  const plans = stages.map((st, j) => {
    const i = offset + j;
    const c = stageCircuit(st, `c${i}_`) as ReturnType<typeof stageCircuit> & { net: Netlist };
    // No junction leakage: the square law has none (ngspice's default IS is 1e-14 A).
    lines.push(...c.lines.map((l) => (l.startsWith(".model") ? `${l} is=0` : l)));
    const unknown = c.net.unknown;
    const names = c.net.mosfets.map((m) => m.name);
    for (const n of unknown) control.push(`print v(${c.nodes[n]})`);
    for (const m of names) control.push(`print i(${c.ammeters![`M${m}`]!.toLowerCase()})`, `print @${c.instances![`M${m}`]!.toLowerCase()}[von]`);
    return { c, unknown, names, i };
  });
  const tfLines: string[] = [];
  stages.forEach((st, j) => {
    const g = gains[st.topology];
    if (!g) return;
    for (const inp of g.inputs) tfLines.push(`tf v(${plans[j]!.c.nodes[g.out]}) Vc${plans[j]!.i}_${inp}`, "print transfer_function");
  });
  let rows: Array<[string, number]>;
  try {
    rows = runNgspice({ circuit: lines.join("\n"), control: [...control, ...tfLines].join("\n") });
  } catch (e) {
    // ngspice found no operating point at all (source stepping and gmin stepping failed): counted, not compared.
    if (!(e instanceof ConvergenceError)) throw e;
    oracleFailed += stages.length;
    return;
  }
  const expected = plans.reduce((acc, q) => acc + q.unknown.length + 2 * q.names.length, 0) + tfLines.length / 2;
  if (rows.length !== expected) {
    // ngspice stopped on an operating point it could not find (it prints nothing further): counted, not compared.
    oracleFailed += stages.length;
    return;
  }
  let k = 0;
  const next = () => {
    expect(k, "ngspice printed fewer values than asked for").toBeLessThan(rows.length);
    return rows[k++]![1];
  };
  const solved = stages.map((st, j) => {
    const { c, unknown, names, i } = plans[j]!;
    const a = analyzeStage(st);
    const where = `${topology} ${polarity} #${i}: ${JSON.stringify(st)}`;
    const spiceV: Record<string, number> = { ...c.net.fixed, "0": 0 };
    const res = solveNetlist(c.net);
    // Read this circuit's printed values first, then check that ngspice's own solution obeys KCL:
    // where ngspice did not converge (it warns and prints its last iterate) the circuit is counted, not compared.
    const printed = [...unknown.map(() => next()), ...names.flatMap(() => [next(), next()])];
    unknown.forEach((n, u) => (spiceV[n] = printed[u]!));
    const spiceId: Record<string, number> = {};
    names.forEach((m, q) => (spiceId[m] = printed[unknown.length + 2 * q]!));
    let kcl = 0;
    const spiceFloating = new Set<string>();
    for (const n of unknown) {
      let sum = 0;
      let mag = 0;
      for (const r of c.net.resistors) {
        const ir = (spiceV[r.a]! - spiceV[r.b]!) / r.r;
        if (r.a === n) (sum += ir), (mag += Math.abs(ir));
        if (r.b === n) (sum -= ir), (mag += Math.abs(ir));
      }
      for (const src of c.net.sources) {
        if (src.from === n) (sum += src.i), (mag += Math.abs(src.i));
        if (src.to === n) (sum -= src.i), (mag += Math.abs(src.i));
      }
      for (const m of c.net.mosfets) {
        const id = spiceId[m.name]!;
        if (m.d === n) (sum += id), (mag += Math.abs(id));
        if (m.s === n) (sum -= id), (mag += Math.abs(id));
      }
      kcl = Math.max(kcl, Math.abs(sum) / Math.max(mag, 1e-9));
      // No current through the node in ngspice's solution either: it floats there too.
      if (mag < 1e-12) spiceFloating.add(n);
    }
    // A node far outside the rails: ngspice settled on a non-physical solution of a circuit with a floating node.
    const railMin = Math.min(st.supplies.vss ?? 0, 0) - 1;
    const railMax = st.supplies.vdd + 1;
    if (kcl > 1e-6 || unknown.some((n) => !(spiceV[n]! >= railMin && spiceV[n]! <= railMax))) {
      oracleFailed++;
      return undefined;
    }
    // A floating node (every device on it off, no current) has no determined voltage; nor has a node set by a
    // device whose gate floats (the two-stage amplifier's output when its first stage is off).
    const undetermined = new Set<string>([...res.floating, ...spiceFloating]);
    const driven = new Set<string>();
    for (let grew = true; grew; ) {
      grew = false;
      for (const m of c.net.mosfets)
        if (undetermined.has(m.g) || driven.has(m.g))
          for (const x of [m.d, m.s])
            if (unknown.includes(x) && !driven.has(x)) {
              driven.add(x);
              undetermined.add(x);
              grew = true;
            }
    }
    let p = 0;
    for (const n of unknown) {
      const ref = printed[p++]!;
      if (undetermined.has(n)) {
        floatingNodes++;
        continue;
      }
      const ours = a.nodes[n]!;
      const err = Math.abs(ours - ref);
      worstNode = Math.max(worstNode, err / Math.max(1, Math.abs(ref)));
      expect(err, `V(${n}) ours ${ours} ngspice ${ref} — ${where}`).toBeLessThanOrEqual(Math.max(1e-6, 1e-6 * Math.abs(ref)));
    }
    let degenerate = res.floating.length > 0 || spiceFloating.size > 0;
    for (const m of names) {
      const id = printed[p++]!;
      const von = printed[p++]!;
      const mos = c.net.mosfets.find((x) => x.name === m)!;
      const dev = a.devices?.[`M${m}`] ?? { op: a.op, region: a.region };
      const ours = dev.op.id;
      // A device whose gate voltage is undetermined carries an undetermined current: counted, not compared.
      const gateUndetermined = undetermined.has(mos.g) || driven.has(mos.d) || driven.has(mos.s);
      if (gateUndetermined) {
        edgeDevices++;
        notCompared[topology] = (notCompared[topology] ?? 0) + 1;
        degenerate = true;
        tally[topology] ??= { cutoff: 0, triode: 0, saturation: 0 };
        tally[topology]![dev.region]++;
        continue;
      }
      expect(Math.abs(ours - id), `I(M${m}) ours ${ours} ngspice ${id} — ${where}`).toBeLessThanOrEqual(Math.max(1e-6 * Math.abs(id), 1e-11));
      // ngspice's region at its own node voltages: threshold von (signed) from the terminal acting as source.
      const ms = mos.device.card.polarity === "nmos" ? 1 : -1;
      const vd = spiceV[mos.d]!;
      const vsrc = spiceV[mos.s]!;
      const swap = ms * (vd - vsrc) < 0;
      const es = swap ? vd : vsrc;
      const ed = swap ? vsrc : vd;
      const r = regionOf(ms * (spiceV[mos.g]! - es) - ms * von, ms * (ed - es));
      // A device with no current in both solutions, at the edge of conduction or on a floating node, has no determined region.
      const onFloating = [mos.d, mos.s, mos.g].some((n) => res.floating.includes(n) || spiceFloating.has(n));
      const edge = Math.abs(id) < 1e-12 && Math.abs(ours) < 1e-12 && (Math.abs(dev.op.vov) < 1e-5 || onFloating);
      if (!edge) expect(dev.region, `M${m} region — ${where}`).toBe(r);
      else {
        edgeDevices++;
        notCompared[topology] = (notCompared[topology] ?? 0) + 1;
        degenerate = true;
      }
      tally[topology] ??= { cutoff: 0, triode: 0, saturation: 0 };
      tally[topology]![dev.region]++;
    }
    circuits++;
    return degenerate ? undefined : res;
  });
  stages.forEach((st, j) => {
    const g = gains[st.topology];
    if (!g) return;
    for (const inp of g.inputs) {
      const ref = next();
      // Gains are compared where both solutions are determined: no floating node, no device at the edge of conduction.
      if (!solved[j]) continue;
      const ours = smallSignalResponse(solved[j]!.compiled, { [inp]: 1 })[g.out]!;
      const err = Math.abs(ours - ref);
      if (Math.abs(ref) > 1e-9) worstGain = Math.max(worstGain, err / Math.abs(ref));
      expect(err, `.tf v(${g.out})/${inp} ours ${ours} ngspice ${ref} — ${topology} ${polarity} #${plans[j]!.i}`).toBeLessThanOrEqual(Math.max(1e-5 * Math.abs(ref), 1e-6));
      tfCompared++;
    }
  });
  expect(k).toBe(rows.length);
}

describe("pairs and cascodes against ngspice 39 Level 1 (Debian ngspice, batch mode)", () => {
  for (const [topology, arb, seed0] of cases)
    for (const polarity of ["nmos", "pmos"] as const)
      it(`${topology} ${polarity}: ${perCase} seeded random circuits agree in every node, drain current, region and .tf gain`, () => {
        const stages = fc.sample(arb(polarity), { seed: seed0 + (polarity === "nmos" ? 0 : 1), numRuns: perCase * 3 }).filter(solvable).slice(0, perCase);
        expect(stages.length).toBe(perCase);
        // Every .tf re-solves the whole deck and one circuit ngspice cannot solve stops the deck, so decks are
        // small: five circuits, and one per deck for the five-transistor amplifier, whose solve takes ngspice longest.
        const chunk = topology === "diff-pair-mirror-load" || topology === "two-stage-miller" ? 1 : 5;
        for (let from = 0; from < stages.length; from += chunk) compareChunk(stages.slice(from, from + chunk), from, topology, polarity);
      }, 120_000);

  it("compared at least 300 circuits with every region and the .tf gains", () => {
    expect(circuits).toBeGreaterThanOrEqual(300);
    expect(oracleFailed).toBeLessThanOrEqual(cases.length * 2 * perCase - 300);
    // The two-stage Miller amplifier: at least 60 of its circuits, both polarities.
    const twoStage = tally["two-stage-miller"]!;
    expect((twoStage.cutoff + twoStage.triode + twoStage.saturation) / 8).toBeGreaterThanOrEqual(60);
    const all = Object.values(tally).reduce((acc, t) => ({ cutoff: acc.cutoff + t.cutoff, triode: acc.triode + t.triode, saturation: acc.saturation + t.saturation }), { cutoff: 0, triode: 0, saturation: 0 });
    expect(all.cutoff).toBeGreaterThanOrEqual(20);
    expect(all.triode).toBeGreaterThanOrEqual(20);
    expect(all.saturation).toBeGreaterThanOrEqual(200);
    expect(tfCompared).toBeGreaterThanOrEqual(150);
    console.log(`pairs/cascodes vs ngspice: ${circuits} circuits compared (${oracleFailed} more where ngspice's own solution failed KCL or left the rails, not compared), regions ${JSON.stringify(tally)}, ${tfCompared} .tf gains, ${floatingNodes} floating nodes and ${edgeDevices} devices at the edge of conduction with no current or with an undetermined gate (not compared; by topology ${JSON.stringify(notCompared)}); worst node deviation ${worstNode.toExponential(2)} (relative to max(1 V, |V|)), worst gain deviation ${worstGain.toExponential(2)}`);
  });
});
