/**
 * The block evaluator generated from the EKV composition (ekvChannelCurrentBlock, through
 * ekv.currents and the fit adapter) against the point-by-point path it must equal: random
 * invented cards and biases over every region, both polarities, negative VDS (drain and source
 * swapped), the underflow where the channel carries nothing, and counts that are not a multiple
 * of the block size. The point path is the reference (it is itself checked against its formulas
 * called one by one in test/formula-catalog.test.ts).
 */
import { describe, expect, it } from "vitest";
import { ekv } from "../lib/device/models/ekv.js";
import { spiceCurrent } from "../lib/device/model.js";
import { ekvChannelCurrent, ekvChannelCurrentBlock } from "../lib/formulas/ekv.formulas.js";
import { blockSize, compositionBlock } from "../lib/formulas/generate.js";
import { fitModelOf } from "../lib/fit/adapter.js";
import { InputError } from "../lib/errors.js";
import type { Sweep } from "../lib/measure/select.js";

let seed = 11;
const rand = () => ((seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0) / 2 ** 32);
const agree = (a: number, b: number) => a === b || Math.abs(a - b) <= 1e-15 * Math.max(Math.abs(a), Math.abs(b));

/** An invented EKV parameter vector (vt0 kp gamma phi lambda theta ecrit thetaB sigma cit, W L T). */
function randomVector(): Float64Array {
  return Float64Array.from([0.3 + 0.6 * rand(), 1e-4 * (0.5 + rand()), rand(), 0.5 + 0.6 * rand(), 0.1 * rand(), 0.5 * rand(), 1e6 + 3e7 * rand(), 0.2 * rand(), 0.05 * rand(), 0.4 * rand(), (1 + 50 * rand()) * 1e-6, (0.2 + 10 * rand()) * 1e-6, 233 + 170 * rand()]);
}

/** Biases from deep weak inversion to strong, triode to saturation, reverse and forward body bias, negative VDS. */
function randomBiases(n: number) {
  const vgs = new Float64Array(n);
  const vds = new Float64Array(n);
  const vsb = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    vgs[i] = -0.5 + 4 * rand();
    vds[i] = rand() < 0.2 ? -1.5 * rand() : rand() < 0.3 ? 0.05 * rand() : 3.3 * rand();
    vsb[i] = rand() < 0.4 ? 0 : -0.3 + 2.3 * rand();
  }
  return { vgs, vds, vsb };
}

describe("EKV block evaluator (generated from the catalog's composition)", () => {
  it("equals the point path at every point: 40 invented cards × 1 000 biases over every region, negative VDS included", () => {
    let regions = { weak: 0, strong: 0, reversed: 0 };
    for (let c = 0; c < 40; c++) {
      const p = randomVector();
      const n = 1000;
      const { vgs, vds, vsb } = randomBiases(n);
      const out = new Float64Array(n);
      ekv.currents!(p, vgs, vds, vsb, out, n);
      for (let i = 0; i < n; i++) {
        const ref = ekv.current(p, vgs[i]!, vds[i]!, vsb[i]!);
        if (!agree(out[i]!, ref)) throw new Error(`card ${c}, point ${i} (VGS ${vgs[i]}, VDS ${vds[i]}, VSB ${vsb[i]}): block ${out[i]}, point ${ref}`);
        const ic = Math.abs(ref) / (2 * 1.3 * (p[1]! * p[10]! / p[11]!) * 0.0258 ** 2);
        if (ic < 0.1) regions.weak++;
        if (ic > 10) regions.strong++;
        if (vds[i]! < 0) regions.reversed++;
      }
    }
    // the draw covers every region (counted with a rough specific current; the equality above is what is tested)
    expect(regions.weak).toBeGreaterThan(1000);
    expect(regions.strong).toBeGreaterThan(1000);
    expect(regions.reversed).toBeGreaterThan(1000);
  });

  it("gives 0, not NaN, where the forward current underflows, beside points that conduct in the same block", () => {
    const p = randomVector();
    // the gate held near the body while the source sits 60–80 V above it: (VP − VSB)/(2·UT) ≈ −1 000
    const vgs = Float64Array.from([1.2, -59.5, 1.2, -80]);
    const vds = Float64Array.from([1, 1, -1, 0.5]);
    const vsb = Float64Array.from([0, 60, 0, 80]);
    const out = new Float64Array(4);
    ekv.currents!(p, vgs, vds, vsb, out, 4);
    expect(ekv.current(p, -59.5, 1, 60)).toBe(0);
    expect(out[1]).toBe(0);
    expect(out[3]).toBe(0);
    expect(out[0]).toBeGreaterThan(0);
    expect(out[2]).toBeLessThan(0);
    expect(out[2]).toBe(ekv.current(p, 1.2, -1, 0));
  });

  it("handles counts across block boundaries, a count of 0, and leaves out[count..] alone", () => {
    const p = randomVector();
    for (const n of [0, 1, blockSize - 1, blockSize, blockSize + 1, 3 * blockSize + 17]) {
      const { vgs, vds, vsb } = randomBiases(n + 5);
      const out = new Float64Array(n + 5).fill(7);
      ekvChannelCurrentBlock(p[1]!, p[10]!, p[11]!, p[0]!, p[2]!, p[3]!, p[4]!, p[5]!, p[7]!, p[6]!, p[8]!, p[9]!, 0.0258, vgs, vds.map(Math.abs), vsb, out, n);
      for (let i = 0; i < n; i++) expect(agree(out[i]!, ekvChannelCurrent(p[1]!, p[10]!, p[11]!, p[0]!, p[2]!, p[3]!, p[4]!, p[5]!, p[7]!, p[6]!, p[8]!, p[9]!, 0.0258, vgs[i]!, Math.abs(vds[i]!), vsb[i]!))).toBe(true);
      for (let i = n; i < n + 5; i++) expect(out[i]).toBe(7);
    }
  });

  it("refuses a count beyond its arrays with a typed error", () => {
    const a = new Float64Array(4);
    expect(() => ekv.currents!(randomVector(), a, a, a, new Float64Array(3), 4)).toThrow(InputError);
    expect(() => ekv.currents!(randomVector(), a, a, a, a, 1.5)).toThrow(InputError);
    expect(() => ekvChannelCurrentBlock(1e-4, 1e-5, 1e-6, 0.5, 0.5, 0.7, 0, 0, 0, 5e6, 0, 0, 0.0258, a, a, new Float64Array(2), a, 3)).toThrow(/point count/);
  });

  it("serves the fit: the adapter's residual evaluation equals spiceCurrent point by point, NMOS and PMOS", () => {
    const fm = fitModelOf(ekv);
    for (const polarity of ["nmos", "pmos"] as const) {
      const n = 700;
      const s = polarity === "nmos" ? 1 : -1;
      const b = randomBiases(n);
      const sweep: Sweep = { origin: "invented", polarity, w: 10e-6, l: 1e-6, temp: 300, corner: "tt", vgs: b.vgs.map((v) => s * v), vds: b.vds.map((v) => s * v), vbs: b.vsb.map((v) => -s * v), id: new Float64Array(n), line: new Int32Array(n) };
      const idx = Int32Array.from({ length: 500 }, (_, k) => (k * 7) % n);
      const p = randomVector().subarray(0, ekv.size - 3);
      const out = new Float64Array(idx.length);
      fm.evaluate(p, sweep, idx, out);
      const v = new Float64Array(ekv.size);
      v.set(p);
      v.set([sweep.w, sweep.l, sweep.temp], ekv.size - 3);
      idx.forEach((i, k) => {
        const ref = spiceCurrent(ekv, v, s, sweep.vgs[i]!, sweep.vds[i]!, -sweep.vbs[i]!);
        if (!agree(out[k]!, ref)) throw new Error(`${polarity} point ${i}: adapter ${out[k]}, spiceCurrent ${ref}`);
      });
    }
  });
});

describe("block evaluator generation", () => {
  const formulas = {
    vov: { title: "overdrive", result: "VOV", expr: "VGS - Vt" },
    kk: { title: "gain", result: "k", expr: "kp * WL" },
    id: { title: "current", result: "ID", expr: "k / 2 * VOV^2 * (1 + lambda * 2)" },
    off: { title: "no current", result: "ID", expr: "0 * k" },
    lg: { title: "log", result: "G", expr: "log(ID / k) + lambda * 2" },
  };
  const cat = { file: "c.catalog.ts", symbols: {}, formulas };
  const text = compositionBlock(cat, "f", {
    title: "t",
    inputs: ["kp", "WL", "Vt", "lambda", "VGS"],
    pointInputs: ["VGS"],
    steps: ["kk", "vov", { returnWhen: "VOV < -10", value: 0, why: "far off" }, { when: "VOV > 0", then: "id", otherwise: "off" }, "lg"],
  });
  it("computes a step that reads no per-point value once, before the loops, and hoists per-device subexpressions", () => {
    expect(text).toContain("const k = (kp * WL); // kk");
    expect(text).toMatch(/const \$c\d+ = \(1 \+ \(lambda \* 2\)\);/);
    expect(text).toContain("export function fBlock(kp: number, WL: number, Vt: number, lambda: number, VGS: Float64Array, out: Float64Array, count: number): void {");
  });
  it("starts a new loop at a step that calls a slow function, keeps what crosses loops in scratch, and masks the early return", () => {
    expect(text.match(/for \(let \$k = 0; \$k < \$m; \$k\+\+\)/g)).toHaveLength(2);
    expect(text).toContain("const f$VOV = new Float64Array");
    expect(text).toContain("out[$o + $k] = $VOV[$k]! < (-10) ? 0 : G;");
  });
  it("returns a last step that reads no per-point value as it is, past the per-point ones", () => {
    const t = compositionBlock(cat, "g", { title: "t", inputs: ["kp", "WL", "Vt", "VGS"], pointInputs: ["VGS"], steps: ["vov", "kk"] });
    expect(t).toContain("const k = (kp * WL); // kk");
    // k is the catalog's symbol here, not a loop index: the generated names are $-prefixed
    expect(t).toContain("out[$o + $k] = k;");
  });
  it("refuses a point input that is not an input", () => {
    expect(() => compositionBlock(cat, "f", { title: "t", inputs: ["kp"], pointInputs: ["VGS"], steps: ["kk"] })).toThrow(/point input VGS is not an input/);
  });

  describe("a language function with a block form (wrightOmega)", () => {
    const charges = {
      ...formulas,
      q: { title: "charge", result: "q", expr: "wrightOmega(VGS / UT + log(2)) / 2" },
      fixed: { title: "fixed", result: "F", expr: "wrightOmega(lambda) + q" },
      iq: { title: "current", result: "I", expr: "k * (q^2 + q) + wrightOmega(q - VGS) * lambda + F + wrightOmega(2 * VGS / UT) * UT" },
      nested: { title: "nested", result: "N", expr: "wrightOmega(wrightOmega(VGS))" },
      pair: { title: "two arguments", result: "P", expr: "wrightOmega(VGS, UT)" },
    };
    const wc = { file: "w.catalog.ts", symbols: {}, formulas: charges };
    const spec = { title: "t", inputs: ["kp", "WL", "UT", "lambda", "VGS"], pointInputs: ["VGS"], steps: ["q", "kk", "fixed", "iq"] } as const;
    const code = compositionBlock(wc, "w", spec);

    it("computes each call's argument in the loop before its step, calls the block form between the loops, and reads its result", () => {
      // the first step calls it, so the first loop holds only its argument
      expect(code).toMatch(/for \(let \$k = 0; \$k < \$m; \$k\+\+\) \{\n {6}\$f0\[\$k\] = \(\(VGS\[\$o \+ \$k\]! \/ UT\) \+ 0\.6931471805599453\); \/\/ wrightOmega argument of q\n {4}\}\n {4}wrightOmegaBlock\(\$f0, \$f0, \$m\);/);
      expect(code).toContain("const q = ($f0[$k]! / 2); // q");
      // the argument reads q from its own loop, where a step whose only call is hoisted (fixed) joins it
      expect(code).toContain("$f1[$k] = (q - VGS[$o + $k]!); // wrightOmega argument of iq");
      expect(code).toContain("const F = ($c0 + q); // fixed");
      expect(code).toContain("wrightOmegaBlock($f1, $f1, $m);");
      // two calls in one step, each with its own scratch array
      expect(code).toContain("wrightOmegaBlock($f2, $f2, $m);");
      expect(code).toMatch(/\$f1\[\$k\]! \* lambda\).*\$f2\[\$k\]! \* UT/);
      // a call whose argument is the same at every point stays a scalar call, hoisted before the loops
      expect(code).toMatch(/const \$c\d+ = wrightOmega\(lambda\);/);
      expect(code).not.toContain("$f3");
    });

    it("equals the point function at every point, across blocks (the generated code compiled and run)", async () => {
      const { transformSync } = await import("esbuild");
      const { wrightOmega, wrightOmegaBlock } = await import("../lib/numeric/wright-omega.js");
      const js = transformSync(`${code}\nreturn wBlock;`.replace(/export function/g, "function"), { loader: "ts" }).code;
      const block = new Function("sq", "wrightOmega", "wrightOmegaBlock", "InputError", js)((x: number) => x * x, wrightOmega, wrightOmegaBlock, InputError);
      const n = 3 * blockSize + 5;
      const vgs = Float64Array.from({ length: n }, (_, i) => -0.6 + (2.4 * i) / n);
      const out = new Float64Array(n);
      const [kp, WL, UT, lambda] = [2e-4, 12, 0.0258, 0.3];
      block(kp, WL, UT, lambda, vgs, out, n);
      for (let i = 0; i < n; i++) {
        const q = wrightOmega(vgs[i]! / UT + Math.log(2)) / 2;
        const expected = kp * WL * (q * q + q) + wrightOmega(q - vgs[i]!) * lambda + (wrightOmega(lambda) + q) + wrightOmega((2 * vgs[i]!) / UT) * UT;
        expect(Object.is(out[i], expected) || Math.abs(out[i]! / expected - 1) < 1e-15).toBe(true);
      }
    });

    it("refuses a call nested in another, naming the step", () => {
      expect(() => compositionBlock(wc, "v", { title: "t", inputs: ["VGS"], pointInputs: ["VGS"], steps: ["nested"] })).toThrow(/step nested: wrightOmega inside another block-form call/);
    });

    it("refuses a call with other than one argument, naming the step", () => {
      expect(() => compositionBlock(wc, "v", { title: "t", inputs: ["VGS", "UT"], pointInputs: ["VGS"], steps: ["pair"] })).toThrow(/step pair: wrightOmega takes one argument/);
    });
  });
});
