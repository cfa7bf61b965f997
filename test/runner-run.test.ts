// pinchoff run end to end through the real tslab kernel (Jupyter from Debian),
// on the fixture notebook test/fixtures/saturation-check.ipynb (invented values).
// Needs the built library (dist/) and the project-local kernel: npm test
// prepares both (node lib/setup/prepare.mjs ... build kernel).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { copyFileSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { PinchoffError } from "../lib/errors.js";
import { runNotebook } from "../lib/runner/run.js";
import { stagingRoot } from "../lib/runner/paths.js";
import { summarize } from "../lib/runner/summary.js";
import { parseOverride } from "../lib/runner/inputs-cell.js";

const fixture = new URL("./fixtures/saturation-check.ipynb", import.meta.url).pathname;
let work: string;
let nb: string;
let original: Buffer;

beforeAll(() => {
  work = mkdtempSync(join(tmpdir(), "pinchoff-run-test-"));
  nb = join(work, "sat.ipynb");
  copyFileSync(fixture, nb);
  original = readFileSync(nb);
});
afterAll(() => rmSync(work, { recursive: true, force: true }));

const stagedNow = () => (existsSync(stagingRoot) ? readdirSync(stagingRoot).filter((d) => d.startsWith("sat-")) : []);

async function failure(p: Promise<unknown>): Promise<PinchoffError> {
  try {
    await p;
  } catch (e) {
    if (e instanceof PinchoffError) return e;
    throw e;
  }
  throw new Error("expected the run to fail");
}

describe("pinchoff run through the kernel", () => {
  it("runs the fixture, writes notebook and report, leaves the source byte-for-byte unchanged", async () => {
    const out = join(work, "ok");
    const r = await runNotebook({ notebook: nb, outDir: out });
    expect(r.exitCode).toBe(0);
    expect(r.failures).toEqual([]);
    // ID = k/2·VOV² = 2 mA/V² / 2 · (0.3 V)² = 90 µA; VDS = 5 V − 90 µA · 20 kΩ = 3.2 V; margin VDS − VOV = 2.9 V (hand arithmetic)
    expect(r.checks).toHaveLength(1);
    expect(r.checks[0]!.passed).toBe(true);
    expect(r.checks[0]!.margin).toBeCloseTo(2.9, 12);
    expect(readdirSync(out).sort()).toEqual(["sat.executed.ipynb", "sat.report.html"]);
    const executed = JSON.parse(readFileSync(join(out, "sat.executed.ipynb"), "utf8"));
    expect(executed.metadata.pinchoff.run.inputsFingerprint).toMatch(/^[0-9a-f]{64}$/);
    const html = readFileSync(join(out, "sat.report.html"), "utf8");
    expect(html).toContain("M1 stays in saturation");
    expect(html).toContain("Fixture plot");
    expect(r.reportBytes).toBeLessThanOrEqual(6e6);
    expect(readFileSync(nb).equals(original)).toBe(true);
    expect(stagedNow()).toEqual([]);
    expect(summarize(r)).toMatch(/pass {2}M1 stays in saturation/);

    // A second run replaces its own earlier outputs.
    const again = await runNotebook({ notebook: nb, outDir: out, overrides: [parseOverride("RD=60kohm")] });
    // VDS = 5 V − 90 µA · 60 kΩ = −0.4 V: the check fails by 0.7 V (hand arithmetic)
    expect(again.exitCode).toBe(1);
    const failed = again.checks.filter((c) => !c.passed);
    expect(failed.map((c) => c.title)).toEqual(["M1 stays in saturation: VDS - VOV"]);
    expect(failed[0]!.margin).toBeCloseTo(-0.7, 12);
    expect(summarize(again)).toMatch(/FAIL {2}M1 stays in saturation/);
    const html2 = readFileSync(join(out, "sat.report.html"), "utf8");
    expect(html2).toContain("set on the command line");
    expect(html2).toContain("60kohm");
    expect(readFileSync(nb).equals(original)).toBe(true);
  }, 120_000);

  it("names the failing cell and the error's first lines, and marks later cells not run", async () => {
    const src = JSON.parse(original.toString("utf8"));
    src.cells.splice(2, 0, { cell_type: "code", id: "bad", metadata: {}, outputs: [], execution_count: null, source: ['throw new Error("invented failure for the test");'] });
    const bad = join(work, "bad.ipynb");
    writeFileSync(bad, JSON.stringify(src));
    const r = await runNotebook({ notebook: bad, outDir: join(work, "bad-out") });
    expect(r.exitCode).toBe(1);
    expect(r.failures.map((f) => f.cell)).toEqual([2]);
    expect(r.failures[0]!.lines.join("\n")).toContain("invented failure for the test");
    expect(r.skipped).toEqual([3, 4]);
    expect(summarize(r)).toMatch(/cell 3 failed/);
  }, 120_000);
});

describe("pinchoff run refuses before executing, writing nothing", () => {
  it("--set with the wrong dimension", async () => {
    const out = join(work, "wrong-dim");
    const e = await failure(runNotebook({ notebook: nb, outDir: out, overrides: [parseOverride("VOV=3A")] }));
    expect(e.message).toMatch(/VOV/);
    expect(existsSync(out)).toBe(false);
  });

  it("--set of an unknown input", async () => {
    const out = join(work, "unknown");
    const e = await failure(runNotebook({ notebook: nb, outDir: out, overrides: [parseOverride("VCC=5V")] }));
    expect(e.message).toContain("VDD, KN, VOV, RD");
    expect(existsSync(out)).toBe(false);
  });

  it("malformed JSON, with the place of the fault", async () => {
    const broken = join(work, "broken.ipynb");
    writeFileSync(broken, original.toString("utf8").replace('"cells": [', '"cells": [,'));
    const e = await failure(runNotebook({ notebook: broken }));
    expect(e.message).toMatch(/line \d+, column \d+/);
    expect(existsSync(join(work, "broken-run"))).toBe(false);
  });

  it("no design-inputs cell", async () => {
    const src = JSON.parse(original.toString("utf8"));
    for (const c of src.cells) c.metadata.tags = [];
    const untagged = join(work, "untagged.ipynb");
    writeFileSync(untagged, JSON.stringify(src));
    const e = await failure(runNotebook({ notebook: untagged }));
    expect(e.message).toMatch(/no design-inputs cell/);
    expect(existsSync(join(work, "untagged-run"))).toBe(false);
  });

  it("an output folder that cannot be written (a file stands in its path)", async () => {
    const blocker = join(work, "blocker");
    writeFileSync(blocker, "a user's file");
    const e = await failure(runNotebook({ notebook: nb, outDir: join(blocker, "out") }));
    expect(e.message).toMatch(/cannot be written|not a folder/);
    expect(readFileSync(blocker, "utf8")).toBe("a user's file");
  });

  it("an existing file of the user's where a result would go", async () => {
    const out = join(work, "occupied");
    mkdirSync(out);
    writeFileSync(join(out, "sat.report.html"), "<p>my own notes</p>");
    const e = await failure(runNotebook({ notebook: nb, outDir: out }));
    expect(e.message).toMatch(/not written by pinchoff run/);
    expect(readFileSync(join(out, "sat.report.html"), "utf8")).toBe("<p>my own notes</p>");
    expect(readdirSync(out)).toEqual(["sat.report.html"]);
  });

  it("Jupyter missing from PATH says what to install", async () => {
    const out = join(work, "no-jupyter");
    const e = await failure(runNotebook({ notebook: nb, outDir: out, env: { ...process.env, PATH: "/nonexistent" } }));
    expect(e.message).toContain("apt-get install jupyter-client jupyter-nbconvert python3-nbclient python3-ipykernel");
    expect(e.message).toContain("node lib/setup/prepare.mjs kernel");
    expect(existsSync(out)).toBe(false);
    expect(readFileSync(nb).equals(original)).toBe(true);
  });
});
