/**
 * A card set: cards of one device type fitted at several drawn lengths, and
 * the card at any length between them. Each numeric parameter is interpolated
 * linearly in 1/L between the two nearest cards (λ and short-channel threshold
 * shifts go roughly as 1/L, so 1/L is the natural axis; common practice); at a
 * fitted length the card is returned unchanged. Lengths outside the fitted
 * range are refused rather than extrapolated.
 */
import { InputError, requirePositive } from "../errors.js";
import type { Meters } from "../quantity.js";
import { checkCard, type DeviceCard, type Polarity } from "./card.js";

export interface CardSetEntry {
  /** Drawn length the card was fitted at. */
  readonly l: Meters;
  readonly card: DeviceCard;
}

export interface CardSet {
  readonly kind: "card-set";
  readonly name: string;
  readonly polarity: Polarity;
  /** Sorted by length, at least one. */
  readonly entries: readonly CardSetEntry[];
  readonly provenance?: string;
}

const numeric = ["kp", "vt0", "lambda", "gamma", "phi"] as const;

/** Validate a set (sorts a copy of its entries by L); names the bad entry. */
export function checkCardSet(set: CardSet, origin = "card set"): CardSet {
  if (!set || typeof set !== "object" || set.kind !== "card-set" || !Array.isArray(set.entries) || set.entries.length === 0)
    throw new InputError(set, `a card set { kind: "card-set", name, polarity, entries: [{ l, card }, …] } with at least one entry`, origin);
  const entries = [...set.entries].sort((a, b) => a.l - b.l);
  entries.forEach((e, i) => {
    requirePositive(e.l, `${origin}.entries[${i}].l`, "a drawn length L > 0 in m");
    checkCard(e.card, `${origin}.entries[${i}].card`);
    if (e.card.polarity !== set.polarity) throw new InputError(e.card.polarity, `the set's polarity "${set.polarity}"`, `${origin}.entries[${i}].card.polarity`);
    if (i > 0 && Math.abs(e.l - entries[i - 1]!.l) <= 1e-9 * e.l) throw new InputError(e.l, "one card per length", `${origin}.entries[${i}].l`);
  });
  return { ...set, entries };
}

/** The card at drawn length l, interpolated linearly in 1/L between the nearest fitted lengths. */
export function cardAt(set: CardSet, l: Meters, origin = "cardAt"): DeviceCard {
  requirePositive(l, `${origin}: L`, "a drawn length L > 0 in m");
  const e = set.entries;
  const lo = e[0]!.l;
  const hi = e[e.length - 1]!.l;
  const tol = 1e-9 * l;
  if (l < lo - tol || l > hi + tol)
    throw new InputError(l, `a length within the fitted range ${+(lo * 1e6).toPrecision(4)}–${+(hi * 1e6).toPrecision(4)} µm (the set "${set.name}" does not extrapolate)`, `${origin}: L`);
  let k = 0;
  while (k < e.length - 1 && e[k + 1]!.l < l - tol) k++;
  const a = e[k]!;
  if (Math.abs(a.l - l) <= tol || k === e.length - 1) return a.card;
  const b = e[k + 1]!;
  if (Math.abs(b.l - l) <= tol) return b.card;
  const t = (1 / l - 1 / a.l) / (1 / b.l - 1 / a.l);
  const out: Record<string, unknown> = { ...a.card, name: `${set.name} at L = ${+(l * 1e6).toPrecision(4)} µm`, provenance: `interpolated in 1/L between L = ${+(a.l * 1e6).toPrecision(4)} µm and ${+(b.l * 1e6).toPrecision(4)} µm of card set "${set.name}"` };
  for (const f of numeric) {
    const va = a.card[f];
    const vb = b.card[f];
    if (va === undefined && vb === undefined) continue;
    out[f] = (va ?? 0) + t * ((vb ?? 0) - (va ?? 0));
  }
  return out as unknown as DeviceCard;
}
