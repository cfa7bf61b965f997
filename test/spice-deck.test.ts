/**
 * The SPICE home: the deck writer refuses or sanitises every user string (the
 * injection of issue 7 item 5), the runner reports a missing ngspice, a missing
 * library file, section or device and a timeout as typed errors, and the raw
 * reader returns ngspice's values at full double precision. The oracle is
 * ngspice 39 (Debian package) in batch mode; device values are invented.
 */
import { existsSync, mkdtempSync, readdirSync, rmSync } from "node:fs";
import { availableParallelism, tmpdir } from "node:os";
import { join, resolve } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { spiceDeck, stageCircuit } from "../lib/bias/analyze.js";
import type { Stage } from "../lib/bias/topology.js";
import type { DeviceCard } from "../lib/device/card.js";
import { ConvergenceError, InputError } from "../lib/errors.js";
import { element, libLine, modelCard, spiceIdentifier, spiceText, writeDeck } from "../lib/spice/deck.js";
import { diagnose, findNgspice, runDeck, runDeckSync, SimulatorError } from "../lib/spice/run.js";
import { column, parseRaw } from "../lib/spice/raw.js";

const work = mkdtempSync(join(tmpdir(), "pinchoff-inject-"));
afterAll(() => rmSync(work, { recursive: true, force: true }));
const target = join(work, "INJECTED");
const payload = `amp\n.control\nshell touch ${target}\n.endc\n*`;

const card = (name: string, polarity: "nmos" | "pmos" = "nmos"): DeviceCard =>
  ({ name, polarity, kp: 120e-6, vt0: polarity === "nmos" ? 0.55 : -0.55, lambda: 0.03, gamma: 0.5, phi: 0.75 }) as DeviceCard;
const w = 24e-6 as Stage["device"]["w"];
const l = 1.5e-6 as Stage["device"]["l"];

/** Run a deck through ngspice as a user would (the whole text, unchanged) and say whether the payload's file appeared. */
function runsClean(deck: string): boolean {
  runDeckSync({ deck, origin: "injection test" });
  return !existsSync(target);
}

describe("deck injection (issue 7 item 5)", () => {
  const stages: Stage[] = [
    { topology: "four-resistor", name: payload, device: { card: card(payload), w, l }, components: { rg1: 100e3, rg2: 220e3, rd: 3.3e3, rs: 680 }, supplies: { vdd: 5 } as Stage["supplies"], body: "source" },
    {
      topology: "current-mirror",
      name: payload,
      device: { card: card(payload), w, l },
      devices: { reference: { card: card(`x\r\n.include /etc/passwd`), w, l } },
      components: { rref: 20e3, vout: 2 },
      supplies: { vdd: 5 } as Stage["supplies"],
      body: "rail",
    } as unknown as Stage,
  ];

  it("keeps a name with line breaks on its one comment line, and ngspice creates no file (ngspice 39 batch run)", () => {
    // Before the fix the title line carried the newline and ngspice ran `shell touch`.
    for (const s of stages) {
      const deck = spiceDeck(s);
      expect(deck).not.toMatch(/^\.control/m);
      expect(deck).not.toMatch(/^shell/m);
      expect(deck).not.toMatch(/^\.include/m);
      expect(deck.split("\n")[0]).toContain("amp .control shell touch");
      expect(runsClean(deck)).toBe(true);
    }
  });

  it("refuses a name prefix, node, model or element name that is not an identifier", () => {
    expect(() => stageCircuit(stages[0]!, "a\nb")).toThrow(InputError);
    expect(() => stageCircuit(stages[0]!, "x y")).toThrow(/name prefix/);
    expect(() => element("R1", ["a", "b\n.control"], 1)).toThrow(InputError);
    expect(() => element("R1\n.endc", ["a", "b"], 1)).toThrow(InputError);
    expect(() => modelCard("m od", "nmos", { level: 1 })).toThrow(InputError);
    expect(() => modelCard("mod", "nmos", { "vto\n.control": 1 })).toThrow(InputError);
    expect(() => spiceIdentifier('nmos"x', "device")).toThrow(/SPICE name/);
    expect(() => libLine('/tmp/a"\n.control', "typical")).toThrow(InputError);
    expect(() => libLine("/tmp/a", "typical\nshell touch x")).toThrow(InputError);
  });

  it("refuses a number that is not finite", () => {
    expect(() => element("R1", ["a", "b"], Number.NaN)).toThrow(/finite/);
    expect(() => element("M1", ["d", "g", "s", "b"], "mod", { W: Infinity })).toThrow(InputError);
  });

  it("removes every control character from titles and comments", () => {
    expect(spiceText("a\u0000b\u001bc\u2028d\re\tf\u0085g")).toBe("a b c d e f g");
    const deck = writeDeck({ title: payload, comments: ["one\ntwo"], lines: ["R1 a 0 1", "V1 a 0 1"], analyses: [".op"] });
    expect(deck.split("\n").filter((x) => x.startsWith("*"))).toEqual([`* amp .control shell touch ${target} .endc *`, "* one two"]);
    expect(runsClean(deck)).toBe(true);
  });

  it("refuses a circuit line that opens a block or a control line that runs a shell", () => {
    expect(() => writeDeck({ title: "t", lines: [".control"] })).toThrow(InputError);
    expect(() => writeDeck({ title: "t", lines: [".endl"] })).toThrow(InputError);
    expect(() => writeDeck({ title: "t", lines: ["R1 a 0 1\nshell touch x"] })).toThrow(InputError);
    expect(() => writeDeck({ title: "t", lines: [], control: ["shell touch x"] })).toThrow(InputError);
    expect(() => writeDeck({ title: "t", lines: [], control: ["op", ".endc"] })).toThrow(InputError);
  });
});

describe("ngspice runner", () => {
  const pdk = resolve("data/pdk180");
  const nmosDeck = (lib: string, section: string, device: string, lum = 1) =>
    writeDeck({
      title: "runner check",
      lines: [libLine(lib, section), `.include "${pdk}/design.ngspice"`, element("VD", ["d", "0"], 1.5), element("VG", ["g", "0"], 1), element("M1", ["d", "g", "0", "0"], device, { W: 10e-6, L: lum * 1e-6 })],
      control: ["set filetype=binary", "save @m1[id] @m1[gm] v(d)", "op", "write op.raw", "quit 0"],
    });

  it("reads device outputs at full double precision from a binary raw file (ngspice 39 BSIM4, GF180MCU sm141064.ngspice typical)", async () => {
    const r = await runDeck({ deck: nmosDeck(`${pdk}/sm141064.ngspice`, "typical", "nmos_3p3"), outputs: ["op.raw"] });
    const plot = r.raw["op.raw"]![0]!;
    const id = column(plot, "i(@m1[id])")[0]!;
    // The same operating point printed by `show m1` with 6 digits: id 7.79086e-05.
    expect(id).toBeCloseTo(7.79086e-5, 10);
    expect(String(id).replace(/^0\.0*|e.*$|\./g, "").length).toBeGreaterThan(8);
    expect(column(plot, "v(d)")[0]).toBe(1.5);
  });

  it("runs ngspice with one OpenMP thread, and queues calls beyond one process per core without losing any", async () => {
    const echo = writeDeck({ title: "threads", lines: ["R1 a 0 1k"], control: ["echo threads=$num_threads", "quit 0"] });
    expect(runDeckSync({ deck: echo }).log).toMatch(/threads=1\b/);
    const n = 3 * availableParallelism() + 1;
    const runs = await Promise.all(
      Array.from({ length: n }, (_, k) =>
        runDeck({ deck: writeDeck({ title: `queue ${k}`, lines: [element("V1", ["a", "0"], k + 1), element("R1", ["a", "0"], 1000)], control: ["set filetype=binary", "op", "write op.raw", "quit 0"] }), outputs: ["op.raw"] }),
      ),
    );
    runs.forEach((r, k) => expect(column(r.raw["op.raw"]![0]!, "v(a)")[0]).toBe(k + 1));
  });

  it("names a missing library file, section and device", () => {
    expect(() => runDeckSync({ deck: nmosDeck(`${pdk}/nothere.ngspice`, "typical", "nmos_3p3") })).toThrow(/library file not found: .*nothere\.ngspice/);
    expect(() => runDeckSync({ deck: nmosDeck(`${pdk}/sm141064.ngspice`, "typo", "nmos_3p3") })).toThrow(/has no section "typo"/);
    expect(() => runDeckSync({ deck: nmosDeck(`${pdk}/sm141064.ngspice`, "typical", "nmos_9v9") })).toThrow(SimulatorError);
    expect(() => runDeckSync({ deck: nmosDeck(`${pdk}/sm141064.ngspice`, "typical", "nmos_9v9") })).toThrow(/no device model for m1/);
    // An L below every bin of the library is refused by ngspice in the same way.
    expect(() => runDeckSync({ deck: nmosDeck(`${pdk}/sm141064.ngspice`, "typical", "nmos_3p3", 0.05) })).toThrow(/outside every bin/);
  });

  it("reports a missing ngspice", () => {
    expect(() => findNgspice({ PATH: "/nonexistent" })).toThrow(/ngspice not found on PATH/);
    expect(() => findNgspice({ PINCHOFF_NGSPICE: "/nonexistent/ngspice" })).toThrow(SimulatorError);
    expect(findNgspice()).toMatch(/ngspice$/);
  });

  it("stops a run that exceeds its time limit and leaves no temporary folder", async () => {
    // A private temporary root: other processes' runs in the shared /tmp cannot disturb the count.
    const saved = process.env.TMPDIR;
    const root = mkdtempSync(join(tmpdir(), "pinchoff-timeout-test-"));
    process.env.TMPDIR = root;
    try {
      // A long transient with a tiny step: far beyond 300 ms.
      const deck = writeDeck({ title: "slow", lines: ["V1 a 0 SIN(0 1 1e6)", "R1 a 0 1k"], control: ["tran 1e-12 1e-3", "quit 0"] });
      await expect(runDeck({ deck, timeoutMs: 300 })).rejects.toThrow(/did not finish within 0.3 s/);
      expect(() => runDeckSync({ deck, timeoutMs: 300 })).toThrow(/did not finish/);
      expect(readdirSync(root)).toEqual([]);
    } finally {
      if (saved === undefined) delete process.env.TMPDIR;
      else process.env.TMPDIR = saved;
      rmSync(root, { recursive: true, force: true });
    }
  });

  it("turns a failed operating point into a ConvergenceError with the log", () => {
    const log = "Warning: singular matrix:  check node x\nNote: gmin stepping failed\nWarning: source stepping failed\ndoAnalyses: iteration limit reached\nop simulation(s) aborted\n";
    expect(() => diagnose(log, "deck")).toThrow(ConvergenceError);
    expect(() => diagnose(log, "deck")).toThrow(/iteration limit reached/);
    expect(() => diagnose("Warning: source stepping failed\nNote: Transient op finished successfully\n", "deck")).not.toThrow();
  });

  it("reads ascii raw files and refuses a truncated binary one", () => {
    const ascii = "Title: t\nPlotname: Operating Point\nFlags: real\nNo. Variables: 2\nNo. Points: 1\nVariables:\n\t0\tv(a)\tvoltage\n\t1\ti(v1)\tcurrent\nValues:\n 0\t1.000000000000000e+00\n\t-1.234567890123457e-03\n";
    const [p] = parseRaw(Buffer.from(ascii));
    expect(column(p!, "i(v1)")[0]).toBe(-1.234567890123457e-3);
    const bin = Buffer.concat([Buffer.from("Title: t\nPlotname: x\nFlags: real\nNo. Variables: 1\nNo. Points: 2\nVariables:\n\t0\tv(a)\tvoltage\nBinary:\n"), Buffer.alloc(8)]);
    expect(() => parseRaw(bin, "x.raw")).toThrow(/cut short/);
  });
});
