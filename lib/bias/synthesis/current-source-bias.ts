/**
 * Current-source-biased stage (e.g. one half of a differential pair): the gate
 * held at VG, an ideal current ISS = ID at the source, drain resistor RD. The
 * source budget is the headroom left across the current source (a quarter of
 * the rail span unless stated). VG and ISS are specifications for the bias
 * circuit, not standard values. Steps in ./core.ts.
 */
import { InputError } from "../../errors.js";
import type { Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import type { CurrentSourceBiasComponents } from "../topology.js";
import { checkSpecBase, deviceRails, type SpecBase, type SynthesisResult } from "./common.js";
import { checkPlanInputs, design, finish, recordSpec, type CorePlan, type DrainTarget, type SourceBudget } from "./core.js";

export interface CurrentSourceBiasSpec extends SpecBase {
  readonly topology: "current-source-bias";
  readonly drain?: DrainTarget;
  /** Headroom across the current source, as a voltage or a fraction of the rail span (0.25 when omitted). */
  readonly source?: SourceBudget;
}

const origin = "current-source-bias spec";

export function synthesizeCurrentSourceBias(spec: CurrentSourceBiasSpec, rec?: Derivation): SynthesisResult<CurrentSourceBiasComponents> {
  checkSpecBase(spec, origin);
  if (spec.topology !== "current-source-bias") throw new InputError(spec.topology, `"current-source-bias"`, `${origin}.topology`);
  const plan: CorePlan = {
    origin,
    source: { kind: "budget", ...(spec.source ? { budget: spec.source } : {}), defaultFraction: 0.25, element: "the current source" },
    drain: { kind: "target", ...(spec.drain ? { target: spec.drain } : {}), gainKind: "common-source", degenerated: false },
    gateBetweenRails: false,
  };
  checkPlanInputs(plan);
  recordSpec(spec, origin, rec);
  const d = design(spec, plan, rec);
  const s = deviceRails(spec.card, spec.supplies).s;
  const ideal: CurrentSourceBiasComponents = { vg: (s * d.vg) as Volts, iss: spec.id, rd: d.rd };
  rec?.note("Bias circuit", `Gate held at ${+ideal.vg.toPrecision(5)} V and a source current of ${+spec.id.toPrecision(5)} A (specifications for the bias circuit, not standard values).`);
  return finish(
    {
      topology: "current-source-bias",
      spec,
      design: d,
      ideal,
      snapped: ["rd"],
      output: { node: "drain", target: (s * d.vd) as Volts },
      ...(spec.drain && "gain" in spec.drain ? { gain: { target: spec.drain.gain, kind: "common-source" as const } } : {}),
    },
    rec,
  );
}
