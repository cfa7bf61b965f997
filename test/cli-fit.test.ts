/**
 * `pinchoff fit` on the open 180 nm measurements (data/pdk180: GF180MCU 3.3 V
 * NMOS, published measured I–V, Apache-2.0): card and report written, a card
 * set when no length is given (every length meeting the square-law target in
 * its automatic window), a window set by option, existing files never replaced without --force,
 * the data file never written, bad options refused.
 */
import { mkdtempSync, readFileSync, statSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { UsageError } from "../lib/cli/args.js";
import { main } from "../lib/cli/fit.js";
import { cardAt, checkCardSet, type CardSet } from "../lib/device/card-set.js";
import { checkCard, type DeviceCard } from "../lib/device/card.js";
import { InputError } from "../lib/errors.js";
import { meters } from "../lib/quantity.js";
import { captureCli } from "./support/cli.js";

const data = "data/pdk180/nfet_03v3_meas_id.csv";
const run = (argv: string[]) => captureCli(main, argv);

describe("pinchoff fit", { timeout: 60_000 }, () => {
  const dir = mkdtempSync(join(tmpdir(), "pinchoff-fit-"));
  it("fits one geometry, prints the parameters and writes a valid card and a report", async () => {
    const before = statSync(data).mtimeMs;
    const card = join(dir, "n1u.json");
    const report = join(dir, "n1u.html");
    const r = await run([data, "--w", "10u", "--l", "1u", "--card", card, "--report", report]);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.out) as { fits: { inWindow: { rms: number }; parameters: Record<string, { value: number }> }[] };
    expect(out.fits).toHaveLength(1);
    expect(out.fits[0]!.inWindow.rms).toBeLessThanOrEqual(0.05);
    const c = JSON.parse(readFileSync(card, "utf8")) as DeviceCard;
    expect(() => checkCard(c)).not.toThrow();
    expect(c.vt0).toBeCloseTo(out.fits[0]!.parameters.vt0!.value, 12);
    const html = readFileSync(report, "utf8");
    expect(html).toContain('content="pinchoff fit report"');
    expect(html).toContain("Where the model holds");
    expect(html).toContain("Verify the design by simulation");
    expect(html.match(/class="pinchoff-plot"/g)!.length).toBe(5);
    expect(statSync(data).mtimeMs).toBe(before);
  });
  it("fits every length at a width into a card set that interpolates in 1/L", async () => {
    const card = join(dir, "set.json");
    const report = join(dir, "set.html");
    const r = await run([data, "--w", "10u", "--overdrive", "0.3:0.7", "--body", "0:0", "--saturation-only", "--card", card, "--report", report]);
    expect([0, 1]).toContain(r.code);
    expect(readFileSync(report, "utf8")).toMatch(/<h2>Parameters against L<\/h2>.*<td>0\.28 µm<\/td>/s);
    const set = checkCardSet(JSON.parse(readFileSync(card, "utf8")) as CardSet);
    expect(set.entries.map((e) => +(e.l * 1e6).toPrecision(3))).toEqual([0.28, 0.5, 1, 5, 10]);
    const at1 = cardAt(set, meters(1e-6));
    expect(at1).toEqual(set.entries[2]!.card);
    const mid = cardAt(set, meters(2e-6));
    const [a, b] = [set.entries[2]!.card, set.entries[3]!.card];
    const t = (1 / 2e-6 - 1 / 1e-6) / (1 / 5e-6 - 1 / 1e-6);
    expect(mid.kp).toBeCloseTo(a.kp + t * (b.kp - a.kp), 15);
    expect(() => cardAt(set, meters(20e-6))).toThrow(/within the fitted range 0\.28–10 µm/);
  });
  it("with the automatic window every length meets the target (exit 0), and a window limited in |VDS| is named in the card", async () => {
    const card = join(dir, "auto-set.json");
    const r = await run([data, "--w", "10u", "--card", card]);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.out) as { fits: { device: { l: number }; meetsTarget: boolean; inWindow: { rms: number }; window: { vds?: [number, number] } }[] };
    expect(out.fits).toHaveLength(5);
    for (const f of out.fits) {
      expect(f.meetsTarget).toBe(true);
      expect(f.inWindow.rms).toBeLessThanOrEqual(0.05);
    }
    const short = out.fits.find((f) => Math.abs(f.device.l - 0.28e-6) < 1e-9)!;
    expect(short.window.vds).toBeDefined();
    const set = checkCardSet(JSON.parse(readFileSync(card, "utf8")) as CardSet);
    expect(set.entries[0]!.card.provenance).toContain(`|VDS| ≤ ${short.window.vds![1]} V`);
  });
  it("--drain sets the |VDS| range of the window (the low-VDS triode window: λ held, left out of the card)", async () => {
    const card = join(dir, "triode.json");
    const r = await run([data, "--w", "10u", "--l", "0.28u", "--overdrive", "0.2:1", "--drain", "0:0.1", "--body", "0:0", "--card", card]);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.out) as { fits: { window: { chosen: string; vds: [number, number] }; parameters: Record<string, { stdErr: number | string }> }[] };
    expect(out.fits[0]!.window.chosen).toBe("user");
    expect(out.fits[0]!.window.vds).toEqual([0, 0.1]);
    expect(out.fits[0]!.parameters.lambda!.stdErr).toBe("held");
    const c = JSON.parse(readFileSync(card, "utf8")) as DeviceCard;
    expect(c.lambda).toBeUndefined();
    expect(c.provenance).toMatch(/window overdrive 0\.2–1 V, \|VDS\| ≤ 0\.1 V, \|VBS\| = 0 V/);
  });
  it("never replaces an existing file without --force, and never writes over the data", async () => {
    const card = join(dir, "keep.json");
    writeFileSync(card, "mine");
    await expect(run([data, "--w", "10u", "--l", "1u", "--card", card])).rejects.toThrow(/exists and is left untouched/);
    expect(readFileSync(card, "utf8")).toBe("mine");
    expect((await run([data, "--w", "10u", "--l", "1u", "--card", card, "--force"])).code).toBe(0);
    expect(readFileSync(card, "utf8")).toMatch(/"vt0"/);
    await expect(run([data, "--w", "10u", "--l", "1u", "--card", data, "--force"])).rejects.toThrow(/other than the data file/);
  });
  it("refuses bad options with typed errors", async () => {
    await expect(run([data, "--model", "bsim9"])).rejects.toThrow(InputError);
    await expect(run([data, "--w", "ten"])).rejects.toThrow(/--w: got "ten"/);
    await expect(run([data, "--w", "10u", "--l", "1u", "--overdrive", "1:0.2"])).rejects.toThrow(/--overdrive.*LO ≤ HI/);
    await expect(run([data, "--w", "10u", "--l", "1u", "--device", "pmos"])).rejects.toThrow(/polarity the signs show \(nmos/);
    await expect(run([data, "--w", "3u"])).rejects.toThrow(/a width, temperature and corner the file holds/);
    await expect(run([])).rejects.toThrow(UsageError);
  });
});

describe("device() with a card set (invented cards)", () => {
  const card = (l: number, vt0: number): DeviceCard => ({ name: `n${l}`, polarity: "nmos", kp: 100e-6, vt0, lambda: 0.1 / l } as unknown as DeviceCard);
  const set: CardSet = { kind: "card-set", name: "invented", polarity: "nmos", entries: [{ l: meters(1e-6), card: card(1, 0.5) }, { l: meters(4e-6), card: card(4, 0.6) }] };
  it("takes the card at the device's length, interpolated in 1/L", async () => {
    const { device } = await import("../lib/device/card.js");
    const d = device(set, meters(10e-6), meters(2e-6));
    // 1/L halfway-ish: t = (1/2 − 1/1)/(1/4 − 1/1) = 2/3
    expect(d.card.vt0).toBeCloseTo(0.5 + (2 / 3) * 0.1, 12);
    expect(d.card.lambda).toBeCloseTo(0.1 + (2 / 3) * (0.025 - 0.1), 12);
    expect(() => device(set, meters(10e-6), meters(0.5e-6))).toThrow(/within the fitted range 1–4 µm/);
  });
});
