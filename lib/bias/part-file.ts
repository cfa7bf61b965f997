/**
 * Discrete part cards as JSON (our own schema): values are SI numbers or text
 * with units, read with the dimension each field expects; every error names
 * the field path. The card is validated once here (checkPart).
 *
 *   {
 *     "name": "QN-60 (invented)", "polarity": "nmos",
 *     "threshold": { "vgs": "2.1 V", "id": "250 uA", "vds": "2.1 V" },        vds optional (VDS = VGS)
 *     "forwardTransconductance": { "gfs": "200 mS", "id": "100 mA", "vds": "10 V" },   vds optional
 *     "onResistance": { "rds": "1.8 Ohm", "vgs": "10 V", "id": "250 mA" },  optional: the cross-check
 *     "ratings": { "vds": "60 V", "vgs": "20 V", "id": "300 mA", "pd": "400 mW",
 *                  "pdAt": { "ambient": "25 degC" },                           or { "case": "25 degC" }
 *                  "tjMax": "150 degC", "rthJA": "312 K/W", "rthJC": "83 K/W" },   rthJA, rthJC optional
 *     "provenance": "datasheet rev. C, typical values"                          optional
 *   }
 * Figures are magnitudes; a P-channel datasheet's negative values are read as
 * their magnitudes (the polarity says which way they point).
 */
import { readJsonFile } from "../io/read-json.js";
import { checkPart, type DiscretePart } from "../device/discrete-part.js";
import { InputError } from "../errors.js";
import type { Dimension } from "../quantity.js";
import { parseQuantity } from "../units/parse.js";

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === "object" && v !== null && !Array.isArray(v);

function group(v: unknown, at: string, fields: Record<string, [Dimension, boolean]>, what: string, pmos: boolean): Record<string, number> {
  if (!isObject(v)) throw new InputError(v, what, at, "invalid-design");
  for (const k of Object.keys(v)) if (!(k in fields)) throw new InputError(k, `one of the fields ${Object.keys(fields).join(", ")}`, `${at}.${k}`, "invalid-design");
  const out: Record<string, number> = {};
  for (const [k, [dim, required]] of Object.entries(fields)) {
    const x = v[k];
    if (x === undefined) {
      if (required) throw new InputError(x, `a ${dim} value (${what})`, `${at}.${k}`, "invalid-design");
      continue;
    }
    if (typeof x !== "number" && typeof x !== "string") throw new InputError(x, "a number in SI units or text with a unit", `${at}.${k}`, "invalid-design");
    const q = parseQuantity(x, dim, `${at}.${k}`);
    // P-channel datasheets state VGS, VDS and ID negative; temperatures and resistances are never negative.
    out[k] = pmos && q < 0 && (dim === "voltage" || dim === "current") ? -q : q;
  }
  return out;
}

/** Read a part card (already JSON-parsed) found at `at` (e.g. "design.json: device.part"). */
export function parsePartCard(raw: unknown, at = "part"): DiscretePart {
  if (!isObject(raw)) throw new InputError(raw, "a discrete part card { name, polarity, threshold, forwardTransconductance, onResistance?, ratings }", at, "invalid-design");
  const allowed = ["name", "polarity", "threshold", "forwardTransconductance", "onResistance", "ratings", "capacitances", "provenance"];
  for (const k of Object.keys(raw)) if (!allowed.includes(k)) throw new InputError(k, `one of the fields ${allowed.join(", ")}`, `${at}.${k}`, "invalid-design");
  if (typeof raw.name !== "string" || !raw.name.trim()) throw new InputError(raw.name, "the part's name as text", `${at}.name`, "invalid-design");
  if (raw.polarity !== "nmos" && raw.polarity !== "pmos") throw new InputError(raw.polarity, `"nmos" (N-channel) or "pmos" (P-channel)`, `${at}.polarity`, "invalid-design");
  if (raw.provenance !== undefined && typeof raw.provenance !== "string") throw new InputError(raw.provenance, "text", `${at}.provenance`, "invalid-design");
  const pmos = raw.polarity === "pmos";
  const threshold = group(raw.threshold, `${at}.threshold`, { vgs: ["voltage", true], id: ["current", true], vds: ["voltage", false] }, "VGS(th) at a drain current { vgs, id, vds? }", pmos);
  const fwd = group(raw.forwardTransconductance, `${at}.forwardTransconductance`, { gfs: ["conductance", true], id: ["current", true], vds: ["voltage", false] }, "gfs at a drain current { gfs, id, vds? }", pmos);
  const on = raw.onResistance === undefined ? undefined : group(raw.onResistance, `${at}.onResistance`, { rds: ["resistance", true], vgs: ["voltage", true], id: ["current", true] }, "RDS(on) at a gate drive { rds, vgs, id }", pmos);
  const rr = raw.ratings;
  if (!isObject(rr)) throw new InputError(rr, "the absolute maximum ratings { vds, vgs, id, pd, pdAt, tjMax, rthJA?, rthJC? }", `${at}.ratings`, "invalid-design");
  const { pdAt, ...rest } = rr;
  const ratings = group(rest, `${at}.ratings`, { vds: ["voltage", true], vgs: ["voltage", true], id: ["current", true], pd: ["power", true], tjMax: ["temperature", true], rthJA: ["thermalResistance", false], rthJC: ["thermalResistance", false] }, "the absolute maximum ratings", pmos);
  if (!isObject(pdAt) || Object.keys(pdAt).length !== 1 || !("ambient" in pdAt || "case" in pdAt))
    throw new InputError(pdAt, `where PD is stated: { "ambient": "25 degC" } or { "case": "25 degC" }`, `${at}.ratings.pdAt`, "invalid-design");
  const where = "ambient" in pdAt ? "ambient" : "case";
  const t = group(pdAt, `${at}.ratings.pdAt`, { [where]: ["temperature", true] }, "the temperature PD is stated at", false)[where]!;
  const caps = raw.capacitances === undefined ? undefined : group(raw.capacitances, `${at}.capacitances`, { ciss: ["capacitance", true], crss: ["capacitance", true], coss: ["capacitance", true], vds: ["voltage", true] }, "the datasheet capacitances { ciss, crss, coss, vds }", pmos);
  const part = {
    ...(caps ? { capacitances: caps } : {}),
    name: raw.name,
    polarity: raw.polarity,
    threshold,
    forwardTransconductance: fwd,
    ...(on ? { onResistance: on } : {}),
    ratings: { ...ratings, pdAt: { [where]: t } },
    ...(raw.provenance !== undefined ? { provenance: raw.provenance } : {}),
  } as unknown as DiscretePart;
  return checkPart(part, at);
}

/** Read a part card from a JSON file of its own. */
export function readPartCard(path: string): DiscretePart {
  return parsePartCard(readJsonFile(path, "part card"), path);
}
