/**
 * Smoke test through the real kernel: a notebook imports the built library by
 * package name, computes a drain current, shows it and its derivation; a cell
 * that passes a current where a voltage is expected must fail to compile.
 */
import { beforeAll, describe, expect, it } from "vitest";
import { device, type DeviceCard } from "../lib/device/card.js";
import { operatingPoint } from "../lib/device/drain-current.js";
import { Derivation } from "../lib/record/derivation.js";
import { amperesPerVoltSquared, volts, meters, perVolt } from "../lib/quantity.js";
import { formatQuantity } from "../lib/units/format.js";
import { fingerprint } from "../lib/record/fingerprint.js";
import type { DerivationData } from "../lib/record/derivation.js";
import { executeCells, joined, prepareKernel, type ExecutedCell } from "./support/jupyter.js";
import { expectReevaluates } from "./support/reevaluate.js";

const derivationMime = "application/vnd.pinchoff.derivation+json";

// Invented card and bias, for the smoke test only.
const cardSource = `{ name: "smoke-n", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.5), lambda: perVolt(0.05), provenance: "invented for the smoke test" }`;
const cells = [
  [
    `import { device, operatingPoint, Derivation, amperesPerVoltSquared, volts, meters, perVolt, type DeviceCard } from "pinchoff";`,
    `import { show, showQuantity } from "pinchoff/notebook";`,
    `import { fingerprint } from "pinchoff/render";`,
    `const card: DeviceCard = ${cardSource};`,
    `const m1 = device(card, meters(10e-6), meters(1e-6));`,
    `const rec = new Derivation("Smoke: M1 at VGS = 0.8 V, VDS = 1.2 V");`,
    `rec.input("VGS", 0.8, "voltage").input("VDS", 1.2, "voltage");`,
    `const op = operatingPoint(m1, { vgs: volts(0.8), vds: volts(1.2) }, {}, rec);`,
    `rec.check("Saturation margin", op.saturationMargin, "voltage", { min: 0.1 });`,
    `showQuantity(op.id, "current", "ID");`,
    `show(rec);`,
    `console.log("inputs " + fingerprint(rec));`,
  ].join("\n"),
  // A current where a voltage is expected: the kernel's TypeScript must refuse it.
  `operatingPoint(m1, { vgs: op.id, vds: volts(1.2) });`,
];

describe("notebook through the real tslab kernel", () => {
  let run: ExecutedCell[];
  // The same numbers computed here, in-process, from the library source.
  const card: DeviceCard = { name: "smoke-n", polarity: "nmos", kp: amperesPerVoltSquared(200e-6), vt0: volts(0.5), lambda: perVolt(0.05), provenance: "invented for the smoke test" };
  const rec = new Derivation("x").input("VGS", 0.8, "voltage").input("VDS", 1.2, "voltage");
  const op = operatingPoint(device(card, meters(10e-6), meters(1e-6)), { vgs: volts(0.8), vds: volts(1.2) });

  beforeAll(() => {
    prepareKernel();
    run = executeCells(cells);
  }, 240_000);

  it("shows the drain current with its SI prefix", () => {
    const quantity = run[0]!.outputs.find((o) => o.output_type === "display_data" && joined(o.data?.["text/plain"]).startsWith("ID = "));
    expect(quantity, JSON.stringify(run[0]!.outputs).slice(0, 2000)).toBeDefined();
    expect(joined(quantity!.data!["text/plain"])).toBe(`ID = ${formatQuantity(op.id, "current")}`);
    expect(joined(quantity!.data!["text/plain"])).toBe("ID = 95.4 µA"); // ½·2 mA/V²·(0.3 V)²·(1 + 0.05·1.2)
  });

  it("shows the derivation as one bundle: html, markdown, plain text and our JSON", () => {
    const bundle = run[0]!.outputs.find((o) => o.output_type === "display_data" && o.data?.[derivationMime]);
    expect(bundle).toBeDefined();
    expect(Object.keys(bundle!.data!).sort()).toEqual([derivationMime, "text/html", "text/markdown", "text/plain"].sort());
    expect(joined(bundle!.data!["text/html"])).toContain('<section class="po-record"');
    expect(joined(bundle!.data!["text/plain"])).toContain("= 95.4 µA");
    const data = bundle!.data![derivationMime] as DerivationData;
    expect(data.schemaVersion).toBe(1);
    expect(data.fingerprint).toBe(fingerprint(rec));
    expect(data.checks.map((c) => [c.title, c.passed])).toEqual([["Saturation margin", true]]);
    expect(expectReevaluates(data)).toBeGreaterThanOrEqual(2);
    expect(run[0]!.outputs.filter((o) => o.output_type === "error" || o.name === "stderr")).toEqual([]);
  });

  it("imports the render entry by package name too", () => {
    const stdout = run[0]!.outputs.filter((o) => o.name === "stdout").map((o) => joined(o.text)).join("");
    expect(stdout).toContain(`inputs ${fingerprint(rec)}`);
  });

  it("refuses a current where a voltage is expected, as a TypeScript error in the cell output", () => {
    const errText = run[1]!.outputs.map((o) => joined(o.text) + (o.evalue ?? "")).join("\n");
    expect(errText).toMatch(/Type 'Amperes' is not assignable to type 'Volts'/);
    expect(run[1]!.outputs.some((o) => o.output_type === "display_data")).toBe(false);
  });
});
