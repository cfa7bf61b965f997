/**
 * Device capacitances against ngspice 39 Level 1 (Meyer model with overlaps,
 * junctions from CJ, MJ, PB, CJSW, MJSW, FC and AD, AS, PD, PS). Seeded random
 * cards and bias points cover NMOS and PMOS, saturation, triode, the smoothed
 * band near threshold, depletion, accumulation, reverse body bias, a forward
 * biased junction beyond FC·PB and VDS reversed. ngspice reports what its
 * Level 1 model stamps: @m[cgs] and @m[cgd] include the overlaps CGSO·W and
 * CGDO·W, @m[cgb] includes CGBO·L, @m[cbd] and @m[cbs] are the junction
 * capacitances at the operating point. All five must agree to 1e-6 relative.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { device, operatingPoint, volts, amperesPerVoltSquared, perVolt, sqrtVolts, meters, type DeviceCard } from "../lib/index.js";
import { deviceCapacitances } from "../lib/device/capacitance.js";
import { capacitanceModelParams, spiceNumber } from "../lib/bias/spice.js";
import { Derivation } from "../lib/record/derivation.js";
import { runNgspice } from "./support/ngspice.js";
import { expectReevaluates } from "./support/reevaluate.js";

const seed = 20261202;
const kinds = ["saturation", "triode", "weak", "depletion", "accumulation", "reversed", "forward-junction"] as const;

interface Case {
  card: DeviceCard;
  w: number;
  l: number;
  geom: { ad: number; as: number; pd: number; ps: number };
  vgs: number;
  vds: number;
  vsb: number;
  kind: (typeof kinds)[number];
}

const caseArb = (i: number) =>
  fc
    .record({
      pmos: fc.boolean(),
      vt0: fc.double({ min: 0.4, max: 1.0, noNaN: true }),
      kp: fc.double({ min: 20e-6, max: 200e-6, noNaN: true }),
      lambda: fc.double({ min: 0, max: 0.08, noNaN: true }),
      gamma: fc.double({ min: 0, max: 0.8, noNaN: true }),
      phi: fc.double({ min: 0.5, max: 0.9, noNaN: true }),
      tox: fc.double({ min: 5e-9, max: 60e-9, noNaN: true }),
      cgso: fc.double({ min: 0, max: 6e-10, noNaN: true }),
      cgdo: fc.double({ min: 0, max: 6e-10, noNaN: true }),
      cgbo: fc.double({ min: 0, max: 4e-10, noNaN: true }),
      cj: fc.double({ min: 1e-4, max: 1e-3, noNaN: true }),
      mj: fc.double({ min: 0.3, max: 0.6, noNaN: true }),
      pb: fc.double({ min: 0.6, max: 1.0, noNaN: true }),
      cjsw: fc.double({ min: 1e-11, max: 5e-10, noNaN: true }),
      mjsw: fc.double({ min: 0.2, max: 0.5, noNaN: true }),
      w: fc.double({ min: 2e-6, max: 100e-6, noNaN: true }),
      l: fc.double({ min: 0.5e-6, max: 5e-6, noNaN: true }),
      ldif: fc.double({ min: 1e-6, max: 5e-6, noNaN: true }),
      a: fc.double({ min: 0.05, max: 0.95, noNaN: true }),
      b: fc.double({ min: 0.05, max: 0.95, noNaN: true }),
      vsb: fc.double({ min: 0, max: 2, noNaN: true }),
    })
    .map((r): Case => {
      const kind = kinds[i % kinds.length]!;
      const s = r.pmos ? -1 : 1;
      const card: DeviceCard = {
        name: `c${i}`,
        polarity: r.pmos ? "pmos" : "nmos",
        vt0: volts(s * r.vt0),
        kp: amperesPerVoltSquared(r.kp),
        lambda: perVolt(r.lambda),
        gamma: sqrtVolts(r.gamma),
        phi: volts(r.phi),
        capacitance: { tox: meters(r.tox), cgso: r.cgso as never, cgdo: r.cgdo as never, cgbo: r.cgbo as never, cj: r.cj as never, mj: r.mj as never, pb: volts(r.pb), cjsw: r.cjsw as never, mjsw: r.mjsw as never },
        provenance: "invented: seeded random oracle card",
      };
      // Bias in device polarity, chosen relative to the zero-bias threshold; the body effect moves Vt up, so bands are wide.
      let vgs = 0;
      let vds = 0;
      let vsb = r.vsb;
      const vt = r.vt0 + r.gamma * (Math.sqrt(r.phi + vsb) - Math.sqrt(r.phi));
      switch (kind) {
        case "saturation":
          vgs = vt + 0.2 + 2 * r.a;
          vds = vgs - vt + 0.1 + 3 * r.b;
          break;
        case "triode":
        case "reversed":
          vgs = vt + 0.5 + 2 * r.a;
          vds = (vgs - vt) * (0.1 + 0.8 * r.b);
          break;
        case "weak":
          vgs = vt - (r.phi / 2) * 0.9 * r.a;
          vds = 1 + r.b;
          break;
        case "depletion":
          vgs = vt - r.phi * (0.55 + 0.4 * r.a);
          vds = 1 + r.b;
          break;
        case "accumulation":
          vgs = vt - r.phi - 0.2 - r.a;
          vds = 1 + r.b;
          break;
        case "forward-junction":
          vsb = -(0.45 + 0.1 * r.a) * r.pb; // body above the source by more than FC·PB with FC = 0.5 (default)
          vgs = vt + 0.5 + r.a;
          vds = 2 + r.b;
          break;
      }
      if (kind === "reversed") vds = -vds;
      const ad = r.w * r.ldif * (0.5 + r.a);
      return { card, w: r.w, l: r.l, geom: { ad, as: r.w * r.ldif, pd: 2 * (r.w + r.ldif), ps: 2 * (r.w + r.ldif) * (0.5 + r.b) }, vgs: s * vgs, vds: s * vds, vsb: s * vsb, kind };
    });

const cases: Case[] = Array.from({ length: 70 }, (_, i) => fc.sample(caseArb(i), { seed: seed + i, numRuns: 1 })[0]!);

describe("device capacitances against ngspice 39 Level 1", () => {
  it("Cgs, Cgd, Cgb, Cbd, Cbs agree to 1e-6 relative in every region, NMOS and PMOS", () => {
    const lines: string[] = [];
    const prints: string[] = [];
    cases.forEach((c, i) => {
      lines.push(`.model m${i} ${c.card.polarity} level=1 vto=${spiceNumber(c.card.vt0)} kp=${spiceNumber(c.card.kp)} lambda=${spiceNumber(c.card.lambda!)} gamma=${spiceNumber(c.card.gamma!)} phi=${spiceNumber(c.card.phi!)}${Object.entries(capacitanceModelParams(c.card)).map(([k, v]) => ` ${k}=${spiceNumber(v)}`).join("")}`);
      // Source at 0 V; gate, drain and body by their voltages to the source.
      lines.push(`vg${i} g${i} 0 ${spiceNumber(c.vgs)}`, `vd${i} d${i} 0 ${spiceNumber(c.vds)}`, `vb${i} b${i} 0 ${spiceNumber(-c.vsb)}`);
      lines.push(`m${i} d${i} g${i} 0 b${i} m${i} W=${spiceNumber(c.w)} L=${spiceNumber(c.l)} AD=${spiceNumber(c.geom.ad)} AS=${spiceNumber(c.geom.as)} PD=${spiceNumber(c.geom.pd)} PS=${spiceNumber(c.geom.ps)}`);
      for (const q of ["cgs", "cgd", "cgb", "cbd", "cbs"]) prints.push(`print @m${i}[${q}]`);
    });
    const got = new Map(runNgspice({ circuit: lines.join("\n"), control: ["op", ...prints].join("\n") }));
    const seen = new Set<string>();
    cases.forEach((c, i) => {
      const dev = { ...device(c.card, meters(c.w), meters(c.l)), diffusion: c.geom as never };
      const op = operatingPoint(dev, { vgs: volts(c.vgs), vds: volts(c.vds), vsb: volts(c.vsb) });
      const rec = new Derivation("capacitances");
      const ours = deviceCapacitances(dev, op, "oracle", rec);
      if (i < 14) expectReevaluates(rec);
      const pairs: Array<[string, number]> = [
        ["cgs", ours.cgs],
        ["cgd", ours.cgd],
        ["cgb", ours.cgb],
        ["cbd", ours.cdb],
        ["cbs", ours.csb],
      ];
      for (const [q, v] of pairs) {
        const ref = got.get(`@m${i}[${q}]`);
        expect(ref, `@m${i}[${q}] printed`).toBeDefined();
        const tol = 1e-6 * Math.max(Math.abs(ref!), 1e-18);
        expect(Math.abs(v - ref!), `${c.kind} ${c.card.polarity} case ${i} ${q}: ours ${v} ngspice ${ref}`).toBeLessThanOrEqual(tol);
      }
      seen.add(`${c.kind}/${c.card.polarity}`);
    });
    expect(seen.size).toBeGreaterThanOrEqual(10);
  });
});
