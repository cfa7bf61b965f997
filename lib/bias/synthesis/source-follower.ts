/**
 * Source follower: gate divider RG1/RG2, source resistor RS as the load, drain
 * at its rail. The output (source) sits at a stated voltage or at mid-swing
 * between the source rail and the triode edge VDR − VOV. Steps in ./core.ts.
 */
import { InputError } from "../../errors.js";
import { sourceResistorForDrop } from "../../formulas/synthesis.formulas.js";
import type { Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import type { SourceFollowerComponents } from "../topology.js";
import { checkSpecBase, deviceRails, evaluate, type SpecBase, type SynthesisResult } from "./common.js";
import { checkPlanInputs, design, designDivider, finish, recordSpec, type CorePlan, type DividerTarget } from "./core.js";

export interface SourceFollowerSpec extends SpecBase {
  readonly topology: "source-follower";
  /** The output (source) node voltage, absolute; mid-swing when omitted. */
  readonly output?: { readonly vs: Volts };
  readonly gate?: DividerTarget;
}

const origin = "source-follower spec";

export function synthesizeSourceFollower(spec: SourceFollowerSpec, rec?: Derivation): SynthesisResult<SourceFollowerComponents> {
  checkSpecBase(spec, origin);
  if (spec.topology !== "source-follower") throw new InputError(spec.topology, `"source-follower"`, `${origin}.topology`);
  const plan: CorePlan = {
    origin,
    source: { kind: "follower", ...(spec.output ? { vs: spec.output.vs } : {}) },
    drain: { kind: "rail" },
    gateBetweenRails: true,
  };
  checkPlanInputs(plan);
  recordSpec(spec, origin, rec);
  const d = design(spec, plan, rec);
  const rs = evaluate(sourceResistorForDrop, [d.vrs, spec.id], rec);
  const { rg1, rg2 } = designDivider(spec, d, spec.gate, origin, rec);
  const s = deviceRails(spec.card, spec.supplies).s;
  return finish(
    { topology: "source-follower", spec, design: d, ideal: { rg1, rg2, rs }, snapped: ["rg1", "rg2", "rs"], output: { node: "source", target: (s * d.vs) as Volts } },
    rec,
  );
}
