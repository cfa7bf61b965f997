/**
 * `pinchoff op`: design file in, operating point JSON out, derivation record
 * written atomically; bad designs get errors naming the file and the field.
 * The design values are invented for the test.
 */
import { createHash } from "node:crypto";
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { main } from "../lib/cli/op.js";
import { captureCli } from "./support/cli.js";
import { checkStamp } from "../lib/record/stamp.js";

const root = resolve(dirname(fileURLToPath(import.meta.url)), "..");
import { parseDesign } from "../lib/bias/design-file.js";
import { InputError } from "../lib/errors.js";
import { UsageError } from "../lib/cli/args.js";

let dir: string;
const design = {
  name: "demo input stage (invented)",
  topology: "four-resistor",
  device: { card: { name: "demo-n", polarity: "nmos", kp: "200 uA/V^2", vt0: "0.5 V", lambda: "0.05 1/V", gamma: 0.4, phi: "0.7 V" }, w: "10 um", l: "1 um" },
  components: { rg1: "200k", rg2: "100 kOhm", rd: "5.1k", rs: 1000 },
  supplies: { vdd: "5 V" },
  body: "rail",
  limits: { maxDevicePower: "50 mW" },
};
const write = (name: string, value: unknown) => {
  const p = join(dir, name);
  writeFileSync(p, typeof value === "string" ? value : JSON.stringify(value));
  return p;
};
const run = (argv: string[]) => captureCli(main, argv);

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "pinchoff-op-"));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("pinchoff op", () => {
  it("reads a two-transistor stage with its second device under devices.<role>", async () => {
    // Invented NMOS mirror: M1 diode-connected through RREF from 3.3 V; M2 at twice its width, output held at 1.5 V.
    const card = { name: "demo-n", polarity: "nmos", kp: "200 uA/V^2", vt0: "0.5 V", lambda: "0.05 1/V" };
    const mirror = {
      topology: "current-mirror",
      device: { card, w: "20 um", l: "1 um" },
      devices: { reference: { card, w: "10 um", l: "1 um" } },
      components: { rref: "20k", vout: "1.5 V" },
      supplies: { vdd: "3.3 V" },
    };
    const r = await run([write("mirror.json", mirror)]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    // IOUT/IREF = 2·(1 + λ·VDS2)/(1 + λ·VDS1) for the square law with λ (common practice).
    const ratio = j.mirror.outputCurrent / j.mirror.referenceCurrent;
    const vgs = j.mirror.gateSource;
    expect(ratio).toBeCloseTo((2 * (1 + 0.05 * 1.5)) / (1 + 0.05 * vgs), 9);
    expect(() => parseDesign({ ...mirror, devices: { reference: { card, w: "-1 um", l: "1 um" } } }, "m.json")).toThrow(/m\.json: devices\.reference\.w/);
  });
  it("prints the operating point as JSON, values parsed from text with units", async () => {
    const file = write("stage.json", design);
    const r = await run([file]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.region).toBe("saturation");
    expect(j.nodes.gate).toBeCloseTo(5 / 3, 12);
    expect(j.currents.rd).toBeCloseTo(j.currents.drain, 15);
    expect(j.metrics.checks.every((c: { passed: boolean }) => c.passed)).toBe(true);
    expect(j.design).toBe(file);
  });
  it("writes the derivation as Markdown and HTML atomically, leaving no temp files", async () => {
    const file = write("stage2.json", design);
    const before = readFileSync(file, "utf8");
    for (const name of ["rec.md", "rec.html"]) {
      const out = join(dir, name);
      const r = await run([file, "--record", out]);
      expect(r.code).toBe(0);
      const text = readFileSync(out, "utf8");
      expect(text).toContain("Assume saturation");
      expect(text).toContain("First cut");
    }
    expect(readdirSync(dir).filter((f) => f.endsWith(".tmp"))).toEqual([]);
    expect(readFileSync(file, "utf8")).toBe(before);
  });
  it("replaces its own unchanged record, but never a file it did not write, not even one quoting the old marker phrase, unless --force", async () => {
    const file = write("stage4.json", design);
    for (const name of ["again.md", "again.html"]) {
      const out = join(dir, name);
      expect((await run([file, "--record", out])).code).toBe(0);
      expect(checkStamp(readFileSync(out, "utf8")).ok).toBe(true);
      expect((await run([file, "--record", out])).code).toBe(0); // its own record: replaced
      // Edited by hand after it was written: no longer the tool's to replace.
      const edited = readFileSync(out, "utf8").replace("Given", "Given (checked by me)");
      writeFileSync(out, edited);
      await expect(run([file, "--record", out])).rejects.toThrow(/text differs from what pinchoff wrote/);
      expect(readFileSync(out, "utf8")).toBe(edited);
    }
    // A user's notes that happen to contain the phrase earlier versions used as a marker.
    const quoted = "# my own notes\n\nThe old record said <!-- written by pinchoff op --> at the end.\n<meta name=\"generator\" content=\"written by pinchoff op\">\n";
    const notes = write("notes.md", quoted);
    await expect(run([file, "--record", notes])).rejects.toThrow(/notes\.md.*carries no pinchoff record stamp/);
    expect(readFileSync(notes, "utf8")).toBe(quoted);
    // A stamp copied from a real record into another file does not make that file the tool's.
    const real = readFileSync(join(dir, "again.html"), "utf8");
    const stampBlock = /<script type="application\/vnd\.pinchoff\.record\+json">[^<]*<\/script>/.exec(real)![0];
    const copied = write("copied.html", `<html><head>${stampBlock}</head><body>my page</body></html>`);
    await expect(run([file, "--record", copied])).rejects.toThrow(/text differs/);
    expect((await run([file, "--record", notes, "--force"])).code).toBe(0);
    expect(checkStamp(readFileSync(notes, "utf8")).ok).toBe(true);
  });
  it("stamps the record with the tool version, the date, the design file and its SHA-256, and records the limits as inputs", async () => {
    const file = write("stamped.json", { ...design, limits: { maxDevicePower: "50 mW", minSaturationMargin: "0.2 V" } });
    const digest = createHash("sha256").update(readFileSync(file)).digest("hex");
    const version = JSON.parse(readFileSync(join(root, "package.json"), "utf8")).version as string;
    const before = Date.now();
    for (const name of ["stamped.md", "stamped.html"]) {
      const out = join(dir, name);
      expect((await run([file, "--record", out])).code).toBe(0);
      const text = readFileSync(out, "utf8");
      const c = checkStamp(text);
      if (!c.ok) throw new Error(c.reason);
      expect(c.stamp).toMatchObject({ tool: "pinchoff", version, command: "op", design: { path: file, sha256: digest } });
      expect(Date.parse(c.stamp.written)).toBeGreaterThanOrEqual(before - 1000);
      expect(Date.parse(c.stamp.written)).toBeLessThanOrEqual(Date.now());
      expect(c.stamp.inputs).toMatch(/^[0-9a-f]{64}$/);
      // Visible to the reader too, and the limits are among the given values.
      expect(text).toContain(digest);
      expect(text).toContain(`pinchoff ${version}`);
      expect(text).toMatch(/P transistor, max/);
      expect(text).toMatch(/saturation margin, min/);
    }
    expect(readFileSync(join(dir, "stamped.md"), "utf8")).toMatch(/^---\npinchoff-record: \{/);
  });
  it("refuses to write the record over the design file", async () => {
    const file = write("stage3.json", design);
    const before = readFileSync(file, "utf8");
    await expect(run([file, "--record", file])).rejects.toThrow(/record file ending in \.html or \.md|other than the design file/);
    const md = write("stage3.md", design); // a design that happens to end in .md
    await expect(run([md, "--record", md])).rejects.toThrow(/other than the design file/);
    expect(readFileSync(file, "utf8")).toBe(before);
  });
  it("names the file and the field for an unknown topology, a wrong unit, a missing or unknown field", () => {
    expect(() => parseDesign({ ...design, topology: "tube-amp" }, "a.json")).toThrow(/a\.json: topology: got "tube-amp", expected one of the topology ids/);
    expect(() => parseDesign({ ...design, components: { ...design.components, rd: "5 V" } }, "b.json")).toThrow(/b\.json: components\.rd: got "5 V"/);
    const wrongUnit = (() => {
      try {
        parseDesign({ ...design, components: { ...design.components, rd: "5 V" } }, "b.json");
      } catch (e) {
        return e as InputError;
      }
    })();
    expect(wrongUnit?.code).toBe("wrong-dimension");
    const { rs: _rs, ...noRs } = design.components;
    expect(() => parseDesign({ ...design, components: noRs }, "c.json")).toThrow(/c\.json: components\.rs: got nothing/);
    expect(() => parseDesign({ ...design, colour: "red" }, "d.json")).toThrow(/d\.json: colour: got "colour", expected one of the fields/);
    expect(() => parseDesign({ ...design, device: { ...design.device, card: { ...design.device.card, kp: "-2 uA/V^2" } } }, "e.json")).toThrow(/e\.json: device\.card "demo-n"\.kp: got -0\.000002, expected a process transconductance/);
  });
  it("reports unreadable and malformed files as errors, and usage problems with exit 2", async () => {
    await expect(run([join(dir, "nope.json")])).rejects.toThrow(/nope\.json: cannot read the design file \(ENOENT\)/);
    const bad = write("bad.json", "{ not json");
    await expect(run([bad])).rejects.toThrow(/bad\.json: got .* expected JSON/);
    await expect(run([])).rejects.toThrow(UsageError);
    expect((await run(["--help"])).code).toBe(0);
  });
});

describe("pinchoff op exit status", () => {
  // Invented stage values; each variant breaks one check.
  const variants: [string, Record<string, unknown>, RegExp][] = [
    ["triode (RD far too large)", { components: { ...design.components, rd: "200k" } }, /check failed: Saturation margin/],
    ["cutoff (gate below threshold)", { components: { ...design.components, rg1: "10Meg" } }, /check failed: Overdrive/],
    ["over its power limit", { limits: { maxDevicePower: "1 uW" } }, /check failed: Transistor dissipation/],
  ];
  for (const [what, change, message] of variants)
    it(`exits 1 and names the check when the stage is in ${what}`, async () => {
      const r = await run([write(`fail-${what.split(" ")[0]}.json`, { ...design, ...change })]);
      expect(r.code).toBe(1);
      expect(r.err).toMatch(message);
      expect(JSON.parse(r.out).metrics.checks.some((c: { passed: boolean }) => !c.passed)).toBe(true);
    });
  it("exits 0 when every check passes", async () => {
    const r = await run([write("pass.json", design)]);
    expect(r.code).toBe(0);
    expect(r.err).toBe("");
  });
});
