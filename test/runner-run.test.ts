// pinchoff run end to end through the real tslab kernel (Jupyter from Debian),
// on the fixture notebook test/fixtures/saturation-check.ipynb (invented values).
// Needs the built library (dist/) and the project-local kernel: npm test
// prepares both (node lib/setup/prepare.mjs ... build kernel).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { copyFileSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { hostname, tmpdir } from "node:os";
import { spawn, spawnSync } from "node:child_process";
import { createHash } from "node:crypto";
import { join } from "node:path";
import { PinchoffError } from "../lib/errors.js";
import { runNotebook } from "../lib/runner/run.js";
import { stagingRoot } from "../lib/runner/paths.js";
import { summarize } from "../lib/runner/summary.js";
import { nodeFileSystem, type FileSystemSeam } from "../lib/io/atomic-write.js";
import { lockFileName } from "../lib/io/folder-lock.js";
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
    expect(readdirSync(out).sort()).toEqual(["notebook-as-run.ipynb", "report.html", "run-record.json"]);
    const executed = JSON.parse(readFileSync(join(out, "notebook-as-run.ipynb"), "utf8"));
    expect(executed.metadata.pinchoff.run.inputsFingerprint).toMatch(/^[0-9a-f]{64}$/);
    const html = readFileSync(join(out, "report.html"), "utf8");
    // The run record: inputs as run, fingerprints, every check with value/limit/margin/verdict, outputs with digests.
    const record = JSON.parse(readFileSync(join(out, "run-record.json"), "utf8"));
    expect(record.kind).toBe("pinchoff design run");
    expect(record.tool).toMatch(/^pinchoff \d/);
    expect(record.source).toEqual({ path: nb, sha256: createHash("sha256").update(original).digest("hex") });
    expect(record.fingerprints.inputs).toBe(executed.metadata.pinchoff.run.inputsFingerprint);
    expect(record.inputs.find((i: { name: string }) => i.name === "RD")).toMatchObject({ unit: "ohm", overridden: false, value: 20000 });
    expect(record.checks).toHaveLength(1);
    expect(record.checks[0]).toMatchObject({ title: "M1 stays in saturation: VDS - VOV", passed: true, unit: "V" });
    expect(record.checks[0].margin).toBeCloseTo(2.9, 12);
    expect(record.verdict).toBe("pass");
    for (const o of record.outputs) expect(o.sha256).toBe(createHash("sha256").update(readFileSync(join(out, o.file))).digest("hex"));
    expect(record.outputs.map((o: { file: string }) => o.file).sort()).toEqual(["notebook-as-run.ipynb", "report.html"]);
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
    const html2 = readFileSync(join(out, "report.html"), "utf8");
    expect(html2).toContain("set on the command line");
    expect(html2).toContain("60kohm");
    const record2 = JSON.parse(readFileSync(join(out, "run-record.json"), "utf8"));
    expect(record2.inputs.find((i: { name: string }) => i.name === "RD")).toMatchObject({ text: "60kohm", value: 60000, overridden: true, notebookText: "20 kohm" });
    expect(record2.verdict).toBe("fail");
    expect(record2.exitCode).toBe(1);
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
    expect(existsSync(join(work, "broken-design-run"))).toBe(false);
  });

  it("no design-inputs cell", async () => {
    const src = JSON.parse(original.toString("utf8"));
    for (const c of src.cells) c.metadata.tags = [];
    const untagged = join(work, "untagged.ipynb");
    writeFileSync(untagged, JSON.stringify(src));
    const e = await failure(runNotebook({ notebook: untagged }));
    expect(e.message).toMatch(/no design-inputs cell/);
    expect(existsSync(join(work, "untagged-design-run"))).toBe(false);
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
    writeFileSync(join(out, "report.html"), "<p>my own notes</p>");
    const e = await failure(runNotebook({ notebook: nb, outDir: out }));
    expect(e.message).toMatch(/not written by pinchoff run/);
    expect(readFileSync(join(out, "report.html"), "utf8")).toBe("<p>my own notes</p>");
    expect(readdirSync(out)).toEqual(["report.html"]);
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

describe("pinchoff run and the output folder", () => {
  it("refuses a folder another live run has locked, naming the folder and its pid, and touches nothing", async () => {
    const out = join(work, "locked");
    mkdirSync(out);
    // A live holder: this test process itself (pid alive, same host, start time unknown).
    const lock = JSON.stringify({ pid: process.pid, host: hostname(), started: null, since: "2026-01-01T00:00:00.000Z", what: "pinchoff run other.ipynb" });
    writeFileSync(join(out, lockFileName), lock);
    writeFileSync(join(out, "report.html"), "<p>an earlier report</p>");
    const e = await failure(runNotebook({ notebook: nb, outDir: out }));
    expect(e.message).toContain(out);
    expect(e.message).toContain(`pid ${process.pid}`);
    expect(readFileSync(join(out, lockFileName), "utf8")).toBe(lock);
    expect(readdirSync(out).sort()).toEqual([lockFileName, "report.html"]);
  });

  it("a full disk while writing: the stale lock is taken over, the earlier results stay intact, nothing is reported written", async () => {
    const out = join(work, "full");
    const first = await runNotebook({ notebook: nb, outDir: out });
    expect(first.exitCode).toBe(0);
    const before = Object.fromEntries(readdirSync(out).map((f) => [f, readFileSync(join(out, f), "utf8")]));
    const dead = spawnSync(process.execPath, ["-e", "0"]).pid!;
    writeFileSync(join(out, lockFileName), JSON.stringify({ pid: dead, host: hostname(), started: 1, since: "2026-01-01T00:00:00.000Z", what: "a killed run" }));
    let room = 64 * 1024; // the disk fills part way through the report
    const full: FileSystemSeam = {
      ...nodeFileSystem,
      writeSync(fd, buf, off, len) {
        if (room <= 0) throw Object.assign(new Error("no space left on device"), { code: "ENOSPC" });
        const n = Math.min(len, room);
        room -= n;
        return nodeFileSystem.writeSync(fd, buf, off, n);
      },
    };
    const notes: string[] = [];
    const e = await failure(runNotebook({ notebook: nb, outDir: out, fs: full, note: (t) => notes.push(t), overrides: [parseOverride("RD=60kohm")] }));
    expect(e.message).toMatch(/ENOSPC/);
    expect(e.message).toMatch(/no file was replaced/);
    expect(notes.join("\n")).toContain(`pid ${dead}`);
    const after = Object.fromEntries(readdirSync(out).map((f) => [f, readFileSync(join(out, f), "utf8")]));
    expect(after).toEqual(before); // no temporaries, no lock, every earlier file byte-for-byte
    expect(stagedNow()).toEqual([]);
  }, 120_000);

  it("SIGINT once the kernel runs: driver and kernel stop, staging is removed, no empty output folder is left", async () => {
    const marker = join(work, "kernel-up.json");
    const src = JSON.parse(original.toString("utf8"));
    // A cell that says where the kernel is, then spins (as a runaway calculation would).
    src.cells.splice(2, 0, {
      cell_type: "code",
      id: "spin",
      metadata: {},
      outputs: [],
      execution_count: null,
      source: [`import * as fs from "fs";\n`, `fs.writeFileSync(${JSON.stringify(marker)}, JSON.stringify({ pid: process.pid, ppid: process.ppid, cwd: process.cwd() }));\n`, "while (true) {}\n"],
    });
    const spin = join(work, "spin.ipynb");
    writeFileSync(spin, JSON.stringify(src));
    const out = join(work, "spin-out");
    const cli = new URL("../dist/cli/main.js", import.meta.url).pathname;
    const child = spawn(process.execPath, [cli, "run", spin, "--out", out], { stdio: ["ignore", "pipe", "pipe"] });
    let stdout = "";
    let stderr = "";
    child.stdout.on("data", (d: Buffer) => (stdout += d.toString()));
    child.stderr.on("data", (d: Buffer) => (stderr += d.toString()));
    const exited = new Promise<number | null>((r) => child.on("close", (c) => r(c)));
    const t0 = Date.now();
    while (!existsSync(marker)) {
      if (Date.now() - t0 > 90_000) throw new Error(`the kernel never reached the spinning cell: ${stderr}`);
      await new Promise((r) => setTimeout(r, 100));
    }
    await new Promise((r) => setTimeout(r, 100)); // the marker's content is written
    const k = JSON.parse(readFileSync(marker, "utf8")) as { pid: number; ppid: number; cwd: string };
    const alive = (pid: number) => {
      try {
        process.kill(pid, 0);
        return true;
      } catch {
        return false;
      }
    };
    expect(alive(k.pid)).toBe(true);
    expect(existsSync(out)).toBe(true); // the run made it (and holds its lock)
    child.kill("SIGINT");
    expect(await exited).toBe(130);
    expect(stderr).toMatch(/interrupted \(SIGINT\)/);
    expect(stdout).not.toMatch(/report|wrote/);
    // SIGKILL is immediate, but the processes may take a moment to be reaped.
    for (let i = 0; i < 50 && (alive(k.pid) || alive(k.ppid)); i++) await new Promise((r) => setTimeout(r, 100));
    expect(alive(k.pid)).toBe(false); // the tslab kernel
    expect(alive(k.ppid)).toBe(false); // the Jupyter driver that started it
    expect(existsSync(k.cwd)).toBe(false); // the staging folder
    expect(existsSync(out)).toBe(false); // no empty output folder
  }, 150_000);
});
