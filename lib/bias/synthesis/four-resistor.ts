/**
 * Four-resistor stage (gate divider RG1/RG2, drain resistor RD, source
 * resistor RS), NMOS or PMOS: a quarter of the rail span across RS unless
 * stated, the gate from the divider, the drain at a stated voltage, at
 * mid-swing or set by a gain. Steps in ./core.ts.
 */
import { InputError } from "../../errors.js";
import { sourceResistorForDrop } from "../../formulas/synthesis.formulas.js";
import type { Derivation } from "../../record/derivation.js";
import type { Volts } from "../../quantity.js";
import type { FourResistorComponents } from "../topology.js";
import { checkSpecBase, deviceRails, evaluate, type SpecBase, type SynthesisResult } from "./common.js";
import { checkPlanInputs, design, designDivider, finish, recordSpec, type CorePlan, type DividerTarget, type DrainTarget, type SourceBudget } from "./core.js";

export interface FourResistorSpec extends SpecBase {
  readonly topology: "four-resistor";
  /** An absolute drain voltage, or a gain magnitude (inverting); mid-swing between the triode edge and the drain rail when omitted. */
  readonly drain?: DrainTarget;
  /** Whether RS is bypassed for signal (which gain a gain target means); true when omitted. */
  readonly bypassed?: boolean;
  /** Divider current, its ratio to ID (0.1 when omitted), or the input resistance RG1 ∥ RG2. */
  readonly gate?: DividerTarget;
  /** Voltage across RS, or a fraction of the rail span (0.25 when omitted). */
  readonly source?: SourceBudget;
}

export type FourResistorResult = SynthesisResult<FourResistorComponents>;

const origin = "four-resistor spec";

/** Design a four-resistor stage, choose standard values, re-solve and report the deviation. */
export function synthesizeFourResistor(spec: FourResistorSpec, rec?: Derivation): FourResistorResult {
  checkSpecBase(spec, origin);
  if (spec.topology !== "four-resistor") throw new InputError(spec.topology, `"four-resistor"`, `${origin}.topology`);
  const bypassed = spec.bypassed ?? true;
  const plan: CorePlan = {
    origin,
    source: { kind: "budget", ...(spec.source ? { budget: spec.source } : {}), defaultFraction: 0.25, element: "RS" },
    drain: { kind: "target", ...(spec.drain ? { target: spec.drain } : {}), gainKind: bypassed ? "common-source" : "common-source-degenerated", degenerated: !bypassed },
    gateBetweenRails: true,
  };
  checkPlanInputs(plan);
  recordSpec(spec, origin, rec);
  const d = design(spec, plan, rec);
  const rs = evaluate(sourceResistorForDrop, [d.vrs, spec.id], rec);
  const { rg1, rg2 } = designDivider(spec, d, spec.gate, origin, rec);
  const ideal: FourResistorComponents = { rg1, rg2, rd: d.rd, rs };
  return finish(
    {
      topology: "four-resistor",
      spec,
      design: d,
      ideal,
      snapped: ["rg1", "rg2", "rd", "rs"],
      output: { node: "drain", target: (deviceRails(spec.card, spec.supplies).s * d.vd) as Volts },
      ...(spec.drain && "gain" in spec.drain ? { gain: { target: spec.drain.gain, kind: bypassed ? "common-source" : "common-source-degenerated" } } : {}),
    },
    rec,
  );
}
