/**
 * `pinchoff op` with a specification: the design file states targets, the
 * command designs the stage (ideal values, standard values as a set, the
 * re-solve, the deviation) and prints it. Ideal values are checked against
 * square-law hand calculations written here (common practice: Shichman–Hodges
 * saturation current with λ = 0, divider and Ohm's-law bias equations);
 * standard values against the IEC 60063 series in lib/bias/eseries.ts.
 * All cards and specifications are invented for the tests.
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { designOf, main } from "../lib/cli/op.js";
import { captureCli } from "./support/cli.js";
import { parseDesign, parseDesignFile } from "../lib/bias/design-file.js";
import { isStandard } from "../lib/bias/eseries.js";
import { specFields, specificationMarkdown, specificationRows, type SpecField, type SpecTopology } from "../lib/bias/spec-fields.js";
import { InfeasibleError, PinchoffError } from "../lib/errors.js";

const root = resolve(dirname(fileURLToPath(import.meta.url)), "..");
let dir: string;
const nCard = { name: "demo-n (invented)", polarity: "nmos", kp: "200 uA/V^2", vt0: "0.5 V" };
const pCard = { name: "demo-p (invented)", polarity: "pmos", kp: "100 uA/V^2", vt0: "-0.5 V" };
const fourResistor = {
  name: "demo spec stage (invented)",
  topology: "four-resistor",
  device: { card: nCard },
  specification: { id: "1 mA", sizing: { vov: "250 mV", l: "1 um" }, drain: { vd: "3 V" }, source: { vrs: "1 V" }, gate: { current: "10 uA" } },
  supplies: { vdd: "5 V" },
};

const write = (name: string, value: unknown) => {
  const p = join(dir, name);
  writeFileSync(p, typeof value === "string" ? value : JSON.stringify(value));
  return p;
};
const run = (argv: string[]) => captureCli(main, argv);
/** Catch the error a call throws, to look at its fields. */
function thrown(f: () => unknown): PinchoffError {
  try {
    f();
  } catch (e) {
    if (e instanceof PinchoffError) return e;
    throw e;
  }
  throw new Error("expected an error");
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "pinchoff-op-spec-"));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("pinchoff op with a specification", () => {
  it("designs a four-resistor NMOS stage: ideal values by hand, E24 values as a set, the re-solve within the deviation reported", async () => {
    const file = write("fr.json", fourResistor);
    const rec = join(dir, "fr.md");
    const r = await run([file, "--record", rec]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);

    // Hand calculation (common practice, square law with λ = 0, no body effect):
    const [vdd, id, vov, l, vt, kp, vrs, vd, idiv] = [5, 1e-3, 0.25, 1e-6, 0.5, 200e-6, 1, 3, 10e-6];
    const wl = (2 * id) / (kp * vov * vov); // ID = (k'/2)(W/L)VOV²  →  160
    const vg = vrs + vt + vov; // VG = VS + Vt + VOV = 1.75 V
    expect(j.ideal.wl).toBeCloseTo(wl, 9);
    expect(j.ideal.w).toBeCloseTo(wl * l, 15);
    expect(j.ideal.vg).toBeCloseTo(vg, 12);
    expect(j.ideal.components.rg1).toBeCloseTo((vdd - vg) / idiv, 6); // 325 kΩ
    expect(j.ideal.components.rg2).toBeCloseTo(vg / idiv, 6); // 175 kΩ
    expect(j.ideal.components.rd).toBeCloseTo((vdd - vd) / id, 9); // 2 kΩ
    expect(j.ideal.components.rs).toBeCloseTo(vrs / id, 9); // 1 kΩ

    // The chosen values are E24 members (IEC 60063), one per resistor.
    expect(j.series).toBe("E24");
    for (const n of ["rg1", "rg2", "rd", "rs"]) expect(isStandard(j.chosen.components[n], "E24")).toBe(true);
    expect(j.standardValues.components.map((c: { name: string }) => c.name)).toEqual(["rg1", "rg2", "rd", "rs"]);

    // Re-solve the chosen stage by hand: VG from the divider, then
    // (k·RS/2)·VOV² + VOV − (VG − Vt) = 0 for the source-degenerated square law.
    const c = j.chosen.components;
    const k = kp * (j.chosen.device.w / j.chosen.device.l);
    const vgc = (vdd * c.rg2) / (c.rg1 + c.rg2);
    const x = (-1 + Math.sqrt(1 + 2 * k * c.rs * (vgc - vt))) / (k * c.rs);
    const idHand = (k / 2) * x * x;
    const op = j.operatingPoint;
    expect(op.region).toBe("saturation");
    expect(op.currents.drain).toBeCloseTo(idHand, 12);
    // The deviation printed is the re-solved figure against the target.
    expect(j.deviation.id.target).toBe(id);
    expect(j.deviation.id.achieved).toBe(op.currents.drain);
    expect(j.deviation.id.target + j.deviation.id.error).toBeCloseTo(op.currents.drain, 15);
    expect(Math.abs(op.currents.drain - id) / id).toBeCloseTo(Math.abs(j.deviation.id.relative), 15);
    expect(j.deviation.output.achieved).toBeCloseTo(vdd - idHand * c.rd, 9);
    expect(j.deviation.inSaturation).toBe(true);
    expect(j.caution).toMatch(/verify the chosen design by simulation and measurement/);

    // The record holds the whole derivation: synthesis, choice, re-solve, deviation.
    const text = readFileSync(rec, "utf8");
    for (const s of ["Choosing standard values", "The chosen stage is analysed by", "Deviation from the specification"]) expect(text.replace(/\\/g, "")).toContain(s);
    expect(text).toContain("W/L = \\frac{2\\cdot{I_{D}}}"); // the sizing formula with its numbers
  });

  it('keeps the ideal values with series "exact" and meets the target current to solver precision', async () => {
    const r = await run([write("exact.json", { ...fourResistor, specification: { ...fourResistor.specification, series: "exact" } })]);
    const j = JSON.parse(r.out);
    expect(j.series).toBe("exact");
    expect(j.standardValues).toBeUndefined();
    expect(j.chosen.components).toEqual(j.ideal.components);
    expect(Math.abs(j.deviation.id.relative)).toBeLessThan(1e-9);
  });

  it("designs a PMOS four-resistor stage with the default divider ratio, nodes given absolute", async () => {
    const spec = {
      topology: "four-resistor",
      device: { card: pCard },
      specification: { id: "0.5 mA", sizing: { vov: "0.3 V", l: "1 um" }, drain: { vd: "2 V" }, source: { vrs: "1 V" } },
      supplies: { vdd: "5 V" },
    };
    const r = await run([write("pmos.json", spec)]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    // Hand calculation (common practice): source 1 V below VDD, VSG = |Vt| + VOV, divider current ID/10.
    const [vdd, id, vov, vt, kp] = [5, 0.5e-3, 0.3, 0.5, 100e-6];
    const vs = vdd - 1;
    const vg = vs - vt - vov; // 3.2 V
    const idiv = 0.1 * id;
    expect(j.ideal.wl).toBeCloseTo((2 * id) / (kp * vov * vov), 9);
    expect(j.ideal.vs).toBeCloseTo(vs, 12);
    expect(j.ideal.vg).toBeCloseTo(vg, 12);
    expect(j.ideal.components.rg1).toBeCloseTo((vdd - vg) / idiv, 6); // RG1 to VDD: 36 kΩ
    expect(j.ideal.components.rg2).toBeCloseTo(vg / idiv, 6); // RG2 to ground: 64 kΩ
    expect(j.ideal.components.rd).toBeCloseTo(2 / id, 9); // drain at 2 V above ground
    expect(j.ideal.components.rs).toBeCloseTo(1 / id, 9);
    for (const n of ["rg1", "rg2", "rd", "rs"]) expect(isStandard(j.chosen.components[n], "E24")).toBe(true);
    expect(j.operatingPoint.polarity).toBe("pmos");
    expect(j.operatingPoint.region).toBe("saturation");
    expect(j.deviation.id.achieved).toBe(j.operatingPoint.currents.drain);
    expect(Math.abs(j.deviation.id.relative)).toBeLessThan(0.1);
  });

  it("designs a source follower for an input resistance, resistors from E96", async () => {
    const spec = {
      topology: "source-follower",
      device: { card: nCard },
      specification: { id: "1 mA", sizing: { vov: "0.2 V", l: "1 um" }, output: { vs: "2 V" }, gate: { rin: "1 MOhm" }, series: "E96" },
      supplies: { vdd: "5 V" },
    };
    const j = JSON.parse((await run([write("sf.json", spec)])).out);
    // Hand calculation (common practice): VG = VS + Vt + VOV; RG1 ∥ RG2 = Rin with the divider at VG.
    const [vdd, rin] = [5, 1e6];
    const vg = 2 + 0.5 + 0.2;
    expect(j.ideal.components.rs).toBeCloseTo(2 / 1e-3, 9);
    expect(j.ideal.components.rg1).toBeCloseTo((rin * vdd) / vg, 3);
    expect(j.ideal.components.rg2).toBeCloseTo((rin * vdd) / (vdd - vg), 3);
    const { rg1, rg2 } = j.ideal.components;
    expect((rg1 * rg2) / (rg1 + rg2)).toBeCloseTo(rin, 3);
    for (const n of ["rg1", "rg2", "rs"]) expect(isStandard(j.chosen.components[n], "E96")).toBe(true);
    expect(j.series).toBe("E96");
    expect(j.deviation.output.target).toBe(2);
    expect(j.deviation.output.achieved).toBe(j.operatingPoint.nodes.source);
  });

  it("designs a 1:2 current mirror: the reference transistor sized and RREF chosen from E24", async () => {
    const spec = {
      topology: "current-mirror",
      device: { card: nCard },
      specification: { id: "200 uA", sizing: { vov: "0.2 V", l: "2 um" }, ratio: 2, load: "source", output: { vout: "1.5 V" } },
      supplies: { vdd: "3.3 V" },
    };
    const j = JSON.parse((await run([write("mirror.json", spec)])).out);
    // Hand calculation (common practice, λ = 0): both share VGS = Vt + VOV; IREF = IOUT/N; RREF = (VDD − VGS)/IREF.
    const [iout, kp, vov, l, n] = [200e-6, 200e-6, 0.2, 2e-6, 2];
    const w2 = ((2 * iout) / (kp * vov * vov)) * l;
    expect(j.chosen.device.w).toBeCloseTo(w2, 15); // 100 µm
    expect(j.chosen.devices.reference.w).toBeCloseTo(w2 / n, 15); // 50 µm
    expect(j.ideal.components.rref).toBeCloseTo((3.3 - 0.7) / (iout / n), 6); // 26 kΩ
    expect(isStandard(j.chosen.components.rref, "E24")).toBe(true);
    expect(j.chosen.components.vout).toBe(1.5);
    expect(j.deviation.id.achieved).toBeCloseTo(j.operatingPoint.currents.drain, 15);
  });

  it("checks the chosen parts against their power ratings and says on stderr which are over", async () => {
    // RD carries about 1 mA: about 2 mW in 2 kΩ, over a 1 mW rating at 50 % derating (invented ratings).
    const dissipation = { resistor: { rating: "0.25 W" }, resistors: { rd: { rating: "1 mW", derating: 0.5 } }, transistor: { rating: "0.5 W" } };
    const r = await run([write("power.json", { ...fourResistor, specification: { ...fourResistor.specification, dissipation } })]);
    expect(r.code).toBe(1); // a failed check exits 1
    const j = JSON.parse(r.out);
    const rd = j.dissipation.items.find((i: { name: string }) => i.name === "rd");
    const i = j.operatingPoint.currents.rd;
    expect(rd.power).toBeCloseTo(i * i * j.chosen.components.rd, 12); // Joule's law
    expect(rd.allowed).toBeCloseTo(0.5e-3, 15);
    expect(rd.passed).toBe(false);
    expect(j.dissipation.failures.map((f: { name: string }) => f.name)).toEqual(["rd"]);
    expect(r.err).toMatch(/check failed: rd over its allowed power/);
  });

  it("designs a diode-loaded stage for a gain: the load's card read inside the specification, no resistor to choose", async () => {
    const file = write("dl.json", {
      topology: "diode-load",
      device: { card: { ...nCard, lambda: "0.05 1/V" } },
      specification: { id: "100 uA", sizing: { vov: "0.2 V", l: "1 um" }, load: { card: { ...pCard, vt0: "-0.55 V", lambda: "0.08 1/V" }, l: "1 um" }, output: { gain: 5 } },
      supplies: { vdd: "3.3 V" },
    });
    const j = JSON.parse((await run([file])).out);
    expect(j.topology).toBe("diode-load");
    expect(j.series).toBeNull();
    expect(j.standardValues).toBeUndefined();
    // With nothing rounded, the re-solved gain meets the target to solver precision.
    expect(j.deviation.gain.target).toBe(5);
    expect(Math.abs(j.deviation.gain.relative)).toBeLessThan(1e-9);
    expect(j.chosen.devices.load.l).toBe(1e-6);
    // The driver's gate: VG = Vt + VOV with the source at ground (common practice).
    expect(j.ideal.components.vg).toBeCloseTo(0.5 + 0.2, 12);
    expect(j.operatingPoint.region).toBe("saturation");
  });

  it("exposes the design as a library call with its derivation", () => {
    const f = parseDesignFile(fourResistor, "lib.json");
    expect(f.kind).toBe("specification");
    if (f.kind !== "specification") return;
    const { design, derivation } = designOf(f);
    expect(design.topology).toBe("four-resistor");
    expect(derivation.toJSON().title).toMatch(/four-resistor|demo spec stage/);
    expect(() => parseDesign(fourResistor, "lib.json")).toThrow(/lib\.json: specification: this design gives a specification, not components/);
  });

  it("explains an infeasible specification in numbers through the command: exit 1, the message on stderr", () => {
    const file = write("infeasible.json", { ...fourResistor, specification: { ...fourResistor.specification, drain: { gain: 500 } } });
    const p = spawnSync(process.execPath, ["--import", "tsx", "lib/cli/main.ts", "op", file], { cwd: root, encoding: "utf8" });
    expect(p.status).toBe(1);
    expect(p.stdout).toBe("");
    // RD = |Av|/gm = 500/(2·1 mA/0.25 V) = 62.5 kΩ would put the drain at 5 V − 62.5 V.
    expect(p.stderr).toContain(`pinchoff op: ${file}: specification.drain: a gain of 500 needs RD = 62500 Ω`);
    expect(p.stderr).toMatch(/below the triode edge VG − Vt = 1\.25 V .* the device would be in triode/);
    const f = parseDesignFile(JSON.parse(readFileSync(file, "utf8")), file);
    if (f.kind !== "specification") throw new Error("expected a specification");
    expect(() => designOf(f)).toThrow(InfeasibleError);
  });

  it("names the file and the field path for bad specifications", () => {
    const s = fourResistor.specification;
    const bad = (patch: Record<string, unknown>) => thrown(() => parseDesignFile({ ...fourResistor, ...patch }, "f.json"));
    const both = bad({ components: { rg1: 1, rg2: 1, rd: 1, rs: 1 } });
    expect(both.message).toMatch(/^f\.json: components\/specification: got \["components","specification"\], expected exactly one of components/);
    expect(bad({ specification: undefined }).message).toMatch(/^f\.json: components\/specification: got nothing, expected exactly one of/);
    expect(bad({ specification: { ...s, colour: "red" } }).message).toMatch(/^f\.json: specification\.colour: got "colour", expected one of the fields id, sizing/);
    const { id: _id, ...noId } = s;
    expect(bad({ specification: noId }).message).toMatch(/^f\.json: specification\.id: got nothing, expected a current in A, > 0: target drain current/);
    expect(bad({ specification: { ...s, sizing: { vov: "0.2 V" } } }).message).toMatch(/^f\.json: specification\.sizing\.l: got nothing, expected a length in m, > 0/);
    expect(bad({ specification: { ...s, sizing: { vov: "0.2 V", w: "10 um", l: "1 um" } } }).message).toMatch(/^f\.json: specification\.sizing: got \["vov","w"\], expected exactly one of vov, w/);
    const wrongUnit = bad({ specification: { ...s, id: "1 V" } });
    expect(wrongUnit.code).toBe("wrong-dimension");
    expect(wrongUnit.message).toMatch(/^f\.json: specification\.id: got "1 V", expected a current in A, but it is a voltage/);
    expect(bad({ specification: { ...s, source: { fraction: 1.5 } } }).message).toMatch(/^f\.json: specification\.source\.fraction: got 1\.5, expected a dimensionless ratio \(a plain number\), 0 < f < 1/);
    expect(bad({ specification: { ...s, series: "E25" } }).message).toMatch(/^f\.json: specification\.series: got "E25", expected one of "E3", .*"exact"/);
    expect(bad({ specification: { ...s, candidates: 2.5 } }).message).toMatch(/^f\.json: specification\.candidates: got 2\.5, expected a whole number ≥ 1/);
    expect(bad({ specification: { ...s, bypassed: "yes" } }).message).toMatch(/^f\.json: specification\.bypassed: got "yes", expected true or false/);
    expect(bad({ device: { card: nCard, w: "10 um" } }).message).toMatch(/^f\.json: device\.w: got "10 um", expected no device\.w with a specification: the size comes from specification\.sizing/);
    expect(bad({ devices: { reference: { card: nCard } } }).message).toMatch(/^f\.json: devices: got \["reference"\], expected no devices with a specification/);
    expect(bad({ specification: { ...s, dissipation: { resistors: { rd: { derating: 0.5 } } } } }).message).toMatch(
      /^f\.json: specification\.dissipation\.resistors\.rd\.rating: got nothing, expected a power in W, > 0/,
    );
    expect(bad({ specification: { ...s, dissipation: { resistors: { r_d: { rating: "0.25 W" } } } } }).message).toMatch(
      /^f\.json: specification\.dissipation\.resistors\.r_d: got "r_d", expected one of the four-resistor resistors rg1, rg2, rd, rs/,
    );
    // A field another topology has is unknown here.
    expect(bad({ specification: { ...s, ratio: 2 } }).message).toMatch(/^f\.json: specification\.ratio: got "ratio", expected one of the fields/);
    // The card is read as for analysis, with its path.
    expect(bad({ device: { card: { ...nCard, kp: "200 uA" } } }).message).toMatch(/^f\.json: device\.card\.kp: got "200 uA"/);
  });

  it("rejects a value of the wrong dimension at every quantity field of every topology's table, naming its path", () => {
    // Derived from the table: a valid minimal value for each field, then one quantity replaced by a wrong unit.
    const valid = (f: SpecField): unknown => {
      switch (f.kind) {
        case "quantity":
          return f.range === "fraction" || f.range === "derating" ? 0.5 : 1;
        case "integer":
          return f.min;
        case "boolean":
          return true;
        case "choice":
          return f.values[0];
        case "card":
          return nCard;
        case "byName":
          return {};
        case "group":
          return Object.fromEntries(Object.entries(f.fields).filter(([k, g]) => g.required || f.oneOf?.[0] === k).map(([k, g]) => [k, valid(g)]));
      }
    };
    let checked = 0;
    for (const t of Object.keys(specFields) as SpecTopology[]) {
      const fields = specFields[t] as Readonly<Record<string, SpecField>>;
      const minimal = valid({ kind: "group", meaning: "", fields }) as Record<string, unknown>;
      const visit = (group: Readonly<Record<string, SpecField>>, oneOf: readonly string[] | undefined, path: string[], place: (v: Record<string, unknown>) => Record<string, unknown>) => {
        for (const [k, f] of Object.entries(group)) {
          const at = [...path, k];
          const into = (v: unknown) => {
            // k takes the place of its oneOf siblings, or sits beside the first of them.
            const pick = oneOf?.includes(k) ? [k] : oneOf;
            const own = valid({ kind: "group", meaning: "", fields: group, ...(pick ? { oneOf: pick } : {}) }) as Record<string, unknown>;
            return place({ ...own, [k]: v });
          };
          if (f.kind === "quantity") {
            const wrong = f.dim === "voltage" ? "1 mA" : "1 V";
            const e = thrown(() => parseDesignFile({ topology: t, device: { card: nCard }, supplies: { vdd: "5 V" }, specification: into(wrong) }, "w.json"));
            expect(e.code, at.join(".")).toBe("wrong-dimension");
            expect(e.message.startsWith(`w.json: specification.${at.join(".")}: got "${wrong}"`), e.message).toBe(true);
            checked++;
          } else if (f.kind === "group") visit(f.fields, f.oneOf, at, (v) => into(v));
        }
      };
      visit(fields, undefined, [], (v) => ({ ...minimal, ...v }));
    }
    expect(checked).toBeGreaterThan(60);
  });

  it("documents the schema from the same table", () => {
    const rows = specificationRows("four-resistor");
    expect(rows.find((r) => r.path === "sizing.vov")).toMatchObject({ accepts: "a voltage in V, > 0", required: "one of vov/w" });
    expect(rows.find((r) => r.path === "id")?.required).toBe("yes");
    expect(rows.find((r) => r.path === "series")?.fallback).toBe("E24");
    const md = specificationMarkdown();
    for (const t of Object.keys(specFields)) expect(md).toContain(`\`${t}\`:`);
    expect(md).toContain("| `load.card` |");
  });
});
