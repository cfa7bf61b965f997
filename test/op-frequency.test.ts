/**
 * `pinchoff op` with a design file's `frequency` section: the capacitance block
 * on the card, the source, load and target corner read with their units, the
 * response in the JSON output and the summary, a missed target failing the op,
 * and a source impedance that is not a resistance refused with the field path.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { main } from "../lib/cli/op.js";
import { parseDesignFile } from "../lib/bias/design-file.js";
import { captureCli } from "./support/cli.js";

const dir = mkdtempSync(join(tmpdir(), "pinchoff-op-freq-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

// Invented: a microphone preamplifier stage on an invented 20 nm-oxide process.
const design = {
  name: "microphone preamp (invented)",
  topology: "four-resistor",
  device: {
    card: { name: "demo-n", polarity: "nmos", kp: "100 uA/V^2", vt0: "0.7 V", lambda: "0.02 1/V", capacitance: { tox: "20 nm", cgso: "0.2 fF/um", cgdo: "0.2 fF/um", cj: "0.5 fF/um^2", cjsw: "0.2 fF/um", diffusionLength: "3 um" }, provenance: "invented for the tests" },
    w: "40 um",
    l: "2 um",
  },
  components: { rg1: "680 kohm", rg2: "220 kohm", rd: "10 kohm", rs: "1.5 kohm" },
  supplies: { vdd: "12 V" },
  frequency: { source: { resistance: "10 kohm" }, load: { resistance: "100 kohm", capacitance: "10 pF" }, targets: { lowCorner: "20 Hz" }, series: "E12" },
};
const write = (name: string, d: unknown) => {
  const p = join(dir, name);
  writeFileSync(p, JSON.stringify(d));
  return p;
};

describe("pinchoff op with a frequency section", () => {
  it("reads the units and reports the designed capacitors and both corners", async () => {
    const r = await captureCli(main, [write("ok.json", design), "--json"]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.frequency.low.capacitors).toHaveLength(3);
    expect(Math.abs(j.frequency.low.corner / 20 - 1)).toBeLessThan(0.15);
    expect(j.frequency.high.corner).toBeGreaterThan(1e4);
    const t = await captureCli(main, [write("ok.json", design), "--text"]);
    expect(t.out).toMatch(/Frequency response \(common-source/);
    expect(t.out).toMatch(/bypass capacitor .*\(designed\)/);
  }, 60_000);
  it("fails the op when given capacitors miss the low-corner target: exit 1", async () => {
    const d = { ...design, frequency: { ...design.frequency, capacitors: { input: "1 uF", output: "1 uF", bypass: "1 mF" }, targets: { lowCorner: "1 Hz" } } };
    const r = await captureCli(main, [write("low.json", d), "--json"]);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/Low-frequency corner/);
  });
  it("takes a discrete part's datasheet capacitances from its part card", async () => {
    // Invented part: k = gfs²/(2·ID) = 0.1 A/V², VGS(th) 2 V; Ciss 60 pF, Crss 5 pF, Coss 25 pF at 25 V.
    const part = {
      name: "QN-60 (invented)",
      polarity: "nmos",
      threshold: { vgs: "2.0 V", id: "1 mA" },
      forwardTransconductance: { gfs: "200 mS", id: "200 mA", vds: "10 V" },
      ratings: { vds: "60 V", vgs: "20 V", id: "300 mA", pd: "400 mW", pdAt: { ambient: "25 degC" }, tjMax: "150 degC", rthJA: "312.5 K/W" },
      capacitances: { ciss: "60 pF", crss: "5 pF", coss: "25 pF", vds: "25 V" },
      provenance: "invented for the tests",
    };
    const d = { name: "discrete stage (invented)", topology: "four-resistor", device: { part }, components: { rg1: "1 Mohm", rg2: "270 kohm", rd: "1 kohm", rs: "220 ohm" }, supplies: { vdd: "12 V" }, frequency: { source: { resistance: "600 ohm" }, load: { resistance: "10 kohm" }, targets: { lowCorner: "50 Hz" } } };
    const r = await captureCli(main, [write("part.json", d), "--json"]);
    const j = JSON.parse(r.out);
    expect(j.frequency.capacitances.from).toBe("datasheet");
    expect(j.frequency.capacitances.cgs).toBeCloseTo(55e-12, 20);
    expect(j.frequency.capacitances.cgd).toBeCloseTo(5e-12, 20);
    expect(j.frequency.capacitances.cds).toBeCloseTo(20e-12, 20);
  }, 60_000);
  it("refuses a source impedance that is not a resistance, naming the field", () => {
    expect(() => parseDesignFile({ ...design, frequency: { source: { resistance: "50 ohm", reactance: "10 ohm" } } }, "d.json")).toThrow(/d\.json: frequency\.source\.reactance.*resistance/);
    expect(() => parseDesignFile({ ...design, frequency: { source: { resistance: "10 pF" } } }, "d.json")).toThrow(/frequency\.source\.resistance/);
  });
  it("asks for the card's capacitance data when a frequency section is given without it", async () => {
    const card = { ...design.device.card } as Record<string, unknown>;
    delete card.capacitance;
    const r = await captureCli(main, [write("bare.json", { ...design, device: { ...design.device, card } })]).catch((e: Error) => ({ code: -1, out: "", err: e.message }));
    expect(`${r.err}`).toMatch(/TOX/);
  });
  it("analyses the drain-feedback stage, the current mirror and the diode-load stage from their design files", async () => {
    const card = design.device.card;
    const pcard = { ...card, name: "demo-p", polarity: "pmos", vt0: "-0.7 V", kp: "40 uA/V^2" };
    const files = [
      { view: "drain-feedback", d: { name: "feedback stage (invented)", topology: "drain-feedback", device: design.device, components: { rf: "2.2 Mohm", rd: "10 kohm", rs: "470 ohm" }, supplies: { vdd: "12 V" }, frequency: design.frequency }, low: 3 },
      { view: "current-mirror", d: { name: "bias mirror (invented)", topology: "current-mirror", device: design.device, devices: { reference: { card, w: "10 um", l: "2 um" } }, components: { rref: "100 kohm", rload: "20 kohm" }, supplies: { vdd: "5 V" }, frequency: { load: { capacitance: "1 pF" } } } },
      { view: "diode-load", d: { name: "gain cell (invented)", topology: "diode-load", device: { card, w: "20 um", l: "1 um" }, devices: { load: { card: pcard, w: "10 um", l: "1 um" } }, components: { vg: "1.2 V" }, supplies: { vdd: "5 V" }, frequency: { source: { resistance: "1 kohm" }, load: { capacitance: "0.5 pF" } } } },
    ];
    for (const f of files) {
      const r = await captureCli(main, [write(`${f.view}.json`, f.d), "--json"]);
      expect(r.err).toBe("");
      expect(r.code).toBe(0);
      const j = JSON.parse(r.out);
      expect(j.frequency.view).toBe(f.view);
      expect(j.frequency.high.corner).toBeGreaterThan(0);
      expect(j.frequency.low?.capacitors?.length ?? 0).toBe(f.low ?? 0);
      const t = await captureCli(main, [write(`${f.view}.json`, f.d), "--text"]);
      expect(t.out).toMatch(new RegExp(`Frequency response \\(${f.view}`));
    }
  }, 60_000);
  it("takes a simple mirror's load from components.rload or, with its output held at vout, from frequency.load.resistance", async () => {
    const card = design.device.card;
    const base = { name: "bias mirror (invented)", topology: "current-mirror", device: design.device, devices: { reference: { card, w: "10 um", l: "2 um" } }, supplies: { vdd: "5 V" } };
    const own = JSON.parse((await captureCli(main, [write("own.json", { ...base, components: { rref: "100 kohm", rload: "20 kohm" }, frequency: { load: { capacitance: "1 pF" } } }), "--json"])).out);
    // The same operating point held by a source at the drain voltage RLOAD gave, RLOAD now the outside load.
    const vd = own.nodes.drain as number;
    const r = await captureCli(main, [write("held.json", { ...base, components: { rref: "100 kohm", vout: `${vd} V` }, frequency: { load: { resistance: "20 kohm", capacitance: "1 pF" } } }), "--json"]);
    expect(r.err).toBe("");
    const held = JSON.parse(r.out);
    expect(held.frequency.view).toBe("current-mirror");
    expect(Math.abs(held.frequency.midbandGain / own.frequency.midbandGain - 1)).toBeLessThan(1e-6);
    expect(Math.abs(held.frequency.high.corner / own.frequency.high.corner - 1)).toBeLessThan(1e-6);
    // Both at once: refused, naming the field and where the load is given.
    const both = await captureCli(main, [write("both.json", { ...base, components: { rref: "100 kohm", rload: "20 kohm" }, frequency: { load: { resistance: "20 kohm" } } }), "--json"]).catch((e: Error) => ({ code: -1, out: "", err: e.message }));
    expect(both.code).not.toBe(0);
    expect(`${both.err}`).toMatch(/frequency\.load\.resistance.*components\.rload/);
    // Held without a load resistance: refused, naming the field.
    const none = await captureCli(main, [write("none.json", { ...base, components: { rref: "100 kohm", vout: "2 V" }, frequency: { load: { capacitance: "1 pF" } } }), "--json"]).catch((e: Error) => ({ code: -1, out: "", err: e.message }));
    expect(none.code).not.toBe(0);
    expect(`${none.err}`).toMatch(/frequency\.load\.resistance/);
  }, 60_000);
  it("analyses the cascode current mirror, stacked and wide-swing, with RLOAD and CL from the frequency section", async () => {
    const card = design.device.card;
    const base = { topology: "cascode-mirror", device: { card, w: "20 um", l: "2 um" }, devices: { cascode: { card, w: "20 um", l: "1 um" } }, supplies: { vdd: "5 V" }, frequency: { load: { resistance: "100 kohm", capacitance: "2 pF" } } };
    const files = [
      { bias: "stacked", d: { ...base, name: "sensor bias mirror (invented)", components: { iref: "50 uA", vout: "3 V" } } },
      { bias: "wide-swing", d: { ...base, name: "low-headroom mirror (invented)", components: { iref: "50 uA", vout: "2 V", vcas: "1.6 V" } } },
    ];
    for (const f of files) {
      const r = await captureCli(main, [write(`${f.bias}.json`, f.d), "--json"]);
      expect(r.err).toBe("");
      expect(r.code).toBe(0);
      const j = JSON.parse(r.out);
      expect(j.frequency.view).toBe("cascode-mirror");
      expect(j.frequency.cascodeMirror.bias).toBe(f.bias);
      expect(j.frequency.drive).toBe("current");
      // Transimpedance ≈ −RLOAD for a 1:1 mirror whose cascode resistance is far above RLOAD; output pole 1/(2π·RLOAD·CO), CO ≥ CL.
      expect(j.frequency.midbandGain).toBeLessThan(-0.9e5);
      expect(j.frequency.midbandGain).toBeGreaterThan(-1.01e5);
      expect(j.frequency.mirror.outputPole).toBeLessThan(1 / (2 * Math.PI * 100e3 * 2e-12));
      expect(j.frequency.high.corner).toBeGreaterThan(0.5 / (2 * Math.PI * 100e3 * 2e-12));
      const t = await captureCli(main, [write(`${f.bias}.json`, f.d), "--text"]);
      expect(t.out).toMatch(/Frequency response \(cascode-mirror/);
    }
    // Without a load resistance the output is held by an ideal source: refused, naming the field.
    const r = await captureCli(main, [write("noload.json", { ...files[0]!.d, frequency: { load: { capacitance: "2 pF" } } }), "--json"]).catch((e: Error) => ({ code: -1, out: "", err: e.message }));
    expect(r.code).not.toBe(0);
    expect(`${r.err}`).toMatch(/frequency\.load\.resistance/);
    // A source resistance or coupling capacitors have no place: the mirror is current-driven and DC-coupled.
    const src = await captureCli(main, [write("src.json", { ...files[0]!.d, frequency: { source: { resistance: "1 kohm" }, load: { resistance: "100 kohm" } } }), "--json"]).catch((e: Error) => ({ code: -1, out: "", err: e.message }));
    expect(`${src.err}`).toMatch(/frequency\.source.*ideal signal current/);
    const caps = await captureCli(main, [write("caps.json", { ...files[0]!.d, frequency: { load: { resistance: "100 kohm" }, capacitors: { output: "1 uF" } } }), "--json"]).catch((e: Error) => ({ code: -1, out: "", err: e.message }));
    expect(`${caps.err}`).toMatch(/no coupling or bypass capacitors/);
  }, 60_000);
});
