/**
 * SPICE export: the deck's cards follow SPICE deck syntax (Level 1 model card,
 * MOSFET instance d g s b model W= L=, sources, .op, .end), and a whole
 * exported deck runs as-is in ngspice (Debian ngspice, batch mode) and gives
 * the drain voltage this library computes. Device values are invented.
 */
import { execFileSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { analyzeStage, spiceDeck, stageCircuit } from "../lib/bias/analyze.js";
import type { Stage } from "../lib/bias/topology.js";
import type { DeviceCard } from "../lib/device/card.js";

const card = (polarity: "nmos" | "pmos"): DeviceCard =>
  ({ name: `demo-${polarity}`, polarity, kp: 120e-6, vt0: polarity === "nmos" ? 0.55 : -0.55, lambda: 0.03, gamma: 0.5, phi: 0.75 }) as DeviceCard;
const stage = (topology: string, polarity: "nmos" | "pmos", components: Record<string, number>, body: "source" | "rail" = "rail"): Stage => ({
  topology,
  name: `${topology} demo`,
  device: { card: card(polarity), w: 24e-6 as Stage["device"]["w"], l: 1.5e-6 as Stage["device"]["l"] },
  components,
  supplies: { vdd: 5, vss: -2 } as Stage["supplies"],
  body,
});
const cases: Stage[] = [
  stage("fixed-gate", "nmos", { vg: 1.2, rd: 5e3, rs: 500 }),
  stage("four-resistor", "pmos", { rg1: 100e3, rg2: 220e3, rd: 3.3e3, rs: 680 }),
  stage("drain-feedback", "nmos", { rf: 1e6, rd: 10e3 }, "source"),
  stage("source-follower", "pmos", { rg1: 470e3, rg2: 470e3, rs: 4.7e3, rd: 1e3 }),
  stage("current-source-bias", "nmos", { vg: 0, iss: 200e-6, rd: 8.2e3 }),
];

describe("SPICE deck export", () => {
  it("writes a Level 1 model card with every card parameter and the instance with W and L", () => {
    const deck = spiceDeck(cases[1]!);
    expect(deck).toMatch(/^\.model mod pmos level=1 vto=-0\.55 kp=0\.00012 lambda=0\.03 gamma=0\.5 phi=0\.75$/m);
    expect(deck).toMatch(/^M1 d g s vdd mod W=0\.000024 L=0\.0000015$/m);
    expect(deck).toMatch(/^RG1 g vdd 100000$/m);
    expect(deck).toMatch(/^RS s vdd 680$/m); // PMOS: the source resistor returns to the upper rail
    expect(deck).toMatch(/^\.op$/m);
    expect(deck.trimEnd().endsWith(".end")).toBe(true);
  });
  it("uses an ideal current source of the right direction and a 0 V ammeter in the drain lead", () => {
    const c = stageCircuit(cases[4]!, "t_");
    expect(c.lines).toContain("It_SS t_s t_vss 0.0002");
    expect(c.lines).toContain("Vt_ID t_x t_d 0");
    expect(c.drainAmmeter).toBe("Vt_ID");
  });
  it("prefixes every node and element so several stages can share one deck", () => {
    const c = stageCircuit(cases[0]!, "q7_");
    for (const line of c.lines.filter((l) => !l.startsWith(".model"))) {
      const [name, ...nodes] = line.split(" ");
      expect(name).toMatch(/^[A-Z]q7_/);
      for (const n of nodes.slice(0, 2)) expect(n === "0" || n.startsWith("q7_")).toBe(true);
    }
  });
  for (const st of cases)
    it(`a complete ${st.topology} ${st.device.card.polarity} deck runs unchanged in ngspice and agrees on VD (ngspice Level 1)`, () => {
      const dir = mkdtempSync(join(tmpdir(), "pinchoff-deck-"));
      try {
        const file = join(dir, "stage.cir");
        writeFileSync(file, spiceDeck(st));
        let out: string;
        try {
          out = execFileSync("ngspice", ["-b", file], { encoding: "utf8", stdio: ["ignore", "pipe", "pipe"] });
        } catch (e) {
          out = String((e as { stdout?: string }).stdout ?? "");
        }
        // The batch .op listing prints "node  value" rows.
        const m = /^\s*d\s+([-+0-9.eE]+)\s*$/m.exec(out);
        expect(m, out.slice(0, 2000)).not.toBeNull();
        const vd = Number(m![1]);
        const drain = analyzeStage(st).nodes.drain;
        expect(drain).toBeDefined();
        expect(Math.abs(vd - drain!)).toBeLessThanOrEqual(1e-5 * Math.max(1, Math.abs(vd)));
      } finally {
        rmSync(dir, { recursive: true, force: true });
      }
    });
});
