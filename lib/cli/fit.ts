/**
 * `pinchoff fit <data.csv>`: fit a device model to measured I–V sweeps and
 * write the card (JSON, usable in design files and templates) and a fit report
 * (HTML). Without --l every length at the chosen width is fitted and the cards
 * form a card set (`lib/device/card-set.ts`). Existing outputs are never
 * replaced without --force; both files are written atomically, together.
 */
import { existsSync, realpathSync } from "node:fs";
import { resolve } from "node:path";
import { InputError } from "../errors.js";
import { meters } from "../quantity.js";
import type { CardSet } from "../device/card-set.js";
import { fitSweep, type FitResult, type FitWindow } from "../fit/fit.js";
import { fitModels } from "../fit/models.js";
import { readMeasurements } from "../measure/read.js";
import { geometries, select, type Sweep } from "../measure/select.js";
import { fitReportHtml } from "../report/fit-report.js";
import { writeAtomically } from "../io/atomic-write.js";
import { readSpiceNumber } from "../units/spice-number.js";
import { defineCommand, exitStatus, type CommandSpec } from "./args.js";
import { toJson } from "./op.js";

export const command = {
  name: "fit",
  positionals: [{ name: "data.csv" }],
  options: {
    model: { kind: "value", placeholder: "NAME", help: `device model: ${Object.keys(fitModels).join(", ")} (default square-law)` },
    device: { kind: "value", placeholder: "nmos|pmos", help: "expected polarity (checked against the signs in the file)" },
    w: { kind: "value", placeholder: "W", help: "drawn width, e.g. 10u (selects it; gives it when the file has no W column)" },
    l: { kind: "value", placeholder: "L", help: "drawn length, e.g. 1u; without it every length at this width is fitted\nand the cards written as a card set" },
    temp: { kind: "value", placeholder: "°C", help: "temperature in °C (default 25)" },
    corner: { kind: "value", placeholder: "NAME", help: "process corner named in the file" },
    overdrive: { kind: "value", placeholder: "LO:HI", help: "fit window: |VGS| − Vt from LO to HI volts (default: chosen)" },
    drain: { kind: "value", placeholder: "LO:HI", help: "fit window: |VDS| from LO to HI volts" },
    body: { kind: "value", placeholder: "LO:HI", help: "fit window: |VBS| from LO to HI volts" },
    "saturation-only": { kind: "flag", help: "fit window: only points with |VDS| ≥ overdrive" },
    "min-current": { kind: "value", placeholder: "I", help: "leave out points with |ID| below this (default 10n)" },
    magnitudes: { kind: "flag", help: "the file records |ID| for a PMOS instead of the SPICE sign" },
    card: { kind: "value", placeholder: "FILE", help: "write the fitted card (or card set) as JSON" },
    report: { kind: "value", placeholder: "FILE", help: "write the fit report as HTML" },
    force: { kind: "flag", help: "replace existing output files" },
  },
  description: `Reads measured or simulated I–V sweeps from a CSV file (long layout: columns
W, L, corner, temp, vds, vgs, vbs, id; or wide: one current column per sweep
such as "id (mA) @ vds=0.1"; units in the header), fits the device model by
least squares on relative error, and prints the parameters with standard
errors, the error overall and per region, and the window used, as JSON.`,
  notes: "A fitted model holds inside the measured ranges only: verify designs by simulation and measurement.",
} as const satisfies CommandSpec;

function number(text: string | undefined, option: string, expected: string): number | undefined {
  if (text === undefined) return undefined;
  const v = readSpiceNumber(text);
  if (v === undefined || !Number.isFinite(v)) throw new InputError(text, expected, `--${option}`);
  return v;
}

function range(text: string | undefined, option: string): [number, number] | undefined {
  if (text === undefined) return undefined;
  const m = /^\s*([^:]+):([^:]+)\s*$/.exec(text);
  const lo = m ? readSpiceNumber(m[1]!) : undefined;
  const hi = m ? readSpiceNumber(m[2]!) : undefined;
  if (lo === undefined || hi === undefined || !(hi >= lo)) throw new InputError(text, "a range LO:HI in volts with LO ≤ HI, e.g. 0.2:1.0", `--${option}`);
  return [lo, hi];
}

/** A text progress bar on stderr, only when stderr is a terminal. */
function progress(total: number): (done: number, label: string) => void {
  if (!process.stderr.isTTY || total < 2) return () => {};
  return (done, label) => {
    const width = 30;
    const full = Math.round((width * done) / total);
    process.stderr.write(`\r[${"#".repeat(full)}${".".repeat(width - full)}] ${done}/${total} ${label.padEnd(24).slice(0, 24)}${done === total ? "\n" : ""}`);
  };
}

export const main = defineCommand(command, async ({ values, positionals }) => {
  const file = positionals[0]!;
  const modelId = values.model ?? "square-law";
  const model = fitModels[modelId];
  if (!model) throw new InputError(modelId, `one of ${Object.keys(fitModels).join(", ")}`, "--model");
  const polarity = values.device;
  if (polarity !== undefined && polarity !== "nmos" && polarity !== "pmos") throw new InputError(polarity, `"nmos" or "pmos"`, "--device");
  const w = number(values.w, "w", "a width such as 10u");
  const l = number(values.l, "l", "a length such as 1u");
  const tempC = number(values.temp, "temp", "a temperature in °C such as 25") ?? 25;
  const minCurrent = number(values["min-current"], "min-current", "a current such as 10n") ?? 1e-8;
  const window: FitWindow | "auto" =
    values.overdrive || values.drain || values.body || values["saturation-only"]
      ? { vov: range(values.overdrive, "overdrive"), vds: range(values.drain, "drain"), vbs: range(values.body, "body"), saturationOnly: values["saturation-only"] === true }
      : "auto";
  const outputs = [values.card, values.report].filter((p): p is string => p !== undefined);
  for (const p of outputs) {
    const same = resolve(p) === resolve(file) || (existsSync(p) && realpathSync(p) === realpathSync(file));
    if (same) throw new InputError(p, "an output path other than the data file", p === values.card ? "--card" : "--report", "io");
    if (existsSync(p) && !values.force) throw new InputError(p, "a new file (this one exists and is left untouched; choose another path or pass --force)", p === values.card ? "--card" : "--report", "io");
  }
  if (values.card && values.report && resolve(values.card) === resolve(values.report)) throw new InputError(values.report, "a report path other than the card path", "--report", "io");

  const set = readMeasurements(file, { fixed: { ...(w !== undefined ? { w } : {}), ...(l !== undefined ? { l } : {}) } });
  const tempK = tempC + 273.15;
  const lengths =
    l !== undefined
      ? [l]
      : [...new Set(geometries(set).filter((g) => (w === undefined || Math.abs(g.w - w) <= 1e-6 * w) && Math.abs(g.temp - tempK) < 0.01 && (values.corner === undefined || g.corner === values.corner)).map((g) => g.l))].sort((a, b) => a - b);
  if (lengths.length === 0) throw new InputError({ w, temp: tempC, corner: values.corner }, "a width, temperature and corner the file holds", file);
  const bar = progress(lengths.length);
  const fits: { fit: FitResult; sweep: Sweep }[] = [];
  lengths.forEach((len, i) => {
    const sweep = select(set, { polarity: polarity as "nmos" | "pmos" | undefined, w, l: len, temp: tempK, corner: values.corner, currentSign: values.magnitudes ? "magnitude" : "spice" });
    bar(i, `L = ${+(len * 1e6).toPrecision(4)} µm`);
    fits.push({ fit: fitSweep(model, sweep, { window, minCurrent }), sweep });
    bar(i + 1, `L = ${+(len * 1e6).toPrecision(4)} µm`);
  });
  const first = fits[0]!.fit;
  const cardJson: unknown =
    fits.length === 1
      ? first.card
      : ({
          kind: "card-set",
          name: `${first.device.polarity} ${model.title}, W = ${+(first.device.w * 1e6).toPrecision(4)} µm`,
          polarity: first.device.polarity as "nmos" | "pmos",
          entries: fits.map((f) => ({ l: meters(f.fit.device.l), card: f.fit.card })),
          provenance: `fitted by pinchoff fit to ${file}`,
        } satisfies CardSet as unknown);
  const files = [
    ...(values.card ? [{ path: values.card, content: `${JSON.stringify(cardJson, null, 2)}\n` }] : []),
    ...(values.report ? [{ path: values.report, content: fitReportHtml(`Fit of ${model.title} to ${file}`, fits) }] : []),
  ];
  if (files.length) writeAtomically(files);
  const summary = fits.map(({ fit }) => ({
    device: fit.device,
    model: fit.model,
    window: fit.window,
    meetsTarget: fit.meetsTarget,
    parameters: Object.fromEntries(fit.parameters.map((p) => [p.name, { value: p.value, stdErr: p.held ? "held" : p.stdErr, unit: p.unit }])),
    inWindow: fit.inWindow,
    everyPoint: fit.accuracy.overall,
    regions: fit.accuracy.regions,
  }));
  console.log(toJson({ data: file, ...(values.card ? { card: values.card } : {}), ...(values.report ? { report: values.report } : {}), fits: summary }));
  const missed = fits.filter((f) => !f.fit.meetsTarget);
  for (const f of missed) console.error(`fit: ${f.fit.device.polarity} L = ${+(f.fit.device.l * 1e6).toPrecision(4)} µm does not reach RMS ≤ ${100 * f.fit.target} % in any window tried (${((f.fit.inWindow.rms ?? 0) * 100).toFixed(1)} % in the narrowest)`);
  return missed.length ? exitStatus.failed : exitStatus.ok;
});
