import type { StageSpec } from "../../lib/bias/synthesis.js";
import type { DeviceCard } from "../../lib/device/card.js";
import type { SeriesName } from "../../lib/bias/eseries.js";

/**
 * Restate a test's flat literal (card, supplies and targets side by side) in
 * the design file's shape the library takes: the common fields at the top,
 * the card under device, the topology's own fields under specification.
 * Test scaffolding only, so the older cases keep their compact literals.
 */
export function designShape<S extends StageSpec = StageSpec>(flat: object): S {
  const { topology, name, supplies, body, options, limits, card, ...specification } = flat as Record<string, unknown>;
  const top = Object.fromEntries(Object.entries({ name, body, options, limits }).filter(([, v]) => v !== undefined));
  return { topology, ...top, supplies, device: { card }, specification } as unknown as S;
}

/** A test case in the compact flat form, restated by {@link designShape} before the call. */
export interface FlatCase {
  readonly topology: StageSpec["topology"];
  readonly card: DeviceCard;
  readonly series?: "exact" | SeriesName;
  readonly [field: string]: unknown;
}
