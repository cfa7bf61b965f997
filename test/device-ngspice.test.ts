/**
 * The device model against the ngspice Level 1 oracle (Debian package ngspice,
 * batch mode). Seeded random cards and bias points cover NMOS and PMOS, all
 * three regions, λ ≠ 0, reverse body bias, and a few forward-body-bias and
 * VDS-reversed points. One deck holds every device; each bias set is applied
 * with `alter` and solved with `op`.
 *
 * ngspice's region is inferred from what it reports, using its own rule in
 * the frame it reports (source/drain swapped when VDS is reversed):
 * cutoff when VGS − von ≤ 0, saturation when VDS ≥ vdsat, else triode
 * (von and vdsat as printed by @m[von], @m[vdsat], in device polarity).
 *
 * Oracle cards set IS = 0: the drain/source-body junction diodes are outside
 * the square law, and with IS = 0 only the GMIN conductance (1e-12 S, the
 * ngspice default) across each junction remains. Its drain-body share,
 * GMIN·(VD − VB), is added to our channel current before comparing, so the
 * ID check holds to 1e-6 relative even at small currents.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { device, smallSignal, type DeviceCard, type Region, amperesPerVoltSquared, meters, perVolt, sqrtVolts, volts } from "../lib/index.js";
import { runNgspice } from "./support/ngspice.js";

interface Case {
  card: DeviceCard;
  w: number;
  l: number;
}
interface Bias {
  vgs: number;
  vds: number;
  vsb: number;
  kind: "cutoff" | "triode" | "saturation" | "forward-body" | "reversed";
}

const seed = 20251107;
const devicesPerPolarity = 8;
const pointsPerDevice = 16;

const cardArb = (polarity: "nmos" | "pmos", i: number) =>
  fc.record({
    vt0: fc.double({ min: 0.3, max: 1.0, noNaN: true }),
    kp: fc.double({ min: 20e-6, max: 300e-6, noNaN: true }),
    lambda: fc.oneof({ arbitrary: fc.constant(0), weight: 1 }, { arbitrary: fc.double({ min: 0.005, max: 0.1, noNaN: true }), weight: 4 }),
    gamma: fc.oneof({ arbitrary: fc.constant(0), weight: 1 }, { arbitrary: fc.double({ min: 0.1, max: 0.8, noNaN: true }), weight: 4 }),
    phi: fc.double({ min: 0.5, max: 0.9, noNaN: true }),
    w: fc.double({ min: 1e-6, max: 100e-6, noNaN: true }),
    l: fc.double({ min: 0.5e-6, max: 5e-6, noNaN: true }),
  }).map(
    (r): Case => ({
      card: {
        name: `${polarity}${i}`,
        polarity,
        vt0: volts(polarity === "nmos" ? r.vt0 : -r.vt0),
        kp: amperesPerVoltSquared(r.kp),
        lambda: perVolt(r.lambda),
        gamma: sqrtVolts(r.gamma),
        phi: volts(r.phi),
        provenance: "invented: seeded random oracle card",
      },
      w: r.w,
      l: r.l,
    }),
  );

/** Bias in the device's own polarity, aimed at a region with ≥ 10 mV clearance from its edges. */
const biasArb = fc
  .record({
    kind: fc.constantFrom<Bias["kind"]>("cutoff", "triode", "triode", "saturation", "saturation", "saturation", "forward-body", "reversed"),
    vov: fc.double({ min: 0.05, max: 2, noNaN: true }),
    off: fc.double({ min: 0.01, max: 0.5, noNaN: true }),
    frac: fc.double({ min: 0.05, max: 0.95, noNaN: true }),
    extra: fc.double({ min: 0.01, max: 3, noNaN: true }),
    vsb: fc.double({ min: 0, max: 3, noNaN: true }),
    fwd: fc.double({ min: -0.3, max: -0.01, noNaN: true }),
  });
type BiasDraw = typeof biasArb extends fc.Arbitrary<infer T> ? T : never;

function vtOf(c: DeviceCard, vsb: number): number {
  // Only to aim the random points at a region; the comparison uses ngspice's own von.
  const vt0 = Math.abs(c.vt0);
  const g = c.gamma ?? 0;
  const p = c.phi ?? 0.6;
  return vsb >= 0 ? vt0 + g * (Math.sqrt(p + vsb) - Math.sqrt(p)) : vt0 + (g * vsb) / (2 * Math.sqrt(p));
}

function biasFor(c: DeviceCard, r: BiasDraw): Bias {
  const s = c.polarity === "nmos" ? 1 : -1;
  let g: number, d: number, b: number;
  switch (r.kind) {
    case "cutoff":
      b = r.vsb;
      g = vtOf(c, b) - r.off;
      d = r.extra;
      break;
    case "triode":
      b = r.vsb;
      g = vtOf(c, b) + r.vov;
      d = r.frac * r.vov;
      if (r.vov - d < 0.01) d = r.vov - 0.01;
      break;
    case "saturation":
      b = r.vsb;
      g = vtOf(c, b) + r.vov;
      d = r.vov + r.extra;
      break;
    case "forward-body":
      b = r.fwd;
      g = vtOf(c, b) + r.vov;
      d = r.frac < 0.5 ? r.vov + r.extra : r.frac * r.vov * 0.9;
      break;
    case "reversed":
      // VDS < 0: the drain terminal acts as the source.
      b = r.vsb * 0.3;
      d = -r.frac * 2;
      g = vtOf(c, b + d) + d + r.vov;
      break;
  }
  return { vgs: s * g, vds: s * d, vsb: s * b, kind: r.kind };
}

const cases: Case[] = [
  ...fc.sample(fc.tuple(...Array.from({ length: devicesPerPolarity }, (_, i) => cardArb("nmos", i))), { seed, numRuns: 1 })[0]!,
  ...fc.sample(fc.tuple(...Array.from({ length: devicesPerPolarity }, (_, i) => cardArb("pmos", i))), { seed: seed + 1, numRuns: 1 })[0]!,
];
const rawBias = fc.sample(biasArb, { seed: seed + 2, numRuns: cases.length * pointsPerDevice });
const biases: Bias[][] = cases.map((cs, i) => rawBias.slice(i * pointsPerDevice, (i + 1) * pointsPerDevice).map((r) => biasFor(cs.card, r)));

const n12 = (x: number) => x.toPrecision(15);

function deck(): { circuit: string; control: string } {
  const lines: string[] = [];
  cases.forEach((cs, i) => {
    const c = cs.card;
    lines.push(
      `.model MOD${i} ${c.polarity} level=1 vto=${n12(c.vt0)} kp=${n12(c.kp)} lambda=${n12(c.lambda ?? 0)} gamma=${n12(c.gamma ?? 0)} phi=${n12(c.phi ?? 0.6)} is=0`,
      `M${i} d${i} g${i} 0 b${i} MOD${i} W=${n12(cs.w)} L=${n12(cs.l)}`,
      `VD${i} d${i} 0 0`,
      `VG${i} g${i} 0 0`,
      `VB${i} b${i} 0 0`,
    );
  });
  const ctl: string[] = [];
  for (let j = 0; j < pointsPerDevice; j++) {
    cases.forEach((_, i) => {
      const b = biases[i]![j]!;
      // Source at ground: VB = −VSB.
      ctl.push(`alter VD${i} dc = ${n12(b.vds)}`, `alter VG${i} dc = ${n12(b.vgs)}`, `alter VB${i} dc = ${n12(-b.vsb)}`);
    });
    ctl.push("op");
    cases.forEach((_, i) => {
      for (const q of [`-i(VD${i})`, `@m${i}[gm]`, `@m${i}[gds]`, `@m${i}[gmbs]`, `@m${i}[von]`, `@m${i}[vdsat]`]) ctl.push(`print ${q}`);
    });
  }
  // ngspice 39 in batch mode exits with status 1 after a .control block unless told otherwise.
  ctl.push("quit 0");
  return { circuit: lines.join("\n"), control: ctl.join("\n") };
}

interface Row {
  i: number;
  j: number;
  bias: Bias;
  spice: { id: number; gm: number; gds: number; gmb: number; von: number; vdsat: number };
}

function runOracle(): Row[] {
  let printed: Array<[string, number]>;
  try {
    printed = runNgspice(deck());
  } catch (e) {
    const x = e as { stdout?: string; stderr?: string };
    throw new Error(`ngspice failed: ${String(x.stderr ?? "").slice(-3000)} ${String(x.stdout ?? "").split("\n").filter((l) => !/ = /.test(l)).join("\n").slice(-3000)}`);
  }
  const per = 6;
  const expected = pointsPerDevice * cases.length * per;
  if (printed.length !== expected) throw new Error(`ngspice printed ${printed.length} values, expected ${expected}`);
  const rows: Row[] = [];
  let at = 0;
  for (let j = 0; j < pointsPerDevice; j++)
    for (let i = 0; i < cases.length; i++) {
      const v = printed.slice(at, at + per).map((p) => p[1]);
      at += per;
      rows.push({ i, j, bias: biases[i]![j]!, spice: { id: v[0]!, gm: v[1]!, gds: v[2]!, gmb: v[3]!, von: v[4]!, vdsat: v[5]! } });
    }
  return rows;
}

/** ngspice's region by its own rule, in the frame it reports (swapped when VDS is reversed). */
function spiceRegion(card: DeviceCard, b: Bias, von: number, vdsat: number): Region {
  const s = card.polarity === "nmos" ? 1 : -1;
  const reversed = s * b.vds < 0;
  const vgs = reversed ? b.vgs - b.vds : b.vgs;
  const vds = Math.abs(b.vds);
  if (s * (vgs - von) <= 0) return "cutoff";
  return vds >= s * vdsat ? "saturation" : "triode";
}

const relTol = 1e-6;
const gmin = 1e-12; // S, ngspice default
const currentFloor = 1e-15; // A: printing resolution for the leakage-only currents in cutoff
const conductanceFloor = 1e-15; // S: for exact zeros in cutoff

describe("device model against ngspice Level 1 (Debian ngspice, batch mode)", () => {
  const rows = runOracle();
  const worst = { id: 0, gm: 0, gds: 0, gmb: 0 };

  it(`covers at least 200 points in every region, both polarities, λ ≠ 0, body effect, forward body bias and reversed VDS`, () => {
    expect(rows.length).toBeGreaterThanOrEqual(200);
    const labels = rows.map((r) => `${cases[r.i]!.card.polarity}:${spiceRegion(cases[r.i]!.card, r.bias, r.spice.von, r.spice.vdsat)}`);
    const seen = new Set(labels);
    const counts: Record<string, number> = {};
    for (const l of labels) counts[l] = (counts[l] ?? 0) + 1;
    console.log(`ngspice oracle points by polarity and region: ${JSON.stringify(counts)}; forward body bias ${rows.filter((r) => r.bias.kind === "forward-body").length}, reversed VDS ${rows.filter((r) => r.bias.kind === "reversed").length}`);
    for (const p of ["nmos", "pmos"]) for (const reg of ["cutoff", "triode", "saturation"]) expect(seen, `${p} ${reg}`).toContain(`${p}:${reg}`);
    expect(rows.filter((r) => r.bias.kind === "forward-body").length).toBeGreaterThan(5);
    expect(rows.filter((r) => r.bias.kind === "reversed").length).toBeGreaterThan(5);
    expect(rows.filter((r) => (cases[r.i]!.card.lambda ?? 0) > 0 && r.bias.kind === "saturation").length).toBeGreaterThan(20);
    expect(rows.filter((r) => (cases[r.i]!.card.gamma ?? 0) > 0 && r.bias.vsb * (cases[r.i]!.card.polarity === "nmos" ? 1 : -1) > 0.5).length).toBeGreaterThan(10);
  });

  it("matches region, ID, gm, gds and gmb at every point", () => {
    const failures: string[] = [];
    for (const r of rows) {
      const cs = cases[r.i]!;
      const dev = device(cs.card, meters(cs.w), meters(cs.l));
      const ss = smallSignal(dev, { vgs: volts(r.bias.vgs), vds: volts(r.bias.vds), vsb: volts(r.bias.vsb) });
      const where = `${cs.card.name} point ${r.j} (${r.bias.kind}, VGS=${r.bias.vgs}, VDS=${r.bias.vds}, VSB=${r.bias.vsb})`;
      const region = spiceRegion(cs.card, r.bias, r.spice.von, r.spice.vdsat);
      if (region !== ss.op.region) failures.push(`${where}: region ${ss.op.region}, ngspice ${region}`);
      const cmp = (name: keyof typeof worst, ours: number, theirs: number, floor: number) => {
        const err = Math.abs(ours - theirs);
        if (err > relTol * Math.abs(theirs) + floor) failures.push(`${where}: ${name} ${ours} vs ngspice ${theirs}`);
        if (Math.abs(theirs) > 1e-9) worst[name] = Math.max(worst[name], err / Math.abs(theirs));
      };
      // Drain terminal current = channel current + GMIN leakage from drain to body (VB = −VSB with the source at ground).
      cmp("id", ss.op.id + gmin * (r.bias.vds + r.bias.vsb), r.spice.id, currentFloor);
      cmp("gm", ss.gm, r.spice.gm, conductanceFloor);
      cmp("gds", ss.gds, r.spice.gds, conductanceFloor);
      cmp("gmb", ss.gmb, r.spice.gmb, conductanceFloor);
    }
    console.log(`ngspice Level 1 agreement over ${rows.length} points, max relative error (conducting points): ${JSON.stringify(worst)}`);
    expect(failures).toEqual([]);
  });

  it("is tight enough to see a 10 ppm error in k' (the comparison can fail)", () => {
    let caught = 0;
    for (const r of rows) {
      const cs = cases[r.i]!;
      const off = device({ ...cs.card, kp: amperesPerVoltSquared(cs.card.kp * (1 + 1e-5)) }, meters(cs.w), meters(cs.l));
      const id = smallSignal(off, { vgs: volts(r.bias.vgs), vds: volts(r.bias.vds), vsb: volts(r.bias.vsb) }).op.id + gmin * (r.bias.vds + r.bias.vsb);
      if (Math.abs(id - r.spice.id) > relTol * Math.abs(r.spice.id) + currentFloor) caught++;
    }
    expect(caught).toBeGreaterThan(150);
  });
});
