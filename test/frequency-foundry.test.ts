/**
 * Foundry capacitances in the frequency analysis: a common-source stage sized by
 * gm/ID from a characterisation table takes Cgs, Cgd and Cgg per W from the
 * table (`tableCapacitances`), and its hand dominant pole is compared with
 * ngspice 39 BSIM4 with the GF180MCU typical library (`data/pdk180/sm141064.ngspice`,
 * section typical) `.ac` on the same stage, the Level 1 card replaced by the
 * kit's 3.3 V NMOS. A large signal-source resistance makes the gate node's pole
 * dominant, so the comparison rests on the table's gate capacitances (the
 * junctions are not in the table; the output pole lies two decades above).
 * One characterisation for the file, on the grid the gf180 template uses
 * (cached in .pinchoff-cache/).
 */
import { resolve } from "node:path";
import { beforeAll, describe, expect, it } from "vitest";
import { analyzeStage, stageCircuit } from "../lib/bias/analyze.js";
import { parseDesignFile } from "../lib/bias/design-file.js";
import { analyzeFrequency } from "../lib/bias/frequency.js";
import { acCircuit } from "../lib/bias/frequency-spice.js";
import { processCircuit } from "../lib/bias/simulation-check.js";
import type { Stage } from "../lib/bias/topology.js";
import { InputError } from "../lib/errors.js";
import { characterize, evenGrid, type DeviceTable } from "../lib/process/characterize.js";
import { builtinProcessFile, readProcess } from "../lib/process/description.js";
import { amperesPerVoltSquared, meters, ohms, perVolt, volts } from "../lib/quantity.js";
import { Derivation } from "../lib/record/derivation.js";
import { sizeByEfficiency, squareLawCard, tableCapacitances } from "../lib/sizing/gm-id.js";
import { libLine, includeLine } from "../lib/spice/deck.js";
import { spiceNumber } from "../lib/bias/spice.js";
import { cornersAround, runAc } from "./support/ac.js";
import { expectReevaluates } from "./support/reevaluate.js";

const proc = readProcess(builtinProcessFile());
let table: DeviceTable;
beforeAll(async () => {
  table = await characterize(proc, { polarity: "nmos", grid: { l: [0.8e-6, 1e-6, 1.25e-6], vgs: evenGrid(0, 3.3, 67), vds: evenGrid(0, 3.3, 23), vsb: [0] }, cache: resolve(".pinchoff-cache") });
}, 600_000);

// Overlap parameters of the kit's nmos_3p3 model card (capMod 2), as ngspice 39's `showmod` lists them for the
// GF180MCU library (sm141064.ngspice, typical): CGSO = CGDO = CGSL = CGDL = 1e-10 F/m, CKAPPAS = CKAPPAD = 0.6 V.
const overlap = { cgso: 1e-10 as never, cgdo: 1e-10 as never, cgsl: 1e-10 as never, cgdl: 1e-10 as never, ckappas: volts(0.6), ckappad: volts(0.6), source: "GF180MCU sm141064.ngspice nmos_3p3 model card (showmod)" };
const vdd = 3.3;
const vout = 1.65;

function sizedStage(id: number, gmId: number, l: number) {
  const sized = sizeByEfficiency(table, { id, gmId, l, vds: vout }, proc);
  const fit = squareLawCard(table, l, vout, 0);
  const stage: Stage = {
    topology: "fixed-gate",
    name: `gm/ID ${gmId} at ${id} A (invented scenario)`,
    device: {
      card: { name: "nfet_03v3 square-law fit", polarity: "nmos", kp: amperesPerVoltSquared(fit.kp), vt0: volts(fit.vt), lambda: perVolt(sized.gds / sized.id), tableCapacitances: tableCapacitances(sized, overlap), provenance: "fitted to the characterisation table" },
      w: meters(sized.w),
      l: meters(l),
    },
    components: { vg: volts(sized.vgs), rd: ohms((vdd - vout) / id) },
    supplies: { vdd: volts(vdd) },
  };
  return { sized, stage };
}

describe("foundry capacitances from the characterisation table", () => {
  it("Cgs, Cgd and Cgb = Cgg − Cgs − Cgd scale with W, recorded with the table's fingerprint", () => {
    const { sized, stage } = sizedStage(40e-6, 8, 1e-6);
    const rec = new Derivation("table capacitances");
    const fa = analyzeFrequency(stage, analyzeStage(stage as never), { source: { resistance: ohms(1e6) } }, rec);
    expect(fa.capacitances.from).toBe("characterisation-table");
    // Hand calculation of the overlaps at |VGS| = sized.vgs, |VDS| = 1.65 V: the source side accumulated,
    // CGSO + CGSL = 2e-10 F/m; the drain side depleted, CGDO + CGDL·(1 − 1/√(1 − 4·VGD/0.6)).
    const vgd = sized.vgs - vout;
    const covD = 1e-10 + 1e-10 * (1 - 1 / Math.sqrt(1 - (4 * vgd) / 0.6));
    expect(Math.abs(fa.capacitances.cgs / (sized.cgs + 2e-10 * sized.w) - 1)).toBeLessThan(1e-12);
    expect(Math.abs(fa.capacitances.cgd / (sized.cgd + covD * sized.w) - 1)).toBeLessThan(1e-12);
    // Cgb is the rest of the table's Cgg.
    expect(Math.abs(fa.capacitances.cgb / (sized.cgg - sized.cgs - sized.cgd) - 1)).toBeLessThan(1e-9);
    // The card's block carries the sizing's per-width figures as read from the table; the totals are those times W.
    const block = stage.device.card.tableCapacitances!;
    expect([block.cgsPerWidth, block.cgdPerWidth, block.cggPerWidth]).toEqual([sized.cgsPerWidth, sized.cgdPerWidth, sized.cggPerWidth]);
    expect([sized.cgs, sized.cgd]).toEqual([sized.cgsPerWidth * sized.w, sized.cgdPerWidth * sized.w]);
    expect(Math.abs(sized.cgg / (sized.cggPerWidth * sized.w) - 1)).toBeLessThan(1e-15);
    const data = rec.toJSON();
    expect(JSON.stringify(data)).toContain(table.fingerprint.slice(0, 12));
    expect(data.assumptions.some((a) => /junction/.test(a))).toBe(true);
    expectReevaluates(rec);
    // A block whose Cgg is below Cgs + Cgd is refused, naming the field.
    const bad = { ...stage.device.card, tableCapacitances: { ...stage.device.card.tableCapacitances!, cggPerWidth: 1e-12 as never } };
    expect(() => analyzeFrequency({ ...stage, device: { ...stage.device, card: bad } }, analyzeStage(stage as never), {})).toThrow(InputError);
  });

  it("a design file carries the block: pinchoff op's parser gives the same capacitances, and a block without its fingerprint is refused", () => {
    const { stage } = sizedStage(40e-6, 8, 1e-6);
    const file = JSON.parse(JSON.stringify({ topology: stage.topology, name: stage.name, device: stage.device, components: stage.components, supplies: stage.supplies }));
    const parsed = parseDesignFile(file, "gmid.json");
    if (parsed.kind !== "analysis") throw new Error("expected an analysis design");
    const fromFile = analyzeFrequency(parsed.stage, analyzeStage(parsed.stage as never), { source: { resistance: ohms(1e6) } });
    const fromLibrary = analyzeFrequency(stage, analyzeStage(stage as never), { source: { resistance: ohms(1e6) } });
    expect(fromFile.capacitances).toEqual(fromLibrary.capacitances);
    expect(fromFile.high.dominantPole).toBe(fromLibrary.high.dominantPole);
    const { table: _t, ...noFingerprint } = file.device.card.tableCapacitances;
    expect(() => parseDesignFile({ ...file, device: { ...file.device, card: { ...file.device.card, tableCapacitances: noFingerprint } } }, "gmid.json")).toThrow(/gmid\.json: device\.card\.tableCapacitances\.table/);
    const { source: _s, ...noSource } = file.device.card.tableCapacitances.overlap;
    expect(() => parseDesignFile({ ...file, device: { ...file.device, card: { ...file.device.card, tableCapacitances: { ...file.device.card.tableCapacitances, overlap: noSource } } } }, "gmid.json")).toThrow(/tableCapacitances\.overlap\.source/);
    expect(() => parseDesignFile({ ...file, device: { ...file.device, card: { ...file.device.card, tableCapacitances: { ...file.device.card.tableCapacitances, cgsPerWidth: "3 pF" } } } }, "gmid.json")).toThrow(/tableCapacitances\.cgsPerWidth/);
  });

  it("the dominant pole agrees with ngspice 39 BSIM4 (GF180MCU sm141064.ngspice typical) .ac within 10 %", () => {
    const rows: string[] = [];
    for (const [id, gmId] of [
      [20e-6, 8],
      [40e-6, 8],
      [40e-6, 12],
      [100e-6, 10],
    ] as const) {
      const { sized, stage } = sizedStage(id, gmId, 1e-6);
      const dc = analyzeStage(stage as never);
      const fa = analyzeFrequency(stage, dc, { source: { resistance: ohms(1e6) } });
      expect(fa.high.dominantPoleHolds).toBe(true);
      const ac = acCircuit(stage, dc, fa);
      // The kit's device carries its own capacitances: drop the explicit ones the Level 1 deck adds for the table's.
      const own = ac.lines.filter((l) => !/^C(GS|GD|GB|DS) /.test(l));
      const { lines } = processCircuit(stage, proc, { ...stageCircuit(stage), lines: own }, false);
      const deck = [libLine(proc.library.file, proc.library.section), ...proc.includes.map((f) => includeLine(f)), `.temp ${spiceNumber(proc.temperature)}`, ...lines].join("\n");
      const res = runAc(deck, [ac.output], { pointsPerDecade: 60, start: 1e3, stop: 1e11 });
      const ng = cornersAround(res.freq, res.mag[0]!, fa.high.dominantPole! / 100);
      const e = fa.high.dominantPole! / ng.high! - 1;
      if (process.env.FOUNDRY_DEBUG) console.log(deck, JSON.stringify(fa.capacitances), JSON.stringify(fa.nodes), JSON.stringify(dc.smallSignal), sized.gm, sized.gds);
      rows.push(`ID ${id} gm/ID ${gmId}: W ${sized.w.toExponential(3)} hand ${fa.high.dominantPole!.toExponential(4)} Hz, BSIM4 ${ng.high!.toExponential(4)} Hz (${(100 * e).toFixed(2)} %), gain hand ${fa.midbandGain.toFixed(2)} sim ${ng.mid.toFixed(2)}`);
    }
    console.log(`foundry capacitances against BSIM4:\n${rows.join("\n")}`);
    for (const r of rows) expect(Math.abs(Number(/\(([-\d.]+) %\)/.exec(r)![1]))).toBeLessThan(10);
  }, 120_000);
});
