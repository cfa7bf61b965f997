/**
 * One shape for a specification: the JSON a `pinchoff op` design file holds
 * (values as SI numbers) passed to the library's `synthesize` gives the same
 * design as the command. Cards, parts and specifications are invented.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { main } from "../lib/cli/op.js";
import { synthesize, synthesizeFourResistor, type StageSpec } from "../lib/bias/synthesis.js";
import { parsePartCard } from "../lib/bias/part-file.js";
import { Derivation } from "../lib/record/derivation.js";
import { InputError } from "../lib/errors.js";
import { captureCli } from "./support/cli.js";

const nCard = { name: "shape-n (invented)", polarity: "nmos", kp: 180e-6, vt0: 0.6, lambda: 0.02 };
const pCard = { name: "shape-p (invented)", polarity: "pmos", kp: 70e-6, vt0: -0.7, lambda: 0.03, gamma: 0.4, phi: 0.7 };
// The part's datasheet card (invented), as a design file states it; the library call takes it parsed.
const partCard = {
    name: "QS-30 (invented)",
    polarity: "nmos",
    threshold: { vgs: "2.0 V", id: "1 mA" },
    forwardTransconductance: { gfs: "200 mS", id: "200 mA", vds: "10 V" },
    onResistance: { rds: "1.8 Ohm", vgs: "10 V", id: "500 mA" },
    ratings: { vds: "60 V", vgs: "20 V", id: "300 mA", pd: "400 mW", pdAt: { ambient: "25 degC" }, tjMax: "150 degC", rthJA: "312.5 K/W" },
    provenance: "invented for the tests",
};
const part = parsePartCard(partCard, "shape part");

const designs: Record<string, object> = {
  "four-resistor NMOS, E24 as a set": {
    name: "preamp (invented)",
    topology: "four-resistor",
    device: { card: nCard },
    specification: { id: 1.5e-3, sizing: { vov: 0.3, l: 2e-6 }, drain: { gain: 8 }, bypassed: true, gate: { rin: 220e3 }, source: { fraction: 0.2 }, series: "E24", candidates: 3 },
    supplies: { vdd: 9 },
    limits: { minSaturationMargin: 0.3 },
  },
  "source follower PMOS, body at the rail": {
    topology: "source-follower",
    device: { card: pCard },
    specification: { id: 0.5e-3, sizing: { w: 40e-6, l: 1e-6 }, gate: { rin: 100e3 }, series: "E96" },
    supplies: { vdd: 5 },
    body: "rail",
  },
  "current mirror 1:2": {
    topology: "current-mirror",
    device: { card: nCard },
    specification: { id: 0.2e-3, ratio: 2, sizing: { vov: 0.25, l: 1e-6 }, series: "E24" },
    supplies: { vdd: 5 },
  },
  "diode-loaded stage for a gain": {
    topology: "diode-load",
    device: { card: nCard },
    specification: { id: 0.1e-3, sizing: { vov: 0.2, l: 1e-6 }, load: { card: pCard, l: 1e-6 }, output: { gain: 3 } },
    supplies: { vdd: 3.3 },
  },
  "four-resistor around a discrete part at 40 °C": {
    topology: "four-resistor",
    device: { part, ambient: 313.15 },
    specification: { id: 20e-3, drain: { vd: 7 }, source: { vrs: 2 }, gate: { current: 20e-6 }, series: "E96" },
    supplies: { vdd: 12 },
  },
};

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "pinchoff-shape-"));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("the same JSON through pinchoff op and through synthesize", () => {
  for (const [what, json] of Object.entries(designs))
    it(`${what}: identical chosen components, sizes and deviation`, async () => {
      const file = join(dir, `${what.replace(/[^a-z0-9]+/gi, "-")}.json`);
      // A discrete part is written as its card states it (the part file's form); everything else is the same JSON.
      const dev = (json as { device: { part?: unknown } }).device;
      writeFileSync(file, JSON.stringify(dev.part ? { ...json, device: { ...dev, part: partCard } } : json));
      const r = await captureCli(main, [file, "--json"]);
      expect(r.err).not.toMatch(/error/i);
      const viaOp = JSON.parse(r.out);
      const rec = new Derivation(what);
      const viaLib = synthesize((dev.part ? json : JSON.parse(JSON.stringify(json))) as StageSpec, rec);
      expect(Object.keys(viaLib.stage.components).length).toBeGreaterThan(0);
      expect(viaOp.chosen.components).toEqual(viaLib.stage.components);
      expect(viaOp.chosen.device).toEqual({ w: viaLib.stage.device.w, l: viaLib.stage.device.l });
      expect(viaOp.deviation).toEqual(JSON.parse(JSON.stringify(viaLib.deviation)));
      expect(viaOp.operatingPoint.region).toBe(viaLib.analysis.region);
    });

  it("a discrete part's ratings are checked by the library call as by op", () => {
    const rec = new Derivation("part");
    const r = synthesizeFourResistor(designs["four-resistor around a discrete part at 40 °C"] as never, rec);
    expect(r.stage.device.part?.ambient).toBe(313.15);
    const names = rec.checks.map((c) => c.title);
    expect(names).toContain("QS-30 (invented): junction temperature within TJ(max)");
  });

  it("refuses the flat form, sizing beside a part, and fields in the wrong place, naming each", () => {
    const fr = designs["four-resistor NMOS, E24 as a set"] as Record<string, unknown>;
    expect(() => synthesize({ topology: "four-resistor", card: nCard, supplies: { vdd: 9 }, id: 1e-3, sizing: { vov: 0.3, l: 1e-6 } } as never)).toThrow(/spec\.card: got "card", expected a field of a specification/);
    expect(() => synthesize({ ...fr, specification: { ...(fr.specification as object), card: nCard } } as never)).toThrow(/spec\.specification\.card: got "card"/);
    const withPart = designs["four-resistor around a discrete part at 40 °C"] as Record<string, unknown>;
    expect(() => synthesize({ ...withPart, specification: { ...(withPart.specification as object), sizing: { vov: 0.3, l: 1e-6 } } } as never)).toThrow(/no specification\.sizing with a discrete part/);
    expect(() => synthesize({ ...fr, device: { card: nCard, w: 1e-6 } } as never)).toThrow(InputError);
  });
});
