/**
 * `pinchoff op` with a tolerance section, and its two output forms: a readable
 * summary at a terminal, JSON when piped or with --json. Yields are checked
 * against an independent count: every corner solved here through
 * analyzeStage and tested against the band by hand. Stage values invented.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { analyzeStage } from "../lib/bias/analyze.js";
import { parseDesign, parseDesignFile } from "../lib/bias/design-file.js";
import { main } from "../lib/cli/op.js";
import { cli } from "../lib/cli/main.js";
import { captureCli } from "./support/cli.js";

let dir: string;
const design = {
  name: "sensor buffer (invented)",
  topology: "four-resistor",
  device: { card: { name: "demo-n", polarity: "nmos", kp: "200 uA/V^2", vt0: "0.5 V", lambda: "0.05 1/V" }, w: "10 um", l: "1 um" },
  components: { rg1: "200k", rg2: "100k", rd: "5.1k", rs: "1k" },
  supplies: { vdd: "5 V" },
};
const write = (name: string, value: unknown) => {
  const p = join(dir, name);
  writeFileSync(p, JSON.stringify(value));
  return p;
};
const run = (argv: string[]) => captureCli(main, argv);

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "pinchoff-op-tol-"));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("pinchoff op tolerance section", () => {
  it("counts the corners that leave the drain-current band, matching an independent count, and exits 1", async () => {
    const band = 0.03; // ±3 %: 5 % resistors move ID by more than that at some corners
    const file = write("band.json", { ...design, tolerance: { resistors: "5 %", idBand: "3 %" } });
    const r = await run([file, "--json"]);
    const j = JSON.parse(r.out);
    // Independent count: each of the 2^4 resistor corners solved here.
    const stage = parseDesign(design, "d");
    const idNom = analyzeStage(stage).currents.drain;
    const names = ["rg1", "rg2", "rd", "rs"] as const;
    let inside = 0;
    let lo = Infinity;
    let hi = -Infinity;
    for (let m = 0; m < 16; m++) {
      const comps: Record<string, number> = { ...stage.components };
      names.forEach((n, i) => (comps[n] = stage.components[n]! * (1 + ((m >> i) & 1 ? 0.05 : -0.05))));
      const id = analyzeStage({ ...stage, components: comps }).currents.drain;
      if (Math.abs(id / idNom - 1) <= band) inside++;
      lo = Math.min(lo, id);
      hi = Math.max(hi, id);
    }
    expect(inside).toBeGreaterThan(0);
    expect(inside).toBeLessThan(16); // the case must be a real mix
    const check = j.tolerance.checks.find((c: { name: string }) => c.name.startsWith("Drain current within ±3 %"));
    expect(check).toMatchObject({ cases: 16, passed: inside, ok: false });
    expect(check.min).toBeCloseTo(lo, 15);
    expect(check.max).toBeCloseTo(hi, 15);
    expect(j.tolerance.method).toBe("corners");
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/check failed: over tolerances, Drain current within ±3 % of nominal: \d+ of 16 cases pass/);
  });

  it("passes when every corner holds the band, with the spread of ID reported", async () => {
    const file = write("wide.json", { ...design, tolerance: { resistors: "1 %", process: { vt0: "20 mV", kp: "5 %" }, temperatures: ["0 degC", "50 degC"], idBand: "30 %" } });
    const r = await run([file, "--json"]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.tolerance.cases).toBe(2 ** 6 * 2);
    expect(j.tolerance.checks.every((c: { yield: number }) => c.yield === 1)).toBe(true);
    expect(j.tolerance.spread.id.min).toBeLessThan(j.currents.drain);
    expect(j.tolerance.spread.id.max).toBeGreaterThan(j.currents.drain);
    expect(j.failedChecks).toEqual([]);
  });

  it("runs a seeded Monte Carlo: the same seed gives the same yields; a yield below minYield exits 1", async () => {
    const tol = { resistors: "5 %", process: { vt0: "50 mV", kp: "10 %" }, monteCarlo: { samples: 300, seed: 11, distribution: "normal" }, idBand: "10 %" };
    const a = await run([write("mc1.json", { ...design, tolerance: tol }), "--json"]);
    const b = await run([write("mc2.json", { ...design, tolerance: tol }), "--json"]);
    const ya = JSON.parse(a.out).tolerance;
    expect(ya.method).toBe("monte-carlo");
    expect(ya.cases).toBe(300);
    expect(ya.required).toBeUndefined();
    expect(JSON.parse(b.out).tolerance.checks).toEqual(ya.checks);
    expect(a.code).toBe(0); // yields reported, none asked
    const band = ya.checks.find((c: { name: string }) => c.name.startsWith("Drain current"));
    expect(band.yield).toBeGreaterThan(0);
    expect(band.yield).toBeLessThan(1);
    const strict = await run([write("mc3.json", { ...design, tolerance: { ...tol, minYield: "99.9 %" } }), "--json"]);
    expect(strict.code).toBe(1);
    expect(JSON.parse(strict.out).tolerance.required).toBeCloseTo(0.999, 12);
  });

  it("names the file and the field for a bad tolerance section", () => {
    const bad = (tolerance: unknown) => () => parseDesignFile({ ...design, tolerance }, "t.json");
    expect(bad({ resistors: "150 %" })).toThrow(/t\.json: tolerance\.resistors: .*from 0 to below 100 %/);
    expect(bad({ process: { vt0: "5 mA" } })).toThrow(/t\.json: tolerance\.process\.vt0/);
    expect(bad({ temperatures: [] })).toThrow(/t\.json: tolerance\.temperatures/);
    expect(bad({ monteCarlo: { samples: 0, seed: 1 } })).toThrow(/t\.json: tolerance\.monteCarlo\.samples/);
    expect(bad({ minYield: "99 %" })).toThrow(/t\.json: tolerance\.minYield: .*without monteCarlo/);
    expect(bad({ spread: 1 })).toThrow(/t\.json: tolerance\.spread/);
    expect(bad({ series: "E7" })).toThrow(/t\.json: tolerance\.series/);
  });
});

describe("pinchoff op output form", () => {
  it("prints a readable summary at a terminal and JSON when piped; --json and --text force either", async () => {
    const file = write("form.json", { ...design, limits: { maxDevicePower: "1 uW" } });
    const tty = process.stdout.isTTY;
    try {
      process.stdout.isTTY = true;
      const t = await run([file]);
      expect(t.code).toBe(1);
      expect(() => JSON.parse(t.out)).toThrow();
      expect(t.out).toMatch(/^Operating point of sensor buffer \(invented\)/);
      expect(t.out).toMatch(/RD {5}5\.100 kΩ/);
      expect(t.out).toMatch(/Operating point: saturation/);
      expect(t.out).toMatch(/pass {2}Saturation margin VDS − VOV: .* \(needs ≥ 0\.000 V; margin /);
      expect(t.out).toMatch(/FAIL {2}Transistor dissipation: .* \(needs ≤ 1\.000 µW; margin -/);
      expect(t.out).toMatch(/1 check\(s\) FAILED \(exit status 1\)/);
      expect(t.out).toMatch(/Verify the design by simulation/);
      expect(JSON.parse((await run([file, "--json"])).out).region).toBe("saturation");
      process.stdout.isTTY = false;
      expect(JSON.parse((await run([file])).out).region).toBe("saturation");
      expect((await run([file, "--text"])).out).toMatch(/^Operating point of/);
    } finally {
      process.stdout.isTTY = tty;
    }
    const both = await captureCli(cli, ["op", file, "--json", "--text"]);
    expect(both.code).toBe(2);
    expect(both.err).toMatch(/^pinchoff op: --json and --text exclude each other\nusage: pinchoff op <design\.json> \[--record FILE\] \[--force\] \[--json\] \[--text\]/);
  });
});
