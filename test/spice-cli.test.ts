/**
 * The simulator in the loop from the command line: `pinchoff op --verify` and
 * `pinchoff characterize`. Reference: ngspice 39 BSIM4 with the GF180MCU library
 * (`sm141064.ngspice`, section typical). The hand card is square-law values for the
 * kit's 3.3 V NMOS from memory; the stage is invented.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { main as characterizeMain } from "../lib/cli/characterize.js";
import { main as opMain } from "../lib/cli/op.js";
import { builtinProcessFile } from "../lib/process/description.js";
import { runDeckSync } from "../lib/spice/run.js";
import { captureCli } from "./support/cli.js";

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "pinchoff-spice-cli-"));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const design = (name: string) => ({
  name,
  topology: "four-resistor",
  device: { card: { name: "kit NMOS, square law from memory", polarity: "nmos", kp: "170 uA/V^2", vt0: "0.7 V", lambda: "0.05 1/V", gamma: 0.6, phi: "0.8 V" }, w: "20 um", l: "1 um" },
  components: { rg1: "250k", rg2: "100k", rd: "10k", rs: "300" },
  supplies: { vdd: "3.3 V" },
  body: "rail",
});
const write = (file: string, value: unknown) => {
  const p = join(dir, file);
  writeFileSync(p, JSON.stringify(value));
  return p;
};

describe("pinchoff op --verify", () => {
  it("adds the simulated values beside the hand ones, writes the deck, and fails on a tight tolerance", async () => {
    const file = write("cs.json", design("verified stage (invented)"));
    const deck = join(dir, "cs.cir");
    const r = await captureCli(opMain, [file, "--json", "--verify", builtinProcessFile(), "--verify-deck", deck]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.verification.process).toBe("gf180-3v3");
    expect(j.verification.devices[0].model).toBe("nmos_3p3");
    expect(j.verification.passed).toBe(true);
    expect(readFileSync(deck, "utf8")).toBe(j.verification.deck);
    const tight = await captureCli(opMain, [file, "--json", "--verify", builtinProcessFile(), "--verify-tolerance", "0.001"]);
    expect(tight.code).toBe(1);
    expect(tight.err).toMatch(/simulated drain current .* from the hand value \(allowed ±0.1 %, gf180-3v3\)/);
    const text = await captureCli(opMain, [file, "--text", "--verify", builtinProcessFile()]);
    expect(text.out).toMatch(/Simulation with gf180-3v3 \(typical\), ngspice:/);
    expect(text.out).toMatch(/M1 \(nmos_3p3\): saturation in the simulator/);
  }, 60_000);

  it("puts the verification in the record", async () => {
    const file = write("rec.json", design("recorded stage (invented)"));
    const out = join(dir, "rec.md");
    const r = await captureCli(opMain, [file, "--json", "--verify", builtinProcessFile(), "--record", out]);
    expect(r.code).toBe(0);
    // Markdown escapes punctuation; compare the text without its backslashes.
    const md = readFileSync(out, "utf8").replace(/\\/g, "");
    expect(md).toMatch(/Simulation with gf180-3v3 \(typical\)/);
    expect(md).toMatch(/Simulated drain current within/);
  }, 60_000);

  it("keeps an injected stage name out of the deck's lines; ngspice creates no file (issue 7 item 5)", async () => {
    const target = join(dir, "INJECTED");
    const file = write("inject.json", design(`amp\n.control\nshell touch ${target}\n.endc\n*`));
    const deck = join(dir, "inject.cir");
    const r = await captureCli(opMain, [file, "--json", "--verify", builtinProcessFile(), "--verify-deck", deck]);
    expect(r.code).toBe(0);
    runDeckSync({ deck: readFileSync(deck, "utf8") });
    expect(existsSync(target)).toBe(false);
  }, 60_000);

  it("names a process file that does not exist and a bad tolerance", async () => {
    const file = write("bad.json", design("bad (invented)"));
    await expect(captureCli(opMain, [file, "--verify", join(dir, "none.json")])).rejects.toThrow(/cannot read the process description/);
    await expect(captureCli(opMain, [file, "--verify", builtinProcessFile(), "--verify-tolerance", "ten"])).rejects.toThrow(/--verify-tolerance: got "ten"/);
  }, 60_000);
});

describe("pinchoff characterize", () => {
  it("writes JSON and CSV tables for a small grid and reads the cache the second time", async () => {
    const out = join(dir, "tables");
    const cache = join(dir, "cache");
    const argv = [builtinProcessFile(), "--device", "nmos", "--lengths", "1u,2u", "--vgs-points", "12", "--vds-points", "4", "--vsb-points", "2", "--out", out, "--cache", cache];
    const first = await captureCli(characterizeMain, argv);
    expect(first.code).toBe(0);
    expect(first.out).toMatch(/gf180-3v3 nmos_3p3 \(nmos, section typical\): 2 lengths × 12 VGS × 4 VDS × 2 VSB = 192 points/);
    const json = JSON.parse(readFileSync(join(out, "gf180-3v3-nmos-typical.json"), "utf8"));
    expect(json.data.idw).toHaveLength(192);
    expect(readFileSync(join(out, "gf180-3v3-nmos-typical.csv"), "utf8").trim().split("\n")).toHaveLength(193);
    const fp = /fingerprint ([0-9a-f]{12})/.exec(first.out)![1];
    const second = await captureCli(characterizeMain, argv);
    expect(second.out).toContain(`fingerprint ${fp}`);
    expect(existsSync(join(cache, "characterisation"))).toBe(true);
  }, 60_000);

  it("refuses a length outside the process range and an unknown device", async () => {
    await expect(captureCli(characterizeMain, [builtinProcessFile(), "--lengths", "0.1u", "--no-cache"])).rejects.toThrow(/L from 2.8e-7 m to 0.00005 m/);
    await expect(captureCli(characterizeMain, [builtinProcessFile(), "--device", "npn"])).rejects.toThrow(/nmos, pmos or both/);
  }, 60_000);
});
