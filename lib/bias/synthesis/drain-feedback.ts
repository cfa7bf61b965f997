/**
 * Drain-feedback stage: RF from drain to gate (no DC current, so VD = VG),
 * drain resistor RD, source resistor RS when a source budget is stated. The
 * drain voltage follows from the device: VD = VS + Vt + VOV. RF is stated,
 * set from an input resistance, or 1 MΩ (common practice: large against RD so
 * it barely loads the output). Steps in ./core.ts.
 */
import { InputError, requirePositive } from "../../errors.js";
import { feedbackResistorForRin, sourceResistorForDrop } from "../../formulas/synthesis.formulas.js";
import type { Ohms, Siemens, Volts } from "../../quantity.js";
import type { Derivation } from "../../record/derivation.js";
import type { DrainFeedbackComponents } from "../topology.js";
import { InfeasibleError } from "../../errors.js";
import { checkSpecBase, deviceRails, evaluate, type SpecBase, type SynthesisResult } from "./common.js";
import { checkPlanInputs, design, finish, recordSpec, type CorePlan, type SourceBudget } from "./core.js";

export interface DrainFeedbackSpec extends SpecBase {
  readonly topology: "drain-feedback";
  /** The feedback resistor, or the input resistance RF/(1 − Av) it should give; 1 MΩ when omitted. */
  readonly feedback?: { readonly rf: Ohms } | { readonly rin: Ohms };
  /** Voltage across RS or a fraction of the rail span; no RS when omitted. */
  readonly source?: SourceBudget;
}

const origin = "drain-feedback spec";

export function synthesizeDrainFeedback(spec: DrainFeedbackSpec, rec?: Derivation): SynthesisResult<DrainFeedbackComponents> {
  checkSpecBase(spec, origin);
  if (spec.topology !== "drain-feedback") throw new InputError(spec.topology, `"drain-feedback"`, `${origin}.topology`);
  const withRs = spec.source !== undefined;
  const plan: CorePlan = {
    origin,
    source: withRs ? { kind: "budget", budget: spec.source!, defaultFraction: 0.25, element: "RS" } : { kind: "rail" },
    drain: { kind: "gate" },
    gateBetweenRails: false,
  };
  checkPlanInputs(plan);
  recordSpec(spec, origin, rec);
  const d = design(spec, plan, rec);
  let rf: Ohms;
  const fb = spec.feedback;
  if (fb && "rf" in fb) rf = requirePositive(fb.rf, `${origin}.feedback.rf`, "a feedback resistance > 0 in Ω");
  else if (fb && "rin" in fb) {
    requirePositive(fb.rin, `${origin}.feedback.rin`, "an input resistance > 0 in Ω");
    rf = evaluate(feedbackResistorForRin, [fb.rin, d.gm as Siemens, d.gds as Siemens, d.rd], rec);
    if (!(rf > 0))
      throw new InfeasibleError(`an input resistance of ${fb.rin} Ω is below what any RF gives with RD = ${+d.rd.toPrecision(4)} Ω (RF → 0 gives RD/(1 + (gm + gds)·RD))`, `${origin}.feedback.rin`);
  } else {
    rf = 1e6 as Ohms;
    rec?.assume("RF = 1 MΩ (common practice: large against RD so it barely loads the output).");
  }
  const s = deviceRails(spec.card, spec.supplies).s;
  const ideal: DrainFeedbackComponents = withRs ? { rf, rd: d.rd, rs: evaluate(sourceResistorForDrop, [d.vrs, spec.id], rec) } : { rf, rd: d.rd };
  return finish(
    {
      topology: "drain-feedback",
      spec,
      design: d,
      ideal,
      snapped: withRs ? ["rf", "rd", "rs"] : ["rf", "rd"],
      output: { node: "drain", target: (s * d.vd) as Volts },
    },
    rec,
  );
}
