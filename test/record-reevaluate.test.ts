import { execFileSync } from "node:child_process";
import { readdirSync } from "node:fs";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import type { Formula } from "../lib/formulas/define.js";
import { Derivation } from "../lib/record/derivation.js";
import type { FormulaStep } from "../lib/record/derivation.js";
import { evaluateWithUnits, expectReevaluates, reevaluate } from "./support/reevaluate.js";
import { fixtureDerivation } from "./support/derivation-fixture.js";
import * as device from "../lib/formulas/device.formulas.js";

const root = join(import.meta.dirname, "..");
const formulasDir = join(root, "lib/formulas");

async function allFormulas(): Promise<Array<[string, Formula]>> {
  const out: Array<[string, Formula]> = [];
  for (const file of readdirSync(formulasDir).filter((f) => f.endsWith(".formulas.ts")).sort()) {
    const mod = (await import(pathToFileURL(join(formulasDir, file)).href)) as Record<string, unknown>;
    for (const [name, f] of Object.entries(mod)) {
      if (f && typeof f === "object" && typeof (f as Formula).fn === "function" && typeof (f as Formula).expr === "string") out.push([`${file}:${name}`, f as Formula]);
    }
  }
  return out;
}

describe("re-evaluation of recorded steps with mathjs units", () => {
  it("passes for a recorded operating point (every formula step, result unit and value)", () => {
    const n = expectReevaluates(fixtureDerivation());
    expect(n).toBeGreaterThanOrEqual(4);
  });

  it("catches a recorded result that drifted from its formula", () => {
    const d = fixtureDerivation().toJSON();
    const i = d.steps.findIndex((s) => s.kind === "formula");
    const s = d.steps[i] as FormulaStep;
    const bad = { ...d, steps: d.steps.map((x, j) => (j === i ? { ...s, result: { ...s.result, value: s.result.value * (1 + 1e-7) } } : x)) };
    const found = reevaluate(bad);
    expect(found).toHaveLength(1);
    expect(found[0]!.step).toBe(i + 1);
    expect(found[0]!.problem).toMatch(/recorded .* but the formula gives/);
    expect(() => expectReevaluates(bad)).toThrow(/1 step\(s\) do not re-evaluate/);
  });

  it("catches a step whose claimed result dimension is wrong", () => {
    const d = new Derivation("dimension slip");
    d.step({ ...device.overdrive, resultDim: "current" }, [1, 0.5], 0.5);
    expect(reevaluate(d)[0]?.problem).toMatch(/result has unit V, not A \(current\)/);
  });

  it("catches an input recorded with the wrong dimension", () => {
    const d = new Derivation("input slip");
    d.step({ ...device.overdrive, dims: ["voltage", "current"] }, [1, 0.5], 0.5);
    expect(reevaluate(d)[0]?.problem).toMatch(/could not evaluate/);
  });

  it("would reject a dimensionally wrong catalog formula (k·VOV is a conductance, not a current)", () => {
    const r = evaluateWithUnits("k * VOV", [{ name: "k", value: 2e-3, dim: "transconductanceParameter" }, { name: "VOV", value: 0.2, dim: "voltage" }], "current");
    expect(r.problem).toMatch(/not A \(current\)/);
  });

  it("states dimensionless results plainly (gm/gds)", () => {
    expect(evaluateWithUnits("gm / gds", [{ name: "gm", value: 1e-3, dim: "conductance" }, { name: "gds", value: 1e-5, dim: "conductance" }], "dimensionless").value).toBeCloseTo(100, 12);
  });
});

describe("every catalog formula", () => {
  it("re-evaluates with units to its generated fn on random positive inputs (dimensionally sound)", async () => {
    const formulas = await allFormulas();
    expect(formulas.length).toBeGreaterThanOrEqual(20);
    const problems: string[] = [];
    for (const [name, f] of formulas) {
      const arb = fc.array(fc.double({ min: 0.05, max: 20, noNaN: true }), { minLength: f.vars.length, maxLength: f.vars.length });
      let checked = 0;
      fc.assert(
        fc.property(arb, (xs) => {
          const want = f.fn(...xs);
          if (!Number.isFinite(want)) return; // outside the formula's domain (e.g. a root of a negative)
          const r = evaluateWithUnits(f.expr, f.vars.map((v, i) => ({ name: v, value: xs[i]!, dim: f.dims[i]! })), f.resultDim);
          if (r.problem) {
            problems.push(`${name}: ${r.problem}`);
            return false;
          }
          checked++;
          // Same operations in the same order: agreement to a few ulps, with room for SI conversion factors.
          if (Math.abs(r.value - want) > 1e-9 * Math.max(Math.abs(want), Math.abs(r.value), 1e-300)) {
            problems.push(`${name}: fn gives ${want}, mathjs ${r.value} for ${JSON.stringify(xs)}`);
            return false;
          }
          return true;
        }),
        { numRuns: 40 },
      );
      if (checked === 0) problems.push(`${name}: no sample inside the formula's domain`);
    }
    expect(problems).toEqual([]);
  });

  it("generated files are current (npm run gen -- --check)", () => {
    const run = () => execFileSync(process.execPath, [join(root, "node_modules/tsx/dist/cli.mjs"), "lib/formulas/generate.ts", "--check"], { cwd: root, encoding: "utf8", stdio: ["ignore", "pipe", "pipe"] });
    expect(run).not.toThrow();
  }, 60_000);
});
