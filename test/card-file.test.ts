/**
 * Card files: a card or card set written atomically and read back validated;
 * an existing file is never replaced without `replace` (nor the target of a
 * link); errors name the file. Cards are invented for the test.
 */
import { mkdtempSync, readFileSync, rmSync, symlinkSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { readCardFile, writeCardFile } from "../lib/device/card-file.js";
import type { CardSet } from "../lib/device/card-set.js";
import type { DeviceCard } from "../lib/device/card.js";
import { InputError, PinchoffError } from "../lib/errors.js";
import type { Meters } from "../lib/quantity.js";

const dir = mkdtempSync(join(tmpdir(), "pinchoff-card-file-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const card = { name: "invented-n", polarity: "nmos", model: "ekv", kp: 150e-6, vt0: 0.6, gamma: 0.45, phi: 0.7, theta: 0.2 } as unknown as DeviceCard;

describe("card files", () => {
  it("round-trips a card and a card set", () => {
    const p = join(dir, "sub", "card.json");
    expect(writeCardFile(p, card)).toBe(p);
    expect(readCardFile(p)).toEqual(card);
    const set: CardSet = { kind: "card-set", name: "invented-set", polarity: "nmos", entries: [{ l: 1e-6 as Meters, card }, { l: 0.5e-6 as Meters, card: { ...card, vt0: 0.55 as never } }] };
    const q = join(dir, "set.json");
    writeCardFile(q, set);
    const back = readCardFile(q) as CardSet;
    expect(back.kind).toBe("card-set");
    expect(back.entries.map((e) => e.l)).toEqual([0.5e-6, 1e-6]);
  });

  it("never replaces an existing file or a link's target without replace; new-name writes beside it", () => {
    const p = join(dir, "mine.json");
    writeFileSync(p, "my notes");
    expect(() => writeCardFile(p, card)).toThrow(PinchoffError);
    expect(readFileSync(p, "utf8")).toBe("my notes");
    const next = writeCardFile(p, card, { ifExists: "new-name" });
    expect(next).toBe(join(dir, "mine-2.json"));
    expect(readFileSync(p, "utf8")).toBe("my notes");
    expect(writeCardFile(p, card, { ifExists: "new-name" })).toBe(join(dir, "mine-3.json"));
    const target = join(dir, "target.txt");
    writeFileSync(target, "keep");
    const link = join(dir, "link.json");
    symlinkSync(target, link);
    expect(() => writeCardFile(link, card)).toThrow(PinchoffError);
    expect(writeCardFile(link, card, { ifExists: "new-name" })).toBe(join(dir, "link-2.json"));
    expect(readFileSync(target, "utf8")).toBe("keep");
    writeCardFile(p, card, { replace: true });
    expect(readCardFile(p)).toEqual(card);
  });

  it("refuses a bad card before writing and names the file when reading a bad one", () => {
    const p = join(dir, "bad.json");
    expect(() => writeCardFile(p, { ...card, kp: -1 } as never)).toThrow(/kp/);
    expect(() => readCardFile(p)).toThrow(/cannot read the card file \(ENOENT\)/);
    writeFileSync(p, "{ not json");
    expect(() => readCardFile(p)).toThrow(InputError);
    writeFileSync(p, JSON.stringify({ ...card, vt0: "high" }));
    expect(() => readCardFile(p)).toThrow(new RegExp(`${p.replace(/[.*+?^${}()|[\]\\/]/g, "\\$&")}.*vt0`));
  });
});
