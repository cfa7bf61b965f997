/**
 * `pinchoff op` for the differential pairs, the cascode stage and the cascode
 * mirror, NMOS and PMOS input, with the `mismatch` section: the Pelgrom
 * closed form and the Monte Carlo yields and sensitivity ranking in the
 * output, checked against the library calls they must equal, and the typed
 * errors naming the file and field. Cards and circuits are invented.
 * The first command in a file loads the whole command line: on a loaded
 * machine that takes seconds, hence the longer time limit.
 */
import { describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { parseDesign } from "../lib/bias/design-file.js";
import { mismatchMonteCarlo, pairOffset } from "../lib/bias/mismatch.js";
import { main } from "../lib/cli/op.js";
import { meters, voltMeters } from "../lib/quantity.js";
import { captureCli, designFolder } from "./support/cli.js";

const { write } = designFolder("pinchoff-op-pairs-");
const run = (argv: string[]) => captureCli(main, argv);

// Invented cards for an invented 3.3 V process.
const nCard = { name: "demo-n (invented)", polarity: "nmos", kp: "200 uA/V^2", vt0: "0.5 V", lambda: "0.05 1/V", gamma: 0.4, phi: "0.7 V" };
const pCard = { name: "demo-p (invented)", polarity: "pmos", kp: "80 uA/V^2", vt0: "-0.55 V", lambda: "0.08 1/V" };
const other = (c: typeof nCard | typeof pCard) => (c === nCard ? pCard : nCard);
const coefficients = { nmos: { avt: "5 mV*um", abeta: "0.01 um" }, pmos: { avt: "6 mV*um", abeta: "0.015 um" } };

/** A stage of each topology in the polarity of `inp` (values mirrored about mid-supply for PMOS). */
function stageOf(topology: string, inp: typeof nCard | typeof pCard): Record<string, unknown> {
  const nm = inp === nCard;
  const v = (x: number) => `${nm ? x : 3.3 - x} V`;
  const base = { name: `${topology} (invented)`, topology, supplies: { vdd: "3.3 V" } };
  switch (topology) {
    case "diff-pair":
      return { ...base, device: { card: inp, w: "8 um", l: "2 um" }, devices: { tail: { card: inp, w: "10 um", l: "1 um" } }, components: { rd: "15k", vcm: v(1.5), vtail: v(0.9), cload: "2 pF" } };
    case "diff-pair-mirror-load":
      return { ...base, device: { card: inp, w: "4 um", l: "1 um" }, devices: { load: { card: other(inp), w: "2 um", l: "2 um" }, tail: { card: inp, w: "10 um", l: "1 um" } }, components: { vcm: v(1.6), vtail: v(0.9), cload: "1 pF" } };
    case "cascode-stage":
      return { ...base, device: { card: inp, w: "10 um", l: "1 um" }, devices: { cascode: { card: inp, w: "10 um", l: "1 um" } }, components: { vg: v(0.8), vcas: v(1.6), rd: "20k" } };
    default:
      return { ...base, device: { card: inp, w: "10 um", l: "2 um" }, devices: { cascode: { card: inp, w: "10 um", l: "1 um" } }, components: { iref: "50 uA", vout: v(1.5), vcas: v(nm ? 1.2 : 1.5) } };
  }
}

describe("pinchoff op: pairs and cascodes from design files", { timeout: 60_000 }, () => {
  for (const inp of [nCard, pCard])
    for (const topology of ["diff-pair", "diff-pair-mirror-load", "cascode-stage", "cascode-mirror"]) {
      it(`${topology}, ${inp.polarity} input: the JSON equals the library's analysis of the same file, every check passes`, async () => {
        const d = stageOf(topology, inp);
        const r = await run([write(`${topology}-${inp.polarity}.json`, d), "--json"]);
        const j = JSON.parse(r.out);
        expect(r.err).toBe("");
        expect(j.failedChecks).toEqual([]);
        expect(r.code).toBe(0);
        const a = analyzeStage(parseDesign(d, "d")) as unknown as Record<string, unknown>;
        expect(j.region).toBe("saturation");
        expect(j.nodes).toEqual(JSON.parse(JSON.stringify(a.nodes)));
        const figures = topology.startsWith("diff") ? "pair" : "cascode";
        expect(j[figures]).toBeDefined();
        for (const [k, x] of Object.entries(a[figures] as Record<string, unknown>)) if (typeof x === "number" && Number.isFinite(x)) expect(j[figures][k]).toBe(x);
        if (topology === "diff-pair") expect(j.pair.slewRate).toBeCloseTo(j.pair.tailCurrent / 2e-12, 3);
      });
    }
});

describe("pinchoff op: mismatch section", { timeout: 60_000 }, () => {
  for (const inp of [nCard, pCard])
    it(`five-transistor amplifier, ${inp.polarity} input: closed form, Monte Carlo statistics and yields equal the library calls`, async () => {
      const d = stageOf("diff-pair-mirror-load", inp);
      const vcm = inp === nCard ? 1.6 : 1.7;
      const mismatch = { ...coefficients, global: { nmos: { vt: "10 mV", k: "3 %" }, pmos: { vt: "12 mV", k: "3 %" } }, samples: 20000, seed: 5, limits: { offset: "6 mV", commonModeMin: `${vcm - 0.1} V`, commonModeMax: `${vcm + 0.1} V` } };
      const r = await run([write(`mm-${inp.polarity}.json`, { ...d, mismatch }), "--json"]);
      const j = JSON.parse(r.out);
      // The same computation through the library, cards carrying the section's coefficients.
      const stage = parseDesign(d, "d");
      const withC = (s: typeof stage.device) => ({ ...s, card: { ...s.card, ...(s.card.polarity === "nmos" ? { avt: voltMeters(5e-9), abeta: meters(1e-8) } : { avt: voltMeters(6e-9), abeta: meters(1.5e-8) }) } });
      const st = { ...stage, device: withC(stage.device), devices: Object.fromEntries(Object.entries(stage.devices!).map(([k, v]) => [k, withC(v)])) };
      const a = analyzeStage(st);
      expect(j.mismatch.closedForm.offsetSigma).toBeCloseTo(pairOffset(st, a).sigma, 15);
      const mc = mismatchMonteCarlo(st as never, a, { samples: 20000, seed: 5, nmos: { sigmaVt: 0.01, sigmaK: 0.03 }, pmos: { sigmaVt: 0.012, sigmaK: 0.03 }, limits: { maxOffset: 0.006, commonModeMin: vcm - 0.1, commonModeMax: vcm + 0.1 } });
      expect(j.mismatch.monteCarlo.figures[0].sigma).toBe(mc.figures[0]!.sigma);
      expect(j.mismatch.monteCarlo.checks.map((c: { yield: number }) => c.yield)).toEqual(mc.checks.map((c) => c.yield));
      // The sensitivity ranking of the offset is led by a matched device, never by a global variable (common practice: global shifts cancel in a pair, to first order).
      expect(j.mismatch.monteCarlo.figures[0].sensitivity[0].variable).toMatch(/^M[1-4] /);
      // The σ of the offset is near the closed form, which is mismatch only: the global shifts add a little through
      // channel-length modulation (they move the load diode, so M1's drain, not M2's at the held output), and
      // 20 000 samples leave about 1 % of noise: within 8 %.
      expect(Math.abs(j.mismatch.monteCarlo.figures[0].sigma / j.mismatch.closedForm.offsetSigma - 1)).toBeLessThan(0.08);
      expect(j.failedChecks).toEqual([]);
      expect(r.code).toBe(0);
    });

  it("minYield turns a yield below it into a failed check (exit 1); the text summary lists the yields and the ranking", async () => {
    const d = { ...stageOf("diff-pair", nCard), mismatch: { ...coefficients, samples: 5000, limits: { offset: "0.5 mV" }, minYield: "99 %" } };
    const file = write("mm-fail.json", d);
    const r = await run([file, "--json"]);
    const j = JSON.parse(r.out);
    expect(r.code).toBe(1);
    expect(j.failedChecks.some((f: string) => /mismatch, \|offset\| within its limit/.test(f))).toBe(true);
    expect(j.mismatch.monteCarlo.checks[0].yield).toBeLessThan(0.99);
    const t = await run([file, "--text"]);
    expect(t.out).toMatch(/Mismatch \(Pelgrom's law; Monte Carlo 5000 samples, seed 1\)/);
    expect(t.out).toMatch(/input-referred offset: .*moved most by M[12] /);
  });

  it("cascode mirror (wide swing), PMOS: current-error σ and the compliance yield", async () => {
    const d = { ...stageOf("cascode-mirror", pCard), mismatch: { pmos: { avt: "6 mV*um", abeta: "0.015 um" }, samples: 10000, limits: { currentError: "2 %", outputVoltage: "2.5 V" } } };
    const r = await run([write("mm-mirror.json", d), "--json"]);
    const j = JSON.parse(r.out);
    expect(j.mismatch.closedForm.currentErrorSigma).toBeGreaterThan(0);
    expect(Math.abs(j.mismatch.monteCarlo.figures[0].sigma / j.mismatch.closedForm.currentErrorSigma - 1)).toBeLessThan(0.05);
    expect(j.mismatch.monteCarlo.checks.map((c: { name: string }) => c.name)).toEqual(["|current error| within its limit", "output above compliance"]);
    // Wide swing with vcas held at 1.8 V: the compliance is vcas + |Vt4| ≈ 2.35 V for PMOS; an output asked at 2.5 V lies beyond it in every sample.
    expect(j.mismatch.monteCarlo.checks[1].yield).toBe(0);
  });
});

describe("pinchoff op: typed errors naming the file and the field", { timeout: 60_000 }, () => {
  const expectError = async (d: unknown, name: string, pattern: RegExp) => {
    const file = write(name, d);
    await expect(run([file, "--json"])).rejects.toThrow(pattern);
    await expect(run([file, "--json"])).rejects.toThrow(new RegExp(name.replace(".", "\\.")));
  };
  it("AVt missing when mismatch is asked for", async () => {
    await expectError({ ...stageOf("diff-pair-mirror-load", nCard), mismatch: { nmos: { avt: "5 mV*um" } } }, "no-avt.json", /mismatch\.pmos\.avt.*|AVt for the pmos devices/);
  });
  it("sample counts beyond the stated bound", async () => {
    await expectError({ ...stageOf("diff-pair", nCard), mismatch: { ...coefficients, samples: 1e9 } }, "samples.json", /mismatch\.samples.*samples from 2 to 100000000|samples from 2 to 100000000/);
    await expectError({ ...stageOf("diff-pair", nCard), mismatch: { ...coefficients, samples: 2.5 } }, "samples2.json", /whole number of samples/);
  });
  it("a mismatch section on a stage without matched devices", async () => {
    await expectError({ ...stageOf("cascode-stage", nCard), mismatch: coefficients }, "cascode-mm.json", /stage with matched devices/);
  });
  it("an ideal tail that cannot supply the pair", async () => {
    const d = stageOf("diff-pair", nCard);
    const { vtail: _v, ...comps } = d.components as Record<string, string>;
    const { tail: _t, ...devs } = d.devices as Record<string, unknown>;
    await expectError({ ...d, devices: devs, components: { ...comps, vcm: "0.6 V", itail: "200 uA" } }, "tail.json", /tail cannot supply the pair.*|components\.itail/);
  });
  it("a common-mode input outside the rails; inside the rails but outside the range it fails the range check", async () => {
    const d = stageOf("diff-pair-mirror-load", nCard);
    await expectError({ ...d, components: { ...(d.components as object), vcm: "3.5 V" } }, "vcm.json", /components\.vcm/);
    const r = await run([write("vcm-range.json", { ...d, components: { ...(d.components as object), vcm: "3.1 V" } }), "--json"]);
    expect(r.code).toBe(1);
    expect(JSON.parse(r.out).failedChecks.join("\n")).toMatch(/Input common mode below its highest value/);
  });
  it("Pelgrom coefficients of the wrong dimension", async () => {
    await expectError({ ...stageOf("diff-pair", nCard), mismatch: { nmos: { avt: "5 mV" } } }, "dim.json", /mismatch\.nmos\.avt/);
  });
});
