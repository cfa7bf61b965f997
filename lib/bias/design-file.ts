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
 *     "components": { "rg1": "200k", "rg2": "100k", "rd": "5k", "rs": "1k" },
 *     "supplies": { "vdd": "5 V", "vss": "0 V" },  vss optional (0 V)
 *     "body": "source" | "rail",                   optional ("source")
 *     "options": { "clm": "continuous" | "saturation-only" },   optional
 *     "limits": { "maxDevicePower": "50 mW", "maxTotalPower": …, "minSaturationMargin": "0.2 V",
 *                 "minOverdrive": …, "minSourceHeadroom": … },  optional
 *     "notes": "free text"                         optional, ignored
 *   }
 */
import { readFileSync } from "node:fs";
import { checkCard, type DeviceCard } from "../device/card.js";
import { InputError, PinchoffError, requirePositive } from "../errors.js";
import type { Dimension } from "../quantity.js";
import { parseQuantity } from "../units/parse.js";
import { topologyFor, type Stage, type StageDevice, type StageLimits } from "./topology.js";
import "./analyze.js"; // registers the built-in topologies

const topKeys = ["name", "topology", "device", "devices", "components", "supplies", "body", "options", "limits", "notes"] as const;
const cardFields: Record<string, Dimension | "string"> = {
  name: "string",
  polarity: "string",
  kp: "transconductanceParameter",
  vt0: "voltage",
  lambda: "inverseVoltage",
  gamma: "sqrtVoltage",
  phi: "voltage",
  provenance: "string",
};
const temperatureFields: Record<string, Dimension> = { t0: "temperature", alphaVt: "voltagePerKelvin", muExp: "dimensionless" };
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

/** Parse one transistor `{ card, w, l }` found at field path `f`. */
function parseStageDevice(raw: unknown, f: string, at: (p: string) => string): StageDevice {
  const dev = object(raw, at(f), "a device { card, w, l }");
  onlyKeys(dev, ["card", "w", "l"], at(f));
  const c = object(dev.card, at(`${f}.card`), "a device card { name, polarity, kp, vt0, … }");
  onlyKeys(c, [...Object.keys(cardFields), "temperature"], at(`${f}.card`));
  const card: Record<string, unknown> = {};
  for (const [k, dim] of Object.entries(cardFields)) {
    const v = c[k];
    if (v === undefined) {
      if (k === "polarity" || k === "kp" || k === "vt0") throw new InputError(v, k === "polarity" ? `"nmos" or "pmos"` : `the card's ${k}`, at(`${f}.card.${k}`), "invalid-design");
      continue;
    }
    if (dim === "string") {
      if (typeof v !== "string") throw new InputError(v, "text", at(`${f}.card.${k}`), "invalid-design");
      card[k] = v;
    } else card[k] = quantity(v, dim, at(`${f}.card.${k}`));
  }
  if (card.polarity !== "nmos" && card.polarity !== "pmos") throw new InputError(card.polarity, `"nmos" or "pmos"`, at(`${f}.card.polarity`), "invalid-design");
  if (card.name === undefined) card.name = "unnamed card";
  if (c.temperature !== undefined) {
    const t = object(c.temperature, at(`${f}.card.temperature`), "temperature coefficients { t0, alphaVt, muExp }");
    onlyKeys(t, Object.keys(temperatureFields), at(`${f}.card.temperature`));
    const tc: Record<string, number> = {};
    for (const [k, dim] of Object.entries(temperatureFields)) tc[k] = quantity(t[k], dim, at(`${f}.card.temperature.${k}`));
    card.temperature = tc;
  }
  checkCard(card as unknown as DeviceCard, at(`${f}.card`));
  const w = requirePositive(quantity(dev.w, "length", at(`${f}.w`)), at(`${f}.w`), "a channel width W > 0 in m");
  const l = requirePositive(quantity(dev.l, "length", at(`${f}.l`)), at(`${f}.l`), "a channel length L > 0 in m");

  return { card: card as unknown as DeviceCard, w: w as StageDevice["w"], l: l as StageDevice["l"] };
}

/** Validate and parse a design (already JSON-parsed) into a stage; `origin` names the file. */
export function parseDesign(design: unknown, origin = "design"): Stage {
  const d = object(design, origin, "a design object { topology, device, components, supplies, … }");
  onlyKeys(d, topKeys, origin, true);
  const at = (p: string) => `${origin}: ${p}`;
  const topo = topologyFor(d.topology, at("topology"));
  if (d.name !== undefined && typeof d.name !== "string") throw new InputError(d.name, "a name as text", at("name"), "invalid-design");
  if (d.notes !== undefined && typeof d.notes !== "string") throw new InputError(d.notes, "notes as text", at("notes"), "invalid-design");

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
    components[f.name] = quantity(v, f.dim, at(`components.${f.name}`));
  }

  const s = object(d.supplies, at("supplies"), "supplies { vdd, vss? }");
  onlyKeys(s, ["vdd", "vss"], at("supplies"));
  const supplies = { vdd: quantity(s.vdd, "voltage", at("supplies.vdd")), ...(s.vss !== undefined ? { vss: quantity(s.vss, "voltage", at("supplies.vss")) } : {}) };

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
  }
  return {
    topology: topo.id,
    ...(d.name !== undefined ? { name: d.name as string } : {}),
    device,
    ...(devices ? { devices } : {}),
    components,
    supplies: supplies as Stage["supplies"],
    ...(d.body !== undefined ? { body: d.body as "source" | "rail" } : {}),
    ...(options ? { options } : {}),
    ...(limits ? { limits: limits as StageLimits } : {}),
  };
}

/** Read and parse a design file; errors name the file (and the field path). */
export function readDesign(path: string): Stage {
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (e) {
    throw new PinchoffError("io", `cannot read the design file (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`, path);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    throw new InputError(text.length > 60 ? `${text.slice(0, 60)}…` : text, `JSON (${(e as Error).message})`, path, "unparseable");
  }
  return parseDesign(json, path);
}
