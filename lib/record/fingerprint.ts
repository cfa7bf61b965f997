/**
 * Input fingerprint: SHA-256 over a canonical JSON of a derivation's inputs, so
 * a reviewer holding two reports can tell at a glance whether the same inputs
 * produced them. Canonical means: object keys sorted, inputs sorted by name,
 * numbers written as ECMAScript's shortest round-trip decimal (Number#toString),
 * only name, dimension and value counted (where a value came from, or how it was
 * typed, does not change the calculation).
 */
import { nodeCrypto } from "../io/lazy-builtins.js";
import { InputError } from "../errors.js";
import type { DerivationData, InputEntry } from "./derivation.js";

/** Version of the canonical form, hashed in, so a change of rules changes every fingerprint. */
export const fingerprintScheme = "pinchoff-inputs/1";

/** Hex digits shown in renderings; 12 hex digits = 48 bits, ample to tell designs apart. */
export const shortLength = 12;

/** Canonical JSON: sorted keys, shortest round-trip numbers, ±Infinity as strings, NaN refused. */
export function canonicalJson(value: unknown, origin = "value"): string {
  if (value === null) return "null";
  switch (typeof value) {
    case "number":
      if (Number.isNaN(value)) throw new InputError(value, "a number (NaN has no canonical form)", origin);
      if (!Number.isFinite(value)) return JSON.stringify(value > 0 ? "Infinity" : "-Infinity");
      return Object.is(value, -0) ? "0" : String(value);
    case "string":
    case "boolean":
      return JSON.stringify(value);
    case "object": {
      if (Array.isArray(value)) return `[${value.map((v, i) => canonicalJson(v, `${origin}[${i}]`)).join(",")}]`;
      const keys = Object.keys(value as object)
        .filter((k) => (value as Record<string, unknown>)[k] !== undefined)
        .sort();
      return `{${keys.map((k) => `${JSON.stringify(k)}:${canonicalJson((value as Record<string, unknown>)[k], `${origin}.${k}`)}`).join(",")}}`;
    }
    default:
      throw new InputError(value, "JSON data (number, string, boolean, array, object)", origin);
  }
}

const inputKey = (inputs: readonly InputEntry[]) =>
  [...inputs].map(({ name, dim, value }) => ({ name, dim, value })).sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));

/** The canonical text that is hashed, exported so a reviewer can reproduce the hash by hand. */
export function fingerprintText(data: Pick<DerivationData, "inputs" | "title"> | ReadonlyArray<Pick<DerivationData, "inputs" | "title">>): string {
  const body = Array.isArray(data)
    ? (data as ReadonlyArray<Pick<DerivationData, "inputs" | "title">>).map((d) => ({ title: d.title, inputs: inputKey(d.inputs ?? []) }))
    : inputKey((data as Pick<DerivationData, "inputs">).inputs ?? []);
  return `${fingerprintScheme}\n${canonicalJson(body, "inputs")}`;
}

/** Full SHA-256 hex digest of the inputs of one derivation, or of a whole design (a list, in order). */
export function fingerprint(data: Pick<DerivationData, "inputs" | "title"> | ReadonlyArray<Pick<DerivationData, "inputs" | "title">>): string {
  return nodeCrypto().createHash("sha256").update(fingerprintText(data), "utf8").digest("hex");
}

/** The short form shown in renderings. */
export const shortFingerprint = (hex: string): string => hex.slice(0, shortLength);
