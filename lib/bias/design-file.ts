/**
 * Design files: one bias stage as JSON, our own schema. Values are SI numbers
 * or text with units ("4.7 kOhm", "4k7", "20 uA", "3.3 V"), parsed by
 * lib/units/parse.ts with the dimension each field expects. Every error names
 * the file and the field path. This module reads; it never writes the design.
 *
 *   {
 *     "name": "input stage",                      optional
 *     "topology": "four-resistor",                a registered topology id
 *     "device": {
 *       "card": { "name": "…", "polarity": "nmos", "kp": "200 uA/V^2", "vt0": "0.5 V",
 *                 "lambda": "0.05 1/V", "gamma": 0.4, "phi": "0.7 V", "provenance": "…" },
 *       "w": "10 um", "l": "1 um"
 *     },
 *     — or, for a discrete part from its datasheet, instead of card, w and l:
 *     "device": { "part": { "name": "…", "polarity": "nmos", "threshold": …, "forwardTransconductance": …,
 *                           "onResistance": …, "ratings": … }, "ambient": "40 degC", "rthCA": "4 K/W" },   see ./part-file.ts
 *       (rthCA, optional: case-to-ambient through the interface and heat sink; TJ is then checked through RθJC + RθCA)
 *     "components": { "rg1": "200k", "rg2": "100k", "rd": "5k", "rs": "1k" },
 *     — or, to design the stage, instead of components:
 *     "specification": { "id": "1 mA", "sizing": { "vov": "0.3 V", "l": "1 um" }, "drain": { "vd": "3 V" }, … },
 *       the topology's fields, listed with their dimensions in ./spec-fields.ts;
 *       then "device" holds only { card }: the size comes from specification.sizing,
 *       and "devices" is not given (the designer sizes further transistors)
 *     "supplies": { "vdd": "5 V", "vss": "0 V" },  vss optional (0 V)
 *     "body": "source" | "rail",                   optional ("source")
 *     "options": { "clm": "continuous" | "saturation-only" },   optional
 *     "limits": { "maxDevicePower": "50 mW", "maxTotalPower": …, "minSaturationMargin": "0.2 V",
 *                 "minOverdrive": …, "minSourceHeadroom": … },  optional
 *     "tolerance": { "resistors": "1 %", "process": { "vt0": "50 mV", "kp": "10 %" }, … },
 *                                                  optional: see ./tolerance-file.ts
 *     "mismatch": { "nmos": { "avt": "5 mV*um" }, "samples": 100000, "limits": { "offset": "5 mV" }, … },
 *                                                  optional, pairs and mirrors: see ./mismatch-file.ts
 *     "notes": "free text"                         optional, ignored
 *   }
 */
import { createHash } from "node:crypto";
import { readFileSync } from "node:fs";
import { checkCard, type DeviceCard } from "../device/card.js";
import { cardAt, checkCardSet, type CardSet } from "../device/card-set.js";
import { InputError, PinchoffError, requirePositive } from "../errors.js";
import type { Dimension, Meters } from "../quantity.js";
import { defaultAmbient, partInUse, partModel, type PartInUse } from "../device/discrete-part.js";
import { parsePartCard } from "./part-file.js";
import { checkFrequencySpec, type FrequencySpec } from "./frequency.js";
import type { DiffusionGeometry } from "../device/capacitance-card.js";

/** Ambient of a discrete part when the design file states none: 25 °C, where datasheets state their figures (common practice). */
import { describeDimension, parseQuantity } from "../units/parse.js";
import { acceptsText, inRange, rangeText, specFields, type SpecField, type SpecTopology } from "./spec-fields.js";
import type { StageSpec } from "./synthesis.js";
import { parseToleranceSection, type ToleranceSection } from "./tolerance-file.js";
import { parseMismatchSection, type MismatchSection } from "./mismatch-file.js";
import { topologyFor, type Stage, type StageDevice, type StageLimits } from "./topology.js";
import { checkLimits } from "./stage.js";
import "./analyze.js"; // registers the built-in topologies

const topKeys = ["name", "topology", "device", "devices", "components", "specification", "supplies", "body", "options", "limits", "tolerance", "frequency", "mismatch", "notes"] as const;
const cardFields: Record<string, Dimension | "string"> = {
  name: "string",
  polarity: "string",
  kp: "transconductanceParameter",
  vt0: "voltage",
  lambda: "inverseVoltage",
  gamma: "sqrtVoltage",
  phi: "voltage",
  provenance: "string",
  // Device model (absent: the square law) and the parameters only some models use.
  model: "string",
  theta: "inverseVoltage",
  thetaB: "inverseVoltage",
  ecrit: "electricField",
  sigma: "dimensionless",
  cit: "dimensionless",
  // Pelgrom matching coefficients (mismatch analysis).
  avt: "voltageLength",
  abeta: "length",
};
const temperatureFields: Record<string, Dimension> = { t0: "temperature", alphaVt: "voltagePerKelvin", muExp: "dimensionless" };
const capacitanceFields: Record<string, Dimension> = {
  tox: "length",
  cgso: "capacitancePerWidth",
  cgdo: "capacitancePerWidth",
  cgbo: "capacitancePerWidth",
  cj: "capacitancePerArea",
  mj: "dimensionless",
  pb: "voltage",
  cjsw: "capacitancePerWidth",
  mjsw: "dimensionless",
  fc: "dimensionless",
  diffusionLength: "length",
};
const diffusionFields: Record<string, Dimension> = { ad: "area", as: "area", pd: "length", ps: "length" };

/** A group of optional quantities `{ field: value with unit }` at `f`. */
function quantities(raw: unknown, fields: Record<string, Dimension>, f: string, at: (p: string) => string, what: string, required: readonly string[] = []): Record<string, number> {
  const o = object(raw, at(f), what);
  onlyKeys(o, Object.keys(fields), at(f));
  const out: Record<string, number> = {};
  for (const [k, dim] of Object.entries(fields)) if (o[k] !== undefined || required.includes(k)) out[k] = quantity(o[k], dim, at(`${f}.${k}`));
  return out;
}

/** A design file's `frequency` section: signal source, load, coupling and bypass capacitors, target corners. */
function parseFrequency(raw: unknown, at: (p: string) => string): FrequencySpec {
  const f = object(raw, at("frequency"), "a frequency section { source?, load?, capacitors?, targets?, series?, compensation? }");
  onlyKeys(f, ["source", "load", "capacitors", "targets", "series", "compensation"], at("frequency"));
  const spec: Record<string, unknown> = {};
  if (f.source !== undefined) {
    const src = object(f.source, at("frequency.source"), "a signal source { resistance }");
    for (const k of Object.keys(src))
      if (k !== "resistance") throw new InputError(k, "only resistance: the source impedance must be a resistance (put a source capacitance in the card or the load)", at(`frequency.source.${k}`), "invalid-design");
    spec.source = quantities(src, { resistance: "resistance" }, "frequency.source", at, "a signal source { resistance }", ["resistance"]);
  }
  if (f.load !== undefined) spec.load = quantities(f.load, { resistance: "resistance", capacitance: "capacitance" }, "frequency.load", at, "a load { resistance?, capacitance? }");
  if (f.capacitors !== undefined) spec.capacitors = quantities(f.capacitors, { input: "capacitance", output: "capacitance", bypass: "capacitance" }, "frequency.capacitors", at, "coupling and bypass capacitors { input?, output?, bypass? }");
  if (f.targets !== undefined) spec.targets = quantities(f.targets, { lowCorner: "frequency", highCorner: "frequency" }, "frequency.targets", at, "target corners { lowCorner?, highCorner? }");
  if (f.series !== undefined) {
    if (f.series !== "E6" && f.series !== "E12") throw new InputError(f.series, `"E6" or "E12" (IEC 60063 capacitor series)`, at("frequency.series"), "invalid-design");
    spec.series = f.series;
  }
  if (f.compensation !== undefined) {
    // Two-stage Miller amplifier: Cc (or a target phase margin in degrees, a plain number) and Rz (or the rule choosing it).
    const what = "a compensation section { cc?, rz?, targetPhaseMargin?, nulling? }";
    const c = object(f.compensation, at("frequency.compensation"), what);
    const { nulling, ...rest } = c;
    spec.compensation = { ...quantities(rest, { cc: "capacitance", rz: "resistance", targetPhaseMargin: "dimensionless" }, "frequency.compensation", at, what), ...(nulling !== undefined ? { nulling } : {}) };
  }
  return checkFrequencySpec(spec as FrequencySpec, at("frequency"));
}
const limitFields: Record<keyof StageLimits, Dimension> = {
  maxDevicePower: "power",
  maxTotalPower: "power",
  minSaturationMargin: "voltage",
  minOverdrive: "voltage",
  minSourceHeadroom: "voltage",
};

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === "object" && v !== null && !Array.isArray(v);

function object(v: unknown, at: string, what: string): Record<string, unknown> {
  if (!isObject(v)) throw new InputError(v, what, at, "invalid-design");
  return v;
}

function onlyKeys(o: Record<string, unknown>, allowed: readonly string[], at: string, top = false): void {
  for (const k of Object.keys(o)) if (!allowed.includes(k)) throw new InputError(k, `one of the fields ${allowed.join(", ")}`, top ? `${at}: ${k}` : `${at}.${k}`, "invalid-design");
}

function quantity(v: unknown, dim: Dimension, at: string): number {
  if (v === undefined) throw new InputError(v, `a ${dim} value`, at, "invalid-design");
  if (typeof v !== "number" && typeof v !== "string") throw new InputError(v, "a number in SI units or text with a unit", at);
  return parseQuantity(v, dim, at);
}

/** Parse a device card found at field path `f` (e.g. "device.card"). */
function parseCard(raw: unknown, f: string, at: (p: string) => string): DeviceCard {
  const c = object(raw, at(f), "a device card { name, polarity, kp, vt0, … }");
  onlyKeys(c, [...Object.keys(cardFields), "temperature", "capacitance", "datasheetCapacitances", "tableCapacitances"], at(f));
  const card: Record<string, unknown> = {};
  for (const [k, dim] of Object.entries(cardFields)) {
    const v = c[k];
    if (v === undefined) {
      if (k === "polarity" || k === "kp" || k === "vt0") throw new InputError(v, k === "polarity" ? `"nmos" or "pmos"` : `the card's ${k}`, at(`${f}.${k}`), "invalid-design");
      continue;
    }
    if (dim === "string") {
      if (typeof v !== "string") throw new InputError(v, "text", at(`${f}.${k}`), "invalid-design");
      card[k] = v;
    } else card[k] = quantity(v, dim, at(`${f}.${k}`));
  }
  if (card.polarity !== "nmos" && card.polarity !== "pmos") throw new InputError(card.polarity, `"nmos" or "pmos"`, at(`${f}.polarity`), "invalid-design");
  if (card.name === undefined) card.name = "unnamed card";
  if (c.temperature !== undefined) {
    const t = object(c.temperature, at(`${f}.temperature`), "temperature coefficients { t0, alphaVt, muExp }");
    onlyKeys(t, Object.keys(temperatureFields), at(`${f}.temperature`));
    const tc: Record<string, number> = {};
    for (const [k, dim] of Object.entries(temperatureFields)) tc[k] = quantity(t[k], dim, at(`${f}.temperature.${k}`));
    card.temperature = tc;
  }
  if (c.capacitance !== undefined) card.capacitance = quantities(c.capacitance, capacitanceFields, `${f}.capacitance`, at, "Level 1 capacitance parameters { tox, cgso?, cgdo?, cgbo?, cj?, mj?, pb?, cjsw?, mjsw?, fc?, diffusionLength? }", ["tox"]);
  if (c.datasheetCapacitances !== undefined)
    card.datasheetCapacitances = quantities(c.datasheetCapacitances, { ciss: "capacitance", crss: "capacitance", coss: "capacitance", vds: "voltage" }, `${f}.datasheetCapacitances`, at, "datasheet capacitances { ciss, crss, coss, vds }", ["ciss", "crss", "coss", "vds"]);
  if (c.tableCapacitances !== undefined) card.tableCapacitances = parseTableCapacitances(c.tableCapacitances, `${f}.tableCapacitances`, at);
  checkCard(card as unknown as DeviceCard, at(f));
  return card as unknown as DeviceCard;
}

/** A foundry device's gate capacitances per W from a characterisation table (as `tableCapacitances()` writes them). */
function parseTableCapacitances(raw: unknown, f: string, at: (p: string) => string): Record<string, unknown> {
  const what = "table capacitances { cgsPerWidth, cgdPerWidth, cggPerWidth, table, at?, overlap? }";
  const { table, at: where, overlap, ...perWidth } = object(raw, at(f), what);
  const perW = { cgsPerWidth: "capacitancePerWidth", cgdPerWidth: "capacitancePerWidth", cggPerWidth: "capacitancePerWidth" } as const;
  const out: Record<string, unknown> = quantities(perWidth, perW, f, at, what, Object.keys(perW));
  if (typeof table !== "string" || table === "") throw new InputError(table, "the characterisation table's fingerprint (text)", at(`${f}.table`), "invalid-design");
  out.table = table;
  if (where !== undefined && typeof where !== "string") throw new InputError(where, "text: where in the table the values were read", at(`${f}.at`), "invalid-design");
  out.at = where ?? "not stated in the design file";
  if (overlap !== undefined) {
    const ow = "the model card's overlap parameters { cgso, cgdo, cgsl?, cgdl?, ckappas?, ckappad?, vgs, vds, source }";
    const { source, ...values } = object(overlap, at(`${f}.overlap`), ow);
    if (typeof source !== "string" || source === "") throw new InputError(source, "text naming the model card the overlaps come from", at(`${f}.overlap.source`), "invalid-design");
    const fields = { cgso: "capacitancePerWidth", cgdo: "capacitancePerWidth", cgsl: "capacitancePerWidth", cgdl: "capacitancePerWidth", ckappas: "voltage", ckappad: "voltage", vgs: "voltage", vds: "voltage" } as const;
    out.overlap = { ...quantities(values, fields, `${f}.overlap`, at, ow, ["cgso", "cgdo", "vgs", "vds"]), source };
  }
  return out;
}

/**
 * A device card, or a card set (`{ kind: "card-set", name, polarity, entries: [{ l, card }, …], provenance? }`,
 * as `pinchoff fit` writes without --l), each entry's card read as a card, each l as a length.
 */
function parseCardOrSet(raw: unknown, f: string, at: (p: string) => string): DeviceCard | CardSet {
  if (!isObject(raw) || raw.kind !== "card-set") return parseCard(raw, f, at);
  onlyKeys(raw, ["kind", "name", "polarity", "entries", "provenance"], at(f));
  if (!Array.isArray(raw.entries) || raw.entries.length === 0) throw new InputError(raw.entries, "entries: [{ l, card }, …], at least one", at(`${f}.entries`), "invalid-design");
  const entries = raw.entries.map((e: unknown, i: number) => {
    const o = object(e, at(`${f}.entries[${i}]`), "a card-set entry { l, card }");
    onlyKeys(o, ["l", "card"], at(`${f}.entries[${i}]`));
    return { l: quantity(o.l, "length", at(`${f}.entries[${i}].l`)) as Meters, card: parseCard(o.card, `${f}.entries[${i}].card`, at) };
  });
  const set = { kind: "card-set", name: typeof raw.name === "string" ? raw.name : "unnamed card set", polarity: raw.polarity, entries, ...(typeof raw.provenance === "string" ? { provenance: raw.provenance } : {}) } as CardSet;
  return checkCardSet(set, at(f));
}

/** Parse one transistor `{ card, w, l }`, or a discrete part `{ part, ambient?, rthCA? }`, found at field path `f`. */
function parseStageDevice(raw: unknown, f: string, at: (p: string) => string): StageDevice {
  const dev = object(raw, at(f), "a device { card, w, l } or a discrete part { part, ambient?, rthCA? }");
  if (dev.part !== undefined) {
    onlyKeys(dev, ["part", "ambient", "rthCA"], at(f));
    const part = parsePartCard(dev.part, at(`${f}.part`));
    const ambient = dev.ambient === undefined ? defaultAmbient : quantity(dev.ambient, "temperature", at(`${f}.ambient`));
    const rthCA = dev.rthCA === undefined ? undefined : quantity(dev.rthCA, "thermalResistance", at(`${f}.rthCA`));
    const use = partInUse(part, ambient, rthCA, at(f));
    const model = partModel(part, undefined, at(`${f}.part`));
    return { card: model.card, w: model.w, l: model.l, part: use };
  }
  onlyKeys(dev, ["card", "w", "l", "diffusion"], at(f));
  const read = parseCardOrSet(dev.card, `${f}.card`, at);
  const w = requirePositive(quantity(dev.w, "length", at(`${f}.w`)), at(`${f}.w`), "a channel width W > 0 in m");
  const l = requirePositive(quantity(dev.l, "length", at(`${f}.l`)), at(`${f}.l`), "a channel length L > 0 in m");
  // A card set gives the card at this L (interpolated in 1/L, lib/device/card-set.ts).
  const card = (read as CardSet).kind === "card-set" ? cardAt(read as CardSet, l as Meters, at(`${f}.card`)) : (read as DeviceCard);
  const diffusion = dev.diffusion === undefined ? undefined : (quantities(dev.diffusion, diffusionFields, `${f}.diffusion`, at, "drain and source diffusions { ad, as, pd, ps }", ["ad", "as", "pd", "ps"]) as unknown as DiffusionGeometry);
  return { card, w: w as StageDevice["w"], l: l as StageDevice["l"], ...(diffusion ? { diffusion } : {}) };
}

/** What a design file states besides the device and the components or specification. */
function parseCommon(d: Record<string, unknown>, at: (p: string) => string, origin: string) {
  const s = object(d.supplies, at("supplies"), "supplies { vdd, vss? }");
  onlyKeys(s, ["vdd", "vss"], at("supplies"));
  const supplies = { vdd: quantity(s.vdd, "voltage", at("supplies.vdd")), ...(s.vss !== undefined ? { vss: quantity(s.vss, "voltage", at("supplies.vss")) } : {}) };
  // Range checks here, where the file is known, so the message names it.
  if (!Number.isFinite(supplies.vdd)) throw new InputError(supplies.vdd, "a finite supply voltage in V", at("supplies.vdd"));
  if (supplies.vss !== undefined && !(supplies.vss < supplies.vdd)) throw new InputError(supplies.vss, `a finite voltage below supplies.vdd = ${supplies.vdd} V`, at("supplies.vss"));

  if (d.body !== undefined && d.body !== "source" && d.body !== "rail") throw new InputError(d.body, `"source" or "rail"`, at("body"), "invalid-design");
  let options: { clm: "continuous" | "saturation-only" } | undefined;
  if (d.options !== undefined) {
    const o = object(d.options, at("options"), "options { clm }");
    onlyKeys(o, ["clm"], at("options"));
    if (o.clm !== undefined && o.clm !== "continuous" && o.clm !== "saturation-only") throw new InputError(o.clm, `"continuous" or "saturation-only"`, at("options.clm"), "invalid-design");
    if (o.clm !== undefined) options = { clm: o.clm };
  }
  let limits: Record<string, number> | undefined;
  if (d.limits !== undefined) {
    const lo = object(d.limits, at("limits"), "limits { maxDevicePower, … }");
    onlyKeys(lo, Object.keys(limitFields), at("limits"));
    limits = {};
    for (const [k, dim] of Object.entries(limitFields)) if (lo[k] !== undefined) limits[k] = quantity(lo[k], dim, at(`limits.${k}`));
    checkLimits(limits as StageLimits, origin);
  }
  return {
    ...(d.name !== undefined ? { name: d.name as string } : {}),
    supplies: supplies as Stage["supplies"],
    ...(d.body !== undefined ? { body: d.body as "source" | "rail" } : {}),
    ...(options ? { options } : {}),
    ...(limits ? { limits: limits as StageLimits } : {}),
  };
}

/** Read one specification field against its entry in the schema table (spec-fields.ts). */
function specValue(v: unknown, f: SpecField, path: string, at: (p: string) => string): unknown {
  const expected = () => `${acceptsText(f)}: ${f.meaning}`;
  switch (f.kind) {
    case "quantity": {
      const x = quantity(v, f.dim, at(path));
      if (!inRange(x, f.range)) throw new InputError(x, `${describeDimension(f.dim)}, ${rangeText[f.range]} (${f.meaning})`, at(path));
      return x;
    }
    case "integer":
      if (typeof v !== "number" || !Number.isInteger(v) || v < f.min || (f.max !== undefined && v > f.max)) throw new InputError(v, expected(), at(path), "invalid-design");
      return v;
    case "boolean":
      if (typeof v !== "boolean") throw new InputError(v, expected(), at(path), "invalid-design");
      return v;
    case "choice":
      if (typeof v !== "string" || !f.values.includes(v)) throw new InputError(v, expected(), at(path), "invalid-design");
      return v;
    case "card":
      return parseCardOrSet(v, path, at);
    case "byName": {
      const o = object(v, at(path), expected());
      const out: Record<string, unknown> = {};
      for (const [k, e] of Object.entries(o)) out[k] = specValue(e, f.entry, `${path}.${k}`, at);
      return out;
    }
    case "group":
      return specGroup(v, f.fields, path, at, expected(), f.oneOf);
  }
}

function specGroup(v: unknown, fields: Readonly<Record<string, SpecField>>, path: string, at: (p: string) => string, what: string, oneOf?: readonly string[]): Record<string, unknown> {
  const o = object(v, at(path), what);
  onlyKeys(o, Object.keys(fields), at(path));
  if (oneOf) {
    const given = oneOf.filter((k) => o[k] !== undefined);
    if (given.length !== 1) throw new InputError(given.length ? given : undefined, `exactly one of ${oneOf.join(", ")} (${what})`, at(path), "invalid-design");
  }
  const out: Record<string, unknown> = {};
  for (const [k, f] of Object.entries(fields)) {
    if (o[k] === undefined) {
      if (f.required) throw new InputError(undefined, `${acceptsText(f)}: ${f.meaning}`, at(`${path}.${k}`), "invalid-design");
      continue;
    }
    out[k] = specValue(o[k], f, `${path}.${k}`, at);
  }
  return out;
}

/** A design file read: a stage to analyse, or a specification to design. */
export type DesignFile =
  | { readonly kind: "analysis"; readonly origin: string; readonly stage: Stage; readonly tolerance?: ToleranceSection; readonly frequency?: FrequencySpec; readonly mismatch?: MismatchSection }
  | { readonly kind: "specification"; readonly origin: string; readonly spec: StageSpec; readonly tolerance?: ToleranceSection; readonly part?: PartInUse; readonly frequency?: FrequencySpec; readonly mismatch?: MismatchSection };

/** Validate and parse a design file (already JSON-parsed); `origin` names the file. */
export function parseDesignFile(design: unknown, origin = "design"): DesignFile {
  const d = object(design, origin, "a design object { topology, device, components or specification, supplies, … }");
  onlyKeys(d, topKeys, origin, true);
  const at = (p: string) => `${origin}: ${p}`;
  const topo = topologyFor(d.topology, at("topology"));
  if (d.name !== undefined && typeof d.name !== "string") throw new InputError(d.name, "a name as text", at("name"), "invalid-design");
  if (d.notes !== undefined && typeof d.notes !== "string") throw new InputError(d.notes, "notes as text", at("notes"), "invalid-design");
  const tolerance = {
    ...(d.tolerance === undefined ? {} : { tolerance: parseToleranceSection(d.tolerance, at("tolerance")) }),
    ...(d.frequency === undefined ? {} : { frequency: parseFrequency(d.frequency, at) }),
    ...(d.mismatch === undefined ? {} : { mismatch: parseMismatchSection(d.mismatch, topo.id, at("mismatch")) }),
  };
  const given = (["components", "specification"] as const).filter((k) => d[k] !== undefined);
  if (given.length !== 1)
    throw new InputError(given.length ? given : undefined, "exactly one of components (the values, to analyse the stage) or specification (the targets, to design it)", at("components/specification"), "invalid-design");

  if (d.specification !== undefined) {
    if (!Object.prototype.hasOwnProperty.call(specFields, topo.id))
      throw new InputError(topo.id, `a topology with a designer for a specification: ${Object.keys(specFields).map((t) => JSON.stringify(t)).join(", ")}`, at("topology"), "invalid-design");
    const fields = specFields[topo.id as SpecTopology] as Readonly<Record<string, SpecField>>;
    const dev = object(d.device, at("device"), "a device { card } (its size comes from specification.sizing), or a discrete part { part, ambient?, rthCA? }");
    for (const k of ["w", "l"] as const)
      if (dev[k] !== undefined) throw new InputError(dev[k], `no device.${k} with a specification: the size comes from specification.sizing (vov or w, and l)`, at(`device.${k}`), "invalid-design");
    if (d.devices !== undefined)
      throw new InputError(Object.keys(object(d.devices, at("devices"), "no devices with a specification")), "no devices with a specification: the designer sizes the further transistors (a mirror's reference from specification.ratio, a diode load from specification.load)", at("devices"), "invalid-design");
    // A discrete part: its model's card, and its size fixed (W = L, k absorbed in KP), so the specification gives no sizing.
    let part: PartInUse | undefined;
    let rawSpec = d.specification;
    let card: DeviceCard | CardSet;
    if (dev.part !== undefined) {
      const used = parseStageDevice(dev, "device", at);
      part = used.part!;
      card = used.card;
      const sp = object(d.specification, at("specification"), "a specification");
      if (sp.sizing !== undefined)
        throw new InputError(sp.sizing, "no specification.sizing with a discrete part: its size is fixed by the part (W/L is absorbed in its k)", at("specification.sizing"), "invalid-design");
      if (d.body === "rail") throw new InputError("rail", `body "source" (or omitted): the discrete part has its body tied to its source inside the package`, at("body"), "invalid-design");
      rawSpec = { ...sp, sizing: { w: used.w, l: used.l } };
    } else {
      onlyKeys(dev, ["card"], at("device"));
      // A card set stays a set: synthesis takes its card at specification.sizing.l.
      card = parseCardOrSet(dev.card, "device.card", at);
    }
    const own = specGroup(rawSpec, fields, "specification", at, `the ${topo.id} specification { ${Object.keys(fields).join(", ")} }`);
    // A rating under a misspelled name would silently not apply: the names must be the topology's resistors.
    const resistorNames = topo.components.filter((c) => c.dim === "resistance").map((c) => c.name);
    const byName = (own.dissipation as { resistors?: Record<string, unknown> } | undefined)?.resistors;
    for (const k of Object.keys(byName ?? {}))
      if (!resistorNames.includes(k)) throw new InputError(k, `one of the ${topo.id} resistors ${resistorNames.join(", ")}`, at(`specification.dissipation.resistors.${k}`), "invalid-design");
    // Passed to synthesis as parsed: the library takes this same shape (lib/bias/synthesis.ts converts it once).
    const { sizing, ...partOwn } = own;
    const spec = { topology: topo.id, ...parseCommon(d, at, origin), device: part ? { part: part.part, ambient: part.ambient, ...(part.rthCA !== undefined ? { rthCA: part.rthCA } : {}) } : { card }, specification: part || sizing === undefined ? partOwn : { sizing, ...partOwn } } as unknown as StageSpec;
    return { kind: "specification", origin, spec, ...(part ? { part } : {}), ...tolerance };
  }

  const device = parseStageDevice(d.device, "device", at);
  let devices: Record<string, StageDevice> | undefined;
  if (d.devices !== undefined) {
    const roles = object(d.devices, at("devices"), "further transistors by role, e.g. { reference: { card, w, l } }");
    devices = {};
    for (const [role, raw] of Object.entries(roles)) devices[role] = parseStageDevice(raw, `devices.${role}`, at);
  }

  const comps = object(d.components, at("components"), `the ${topo.id} components (${topo.components.map((f) => f.name).join(", ")})`);
  onlyKeys(comps, topo.components.map((f) => f.name), at("components"));
  const components: Record<string, number> = {};
  for (const f of topo.components) {
    const v = comps[f.name];
    if (v === undefined) {
      if (f.required) throw new InputError(v, `${f.meaning} (${f.dim})`, at(`components.${f.name}`), "invalid-design");
      continue;
    }
    const x = quantity(v, f.dim, at(`components.${f.name}`));
    if (!Number.isFinite(x)) throw new InputError(x, `a finite ${f.dim} (${f.meaning})`, at(`components.${f.name}`));
    if (f.dim === "resistance" && x < 0) throw new InputError(x, `a resistance ≥ 0 Ω (${f.meaning})`, at(`components.${f.name}`));
    if (f.dim === "current" && x <= 0) throw new InputError(x, `a current > 0 A (${f.meaning})`, at(`components.${f.name}`));
    components[f.name] = x;
  }
  const common = parseCommon(d, at, origin);
  for (const [role, dv] of [["device", device] as const, ...Object.entries(devices ?? {}).map(([r, dv]) => [`devices.${r}`, dv] as const)])
    if (dv.part && common.body === "rail")
      throw new InputError("rail", `body "source" (or omitted): the discrete part at ${role} has its body tied to its source inside the package`, at("body"), "invalid-design");
  const stage: Stage = {
    topology: topo.id,
    ...(common.name !== undefined ? { name: common.name } : {}),
    device,
    ...(devices ? { devices } : {}),
    components,
    supplies: common.supplies,
    ...(common.body !== undefined ? { body: common.body } : {}),
    ...(common.options ? { options: common.options } : {}),
    ...(common.limits ? { limits: common.limits } : {}),
  };
  return { kind: "analysis", origin, stage, ...tolerance };
}

/** Validate and parse a design with components into a stage; `origin` names the file. */
export function parseDesign(design: unknown, origin = "design"): Stage {
  const f = parseDesignFile(design, origin);
  if (f.kind === "specification")
    throw new PinchoffError("invalid-design", "this design gives a specification, not components: design it with designOf (pinchoff op does both)", `${origin}: specification`);
  return f.stage;
}

function readJson(path: string): unknown {
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (e) {
    throw new PinchoffError("io", `cannot read the design file (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`, path);
  }
  return parseJsonText(text, path);
}

function parseJsonText(text: string, path: string): unknown {
  // A byte-order mark is how some editors start a UTF-8 file; it is not part of the JSON.
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new InputError(text.length > 60 ? `${text.slice(0, 60)}…` : text, `JSON (${(e as Error).message})`, path, "unparseable");
  }
}

/** Read and parse a design file, with components or a specification; errors name the file (and the field path). */
export function readDesignFile(path: string): DesignFile {
  return parseDesignFile(readJson(path), path);
}

/**
 * Read a design file once and parse it, with the SHA-256 (hex) of the exact
 * bytes read, so a record can name the file it came from without a second read.
 */
export function readDesignSource(path: string): { design: DesignFile; sha256: string } {
  let bytes: Buffer;
  try {
    bytes = readFileSync(path);
  } catch (e) {
    throw new PinchoffError("io", `cannot read the design file (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`, path);
  }
  const raw = parseJsonText(bytes.toString("utf8"), path);
  return { design: parseDesignFile(raw, path), sha256: createHash("sha256").update(bytes).digest("hex") };
}

/** Read and parse a design file with components; errors name the file (and the field path). */
export function readDesign(path: string): Stage {
  return parseDesign(readJson(path), path);
}
