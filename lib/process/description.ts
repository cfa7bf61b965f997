/**
 * Process descriptions: which model library a design is simulated with.
 *
 * A description is JSON in pinchoff's own schema (`kind: "pinchoff-process"`,
 * `version: 1`): the library file and section, optional includes, the NMOS and
 * PMOS device (model) names with their allowed L and W ranges and drawing grid
 * (metres), the supply's nominal and maximum voltage, the corners (name → library
 * section) and the temperature (°C). Paths are relative to the description file.
 * Validated once when read; every field error is an `InputError` naming the
 * field and the file. The built-in demo is `processes/gf180-3v3.json`.
 */
import { dirname, isAbsolute, join, resolve } from "node:path";
import { nodeFs } from "../io/lazy-builtins.js";
import { packageRoot } from "../io/package-root.js";
import { InputError, PinchoffError } from "../errors.js";
import type { Meters, Volts } from "../quantity.js";
import { spiceIdentifier, spicePath } from "../spice/deck.js";

const { existsSync, readFileSync } = nodeFs;

export type Polarity = "nmos" | "pmos";

export interface Range<T extends number> {
  readonly min: T;
  readonly max: T;
}

export interface ProcessDevice {
  /** The device (model) name as instances use it: `M1 d g s b <model> W= L=`. */
  readonly model: string;
  readonly l: Range<Meters>;
  readonly w: Range<Meters>;
  /** Drawing grid for L and W (m). */
  readonly grid: Meters;
}

export interface ProcessDescription {
  readonly name: string;
  readonly description: string;
  /** Absolute path of the library file. */
  readonly library: { readonly file: string; readonly section: string };
  /** Absolute paths, included after the `.lib` line. */
  readonly includes: readonly string[];
  /** Corner name → library section (the description's `library.section` is the default corner). */
  readonly corners: Readonly<Record<string, string>>;
  readonly temperature: number;
  readonly supply: { readonly nominal: Volts; readonly max: Volts };
  readonly devices: { readonly nmos: ProcessDevice; readonly pmos: ProcessDevice };
  /** Where it was read from. */
  readonly source: string;
}

/** The folder of the shipped process descriptions. */
export const processesFolder = (): string => join(packageRoot(), "processes");

/** The built-in demo process: the open 180 nm kit's 3.3 V devices. */
export const builtinProcessFile = (): string => resolve(processesFolder(), "gf180-3v3.json");

/** Read and validate a process description file. */
export function readProcess(file: string): ProcessDescription {
  const path = resolve(file);
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (e) {
    throw new PinchoffError("io", `cannot read the process description (${(e as Error).message})`, path);
  }
  let data: unknown;
  try {
    data = JSON.parse(text.replace(/^\uFEFF/, ""));
  } catch (e) {
    throw new InputError(text.slice(0, 40), `JSON (${(e as Error).message})`, path, "unparseable");
  }
  return checkProcess(data, path);
}

const known = new Set(["kind", "version", "name", "description", "library", "includes", "corners", "temperature", "supply", "devices", "notes"]);

/** Validate a description already parsed; `source` is its file (paths resolve against its folder). */
export function checkProcess(data: unknown, source: string): ProcessDescription {
  const at = (f: string) => `${source}: ${f}`;
  const obj = (v: unknown, f: string): Record<string, unknown> => {
    if (typeof v !== "object" || v === null || Array.isArray(v)) throw new InputError(v, "an object", at(f), "invalid-design");
    return v as Record<string, unknown>;
  };
  const str = (v: unknown, f: string): string => {
    if (typeof v !== "string" || v.length === 0) throw new InputError(v, "a non-empty string", at(f), "invalid-design");
    return v;
  };
  const num = (v: unknown, f: string, lo: number, hi: number, what: string): number => {
    if (typeof v !== "number" || !Number.isFinite(v) || v < lo || v > hi) throw new InputError(v, what, at(f));
    return v;
  };
  const d = obj(data, "(top level)");
  if (d.kind !== "pinchoff-process") throw new InputError(d.kind, '"pinchoff-process"', at("kind"), "invalid-design");
  if (d.version !== 1) throw new InputError(d.version, "1", at("version"), "invalid-design");
  for (const k of Object.keys(d)) if (!known.has(k)) throw new InputError(k, `one of the fields ${[...known].join(", ")}`, at(k), "invalid-design");
  const folder = dirname(source);
  const file = (v: unknown, f: string): string => {
    const p = spicePath(str(v, f), at(f));
    const abs = isAbsolute(p) ? p : resolve(folder, p);
    if (!existsSync(abs)) throw new InputError(p, `an existing file (looked for ${abs})`, at(f), "io");
    return spicePath(abs, at(f));
  };
  const lib = obj(d.library, "library");
  const library = { file: file(lib.file, "library.file"), section: spiceIdentifier(str(lib.section, "library.section"), at("library.section")) };
  const includes = d.includes === undefined ? [] : Array.isArray(d.includes) ? d.includes.map((x, i) => file(x, `includes[${i}]`)) : (() => { throw new InputError(d.includes, "a list of file paths", at("includes"), "invalid-design"); })();
  const corners: Record<string, string> = {};
  for (const [k, v] of Object.entries(d.corners === undefined ? {} : obj(d.corners, "corners"))) corners[spiceIdentifier(k, at(`corners`))] = spiceIdentifier(str(v, `corners.${k}`), at(`corners.${k}`));
  if (!Object.values(corners).includes(library.section)) corners[library.section] = library.section;
  const temperature = d.temperature === undefined ? 27 : num(d.temperature, "temperature", -273.15, 500, "a temperature in °C from -273.15 to 500");
  const sup = obj(d.supply, "supply");
  const nominal = num(sup.nominal, "supply.nominal", 1e-3, 1e4, "a supply voltage in V, > 0") as Volts;
  const max = num(sup.max, "supply.max", nominal, 1e4, `a maximum supply in V, ≥ the nominal ${nominal} V`) as Volts;
  const devs = obj(d.devices, "devices");
  const device = (p: Polarity): ProcessDevice => {
    const x = obj(devs[p], `devices.${p}`);
    const range = (v: unknown, f: string): Range<Meters> => {
      const r = obj(v, f);
      const min = num(r.min, `${f}.min`, 1e-9, 1, "a length in m from 1e-9 to 1") as Meters;
      const mx = num(r.max, `${f}.max`, min, 1, `a length in m ≥ min (${min})`) as Meters;
      return { min, max: mx };
    };
    return {
      model: spiceIdentifier(str(x.model, `devices.${p}.model`), at(`devices.${p}.model`)),
      l: range(x.l, `devices.${p}.l`),
      w: range(x.w, `devices.${p}.w`),
      grid: num(x.grid ?? 1e-9, `devices.${p}.grid`, 1e-10, 1e-6, "a drawing grid in m from 1e-10 to 1e-6") as Meters,
    };
  };
  return {
    name: spiceIdentifier(str(d.name, "name"), at("name")),
    description: d.description === undefined ? "" : str(d.description, "description"),
    library,
    includes,
    corners,
    temperature,
    supply: { nominal, max },
    devices: { nmos: device("nmos"), pmos: device("pmos") },
    source,
  };
}

/** The library section of a corner (the default section when `corner` is undefined). */
export function cornerSection(p: ProcessDescription, corner?: string): string {
  if (corner === undefined) return p.library.section;
  const s = p.corners[corner];
  if (s === undefined) throw new InputError(corner, `a corner of ${p.name}: ${Object.keys(p.corners).join(", ")}`, `${p.source}: corners`);
  return s;
}

/** Check a drawn length or width against the process's range. */
export function checkGeometry(p: ProcessDescription, polarity: Polarity, what: "l" | "w", value: number, origin: string): Meters {
  const r = p.devices[polarity][what];
  if (typeof value !== "number" || !Number.isFinite(value) || value < r.min * (1 - 1e-9) || value > r.max * (1 + 1e-9))
    throw new InputError(value, `${what.toUpperCase()} from ${r.min} m to ${r.max} m (${p.devices[polarity].model} in ${p.name}, ${p.source})`, origin);
  return value as Meters;
}

/** Snap a length or width to the drawing grid. */
export const snapToGrid = (p: ProcessDescription, polarity: Polarity, value: number): Meters => {
  const g = p.devices[polarity].grid;
  return (Math.round(value / g) * g) as Meters;
};
