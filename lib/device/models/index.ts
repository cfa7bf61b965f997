/**
 * The model registry, keyed by the card's `model` field, and the bridge between
 * a card and the parameter vector a fitter perturbs (layout: device/model.ts).
 */
import { InputError } from "../../errors.js";
import { cardTemperature, checkDevice, modelOf, modelOnlyFields, polaritySign, type Device, type DeviceCard, type ModelId } from "../card.js";
import type { DeviceModel } from "../model.js";
import { ekv } from "./ekv.js";
import { squareLawMobility } from "./mobility.js";
import { squareLaw } from "./square-law.js";

export const models: { readonly [M in ModelId]: DeviceModel } = {
  "square-law": squareLaw,
  "square-law-mobility": squareLawMobility,
  ekv,
};

/** The model a card's numbers belong to. */
export const modelFor = (card: DeviceCard): DeviceModel => models[modelOf(card)];

/**
 * A device's parameter vector (device polarity: vt0 multiplied by the polarity
 * sign), written into `out` when given (it must be the model's size), else a new array.
 * Fields the card omits take the model's `absent` value.
 */
export function parameterVector(dev: Device, out?: Float64Array): Float64Array {
  checkDevice(dev, "parameterVector.device");
  const model = modelFor(dev.card);
  const p = out ?? new Float64Array(model.size);
  if (p.length !== model.size) throw new InputError(p.length, `a Float64Array of length ${model.size} for the "${model.id}" model`, "parameterVector.out");
  const c = dev.card as unknown as Record<string, number | undefined>;
  const s = polaritySign(dev.card);
  model.parameters.forEach((q, i) => {
    const v = c[q.name] ?? q.absent;
    p[i] = q.name === "vt0" ? s * v : v;
  });
  p[model.size - 3] = dev.w;
  p[model.size - 2] = dev.l;
  p[model.size - 1] = cardTemperature(dev.card);
  return p;
}

/**
 * The card a parameter vector describes: `base` (name, polarity, provenance,
 * temperature coefficients) with the vector's parameters written in SPICE signs
 * and `model` set. The result is validated; a vector out of range throws InputError.
 */
export function cardFromVector(model: DeviceModel, p: Float64Array, base: DeviceCard): DeviceCard {
  if (p.length !== model.size) throw new InputError(p.length, `a Float64Array of length ${model.size} for the "${model.id}" model`, "cardFromVector.p");
  const s = polaritySign(base);
  const fields: Record<string, unknown> = {};
  const allowed = new Set(model.parameters.map((q) => q.name));
  // Fields of another model are dropped; an "absent" value that is not a number a card can hold (ecrit = ∞: no velocity saturation) is left out.
  for (const [k, v] of Object.entries(base)) if (!(k in modelOnlyFields) || allowed.has(k)) fields[k] = v;
  model.parameters.forEach((q, i) => {
    const v = p[i]!;
    if (v === q.absent && !Number.isFinite(v)) delete fields[q.name];
    else fields[q.name] = q.name === "vt0" ? s * v : v;
  });
  fields.model = model.id;
  const card = fields as unknown as DeviceCard;
  checkDevice({ card, w: p[model.size - 3]! as never, l: p[model.size - 2]! as never }, `cardFromVector("${model.id}")`);
  return card;
}
