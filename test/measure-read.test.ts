/**
 * Reading measured sweeps: the long layout of the open 180 nm data
 * (data/pdk180, GF180MCU measured I–V, Apache-2.0), wide files with units and
 * fixed voltages in the header, column mapping, selection, and every kind of
 * bad input named by file, line and column. Small files here are invented.
 */
import { mkdtempSync, readFileSync, statSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { InputError, PinchoffError } from "../lib/errors.js";
import { packageRoot } from "../lib/io/package-root.js";
import { parseMeasurements, readMeasurements } from "../lib/measure/read.js";
import { geometries, select } from "../lib/measure/select.js";

const nfet = "data/pdk180/nfet_03v3_meas_id.csv";

describe("long layout (open 180 nm data, GF180MCU measured I–V in data/pdk180)", () => {
  const before = statSync(nfet).mtimeMs;
  const set = readMeasurements(nfet);
  it("reads every row in SI units, temperature in kelvin, and leaves the file alone", () => {
    expect(set.count).toBe(readFileSync(nfet, "utf8").trim().split("\n").length - 1);
    expect(set.w[0]).toBeCloseTo(10e-6, 12);
    expect(set.temp[0]).toBeCloseTo(298.15, 9);
    expect(set.id[0]).toBe(1.80955e-14);
    expect(set.line[0]).toBe(2);
    expect(statSync(nfet).mtimeMs).toBe(before);
  });
  it("lists 25 geometries at three temperatures", () => {
    const g = geometries(set);
    expect(new Set(g.map((x) => `${x.w}|${x.l}`)).size).toBe(25);
    expect(new Set(g.map((x) => x.temp)).size).toBe(3);
  });
  it("selects one device by W, L, temperature and VBS", () => {
    const s = select(set, { w: 10e-6, l: 1e-6, temp: 298.15, vbs: [0] });
    expect(s.polarity).toBe("nmos");
    expect(s.id.length).toBeGreaterThan(400);
    expect(Array.from(s.vbs).every((v) => v === 0)).toBe(true);
  });
  it("refuses a selection that leaves two geometries, naming them", () => {
    expect(() => select(set, { l: 1e-6, temp: 298.15 })).toThrow(/one W; the selection holds/);
  });
  it("refuses a selection that matches nothing, listing what the file has", () => {
    expect(() => select(set, { w: 3e-6, l: 1e-6 })).toThrow(/the file has W=10 µm L=10 µm/);
  });
  it("reads the PMOS file's current magnitudes when told, and refuses them as SPICE-signed currents", () => {
    const p = readMeasurements("data/pdk180/pfet_03v3_meas_id.csv");
    expect(() => select(p, { w: 10e-6, l: 1e-6, temp: 298.15 })).toThrow(/currentSign "magnitude"/);
    const s = select(p, { w: 10e-6, l: 1e-6, temp: 298.15, currentSign: "magnitude" });
    expect(s.polarity).toBe("pmos");
    expect(Math.min(...s.id)).toBeLessThan(-1e-4);
  });
});

describe("wide layout and options (invented bench data)", () => {
  const wide = ["vgs (V),id (mA) @ vds=0.1,id (mA) @ vds=1000 mV", "1.0,0.01,0.02", "1.5,0.05,0.30", "2.0,0.09,0.90"].join("\n");
  it("spreads one column per sweep into points with the header's fixed voltage and unit", () => {
    const m = parseMeasurements(wide, "bench.csv", { fixed: { w: 10e-6, l: 1e-6 } });
    expect(m.count).toBe(6);
    expect(Array.from(m.vds)).toEqual([0.1, 1, 0.1, 1, 0.1, 1]);
    expect(m.id[5]).toBeCloseTo(0.9e-3, 15);
    expect(m.temp[0]).toBeCloseTo(298.15, 9);
    expect(Array.from(m.line)).toEqual([2, 2, 3, 3, 4, 4]);
  });
  it("maps other column names and takes units as options", () => {
    const m = parseMeasurements("Gate,Drain,Current\n2,3,1.5\n", "tracer.csv", { columns: { vgs: "Gate", vds: "Drain", id: "Current" }, units: { id: "uA" }, fixed: { w: 1e-6, l: 1e-6, temp: 300 } });
    expect(m.id[0]).toBeCloseTo(1.5e-6, 18);
    expect(m.temp[0]).toBe(300);
  });
  it("converts temperature columns in °C and K", () => {
    expect(parseMeasurements("vgs,vds,id,temp (K)\n1,1,1e-3,300\n", "t.csv", { fixed: { w: 1e-6, l: 1e-6 } }).temp[0]).toBe(300);
    expect(parseMeasurements("vgs,vds,id,temp (degC)\n1,1,1e-3,27\n", "t.csv", { fixed: { w: 1e-6, l: 1e-6 } }).temp[0]).toBeCloseTo(300.15, 9);
  });
});

describe("bad input (typed errors naming file, line, column)", () => {
  const fixed = { w: 1e-6, l: 1e-6 };
  const err = (f: () => unknown) => {
    try {
      f();
    } catch (e) {
      return e as PinchoffError;
    }
    throw new Error("no error");
  };
  it("a missing current column", () => {
    const e = err(() => parseMeasurements("vgs,vds\n1,1\n", "a.csv", { fixed }));
    expect(e).toBeInstanceOf(InputError);
    expect(e.message).toMatch(/a\.csv: line 1/);
    expect(e.message).toMatch(/drain-current column/);
    expect(e.message).not.toMatch(/list of the sweeps/);
  });
  it("the open 180 nm kit's list of sweeps read in place of its measurements, with the file to read instead", () => {
    const text = readFileSync(join(packageRoot(), "data/pdk180/nfet_03v3_sweeps_id.csv"), "utf8");
    expect(() => parseMeasurements(text, "nfet_03v3_sweeps_id.csv")).toThrow(/nfet_03v3_sweeps_id\.csv: line 1: .*drain-current column.*list of the sweeps measured .*\*_meas_id\.csv/);
  });
  it("a missing voltage column", () => {
    expect(() => parseMeasurements("vgs,id\n1,1\n", "a.csv", { fixed })).toThrow(/a\.csv: line 1.*"vds" column/);
  });
  it("a missing geometry, with the option that gives it", () => {
    expect(() => parseMeasurements("vgs,vds,id\n1,1,1\n", "a.csv")).toThrow(/"w" column; give it with fixed\.w/);
  });
  it("a non-numeric cell, by line and column", () => {
    const e = err(() => parseMeasurements("vgs,vds,id\n1,1,1e-3\n1.5,1,abc\n", "b.csv", { fixed }));
    expect(e).toBeInstanceOf(InputError);
    expect(e.message).toMatch(/b\.csv: line 3, column 3 "id": got "abc"/);
  });
  it("an empty cell", () => {
    expect(() => parseMeasurements("vgs,vds,id\n1,,1e-3\n", "b.csv", { fixed })).toThrow(/line 2, column 2 "vds"/);
  });
  it("an unknown unit in the header", () => {
    expect(() => parseMeasurements("vgs (V),vds (V),id (furlong)\n1,1,1\n", "c.csv", { fixed })).toThrow(/c\.csv: line 1, column 3 "id \(furlong\)".*a unit of A/);
  });
  it("a ragged row", () => {
    const e = err(() => parseMeasurements("vgs,vds,id\n1,1,1\n1,1\n", "d.csv", { fixed }));
    expect(e.code).toBe("unparseable");
    expect(e.message).toMatch(/d\.csv: line 3/);
  });
  it("an empty file", () => {
    expect(() => parseMeasurements("", "e.csv")).toThrow(/e\.csv.*header line/);
  });
  it("mixed polarities", () => {
    const m = parseMeasurements("vgs,vds,id\n1,1,1e-3\n-1,-1,-1e-3\n", "f.csv", { fixed });
    expect(() => select(m)).toThrow(/f\.csv.*one polarity.*positive at line 2, negative at line 3/);
  });
  it("a current of the wrong sign beyond noise, and noise of either sign accepted", () => {
    const bad = parseMeasurements("vgs,vds,id\n1,1,1e-3\n2,1,-5e-4\n", "g.csv", { fixed });
    expect(() => select(bad)).toThrow(/g\.csv: line 3, column "id".*≥ 0/);
    const noisy = parseMeasurements("vgs,vds,id\n0,1,-2e-12\n2,1,1e-3\n", "g.csv", { fixed });
    expect(select(noisy).id[0]).toBe(-2e-12);
  });
  it("a file that cannot be read", () => {
    const dir = mkdtempSync(join(tmpdir(), "pinchoff-measure-"));
    const e = err(() => readMeasurements(join(dir, "missing.csv")));
    expect(e.code).toBe("io");
    expect(e.message).toMatch(/missing\.csv.*ENOENT/);
    writeFileSync(join(dir, "x.csv"), "vgs,vds,id\n1,1,1\n");
    expect(readMeasurements(join(dir, "x.csv"), { fixed }).count).toBe(1);
  });
});
