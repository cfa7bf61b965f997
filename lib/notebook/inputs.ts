/**
 * The design-inputs cell helper. A notebook states its given values once:
 *
 *   const given = designInputs({
 *     VDD: ["5 V", "voltage"],
 *     ID: ["200 uA", "current"],
 *   });
 *
 * Each value is parsed with its declared dimension, so `given.ID` is typed
 * `Amperes` and passing it where a voltage is wanted is a type error in the
 * cell. `pinchoff run --set` edits these value strings (and only these).
 */
import { InputError } from "../errors.js";
import { dimensions, type Dimension, type Quantity } from "../quantity.js";
import type { Derivation, InputEntry } from "../record/derivation.js";
import { parseQuantity } from "../units/parse.js";

/** NAME → [value with unit, dimension]. */
export type DesignInputSpec = { readonly [name: string]: readonly [string, Dimension] };

/** The parsed values, each branded with its declared dimension. */
export type DesignInputs<S extends DesignInputSpec> = { readonly [K in keyof S]: Quantity<S[K][1]> };

const recorded = new WeakMap<object, readonly InputEntry[]>();

/** Where the values come from, as named in errors and derivations. */
export const designInputsOrigin = "design inputs";

export function designInputs<const S extends DesignInputSpec>(spec: S): DesignInputs<S> {
  if (!spec || typeof spec !== "object") throw new InputError(spec, 'an object of NAME: ["<value with unit>", "<dimension>"]', designInputsOrigin);
  const out: Record<string, number> = {};
  const entries: InputEntry[] = [];
  for (const [name, pair] of Object.entries(spec)) {
    const at = `${designInputsOrigin}: ${name}`;
    if (!Array.isArray(pair) || pair.length !== 2 || typeof pair[0] !== "string" || typeof pair[1] !== "string") throw new InputError(pair, '["<value with unit>", "<dimension>"]', at);
    const [text, dim] = pair;
    if (!(dim in dimensions)) throw new InputError(dim, `a dimension, one of ${Object.keys(dimensions).join(", ")}`, at);
    const value = parseQuantity(text, dim, at) as number;
    out[name] = value;
    entries.push({ name, value, dim, origin: designInputsOrigin, text });
  }
  Object.freeze(out);
  recorded.set(out, Object.freeze(entries));
  return out as unknown as DesignInputs<S>;
}

/** The entries behind a `designInputs` result: name, SI value, dimension and the text typed. */
export function inputEntries(given: object): readonly InputEntry[] {
  const e = recorded.get(given);
  if (!e) throw new InputError(given, "the object returned by designInputs(...)", "inputEntries");
  return e;
}

/** Record every design input into a derivation, so its report lists them. */
export function recordInputs(rec: Derivation, given: object): Derivation {
  for (const i of inputEntries(given)) rec.input(i.name, i.value, i.dim, i.origin, i.text);
  return rec;
}
