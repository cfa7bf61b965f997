/**
 * Fixed-gate stage: the gate held at VG by a bias source, drain resistor RD,
 * source resistor RS when a source budget is stated (else the source sits at
 * its rail). The designed VG is a specification for the bias source, not a
 * standard value. Steps in ./core.ts.
 */
import { InputError } from "../../errors.js";
import { sourceResistorForDrop } from "../../formulas/synthesis.formulas.js";
import type { Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import type { FixedGateComponents } from "../topology.js";
import { checkSpecBase, deviceRails, evaluate, type SpecBase, type SynthesisResult } from "./common.js";
import { checkPlanInputs, design, finish, recordSpec, type CorePlan, type DrainTarget, type SourceBudget } from "./core.js";

export interface FixedGateSpec extends SpecBase {
  readonly topology: "fixed-gate";
  readonly drain?: DrainTarget;
  /** Whether RS (when present) is bypassed for signal; true when omitted. */
  readonly bypassed?: boolean;
  /** Voltage across RS or a fraction of the rail span; no RS when omitted. */
  readonly source?: SourceBudget;
}

const origin = "fixed-gate spec";

export function synthesizeFixedGate(spec: FixedGateSpec, rec?: Derivation): SynthesisResult<FixedGateComponents> {
  checkSpecBase(spec, origin);
  if (spec.topology !== "fixed-gate") throw new InputError(spec.topology, `"fixed-gate"`, `${origin}.topology`);
  const withRs = spec.source !== undefined;
  const bypassed = spec.bypassed ?? true;
  const degenerated = withRs && !bypassed;
  const plan: CorePlan = {
    origin,
    source: withRs ? { kind: "budget", budget: spec.source!, defaultFraction: 0.25, element: "RS" } : { kind: "rail" },
    drain: { kind: "target", ...(spec.drain ? { target: spec.drain } : {}), gainKind: degenerated ? "common-source-degenerated" : "common-source", degenerated },
    gateBetweenRails: false,
  };
  checkPlanInputs(plan);
  recordSpec(spec, origin, rec);
  const d = design(spec, plan, rec);
  const s = deviceRails(spec.card, spec.supplies).s;
  const vg = (s * d.vg) as Volts;
  rec?.note("Gate bias source", `The gate is to be held at ${+vg.toPrecision(5)} V by the bias source (not a standard value).`);
  const ideal: FixedGateComponents = withRs ? { vg, rd: d.rd, rs: evaluate(sourceResistorForDrop, [d.vrs, spec.id], rec) } : { vg, rd: d.rd };
  return finish(
    {
      topology: "fixed-gate",
      spec,
      design: d,
      ideal,
      snapped: withRs ? ["rd", "rs"] : ["rd"],
      output: { node: "drain", target: (s * d.vd) as Volts },
      ...(spec.drain && "gain" in spec.drain ? { gain: { target: spec.drain.gain, kind: degenerated ? "common-source-degenerated" : "common-source" } } : {}),
    },
    rec,
  );
}
