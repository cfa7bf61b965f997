/** Drain-feedback stage: rf from drain to gate (VG = VD at DC), drain resistor rd, optional source resistor rs. */
import { singleTransistorTopology } from "../stage.js";
import { drainSwing, feedbackView } from "../metrics.js";
import type { DrainFeedbackComponents } from "../topology.js";
import { InputError } from "../../errors.js";
import { field } from "./fields.js";

export const drainFeedback = singleTransistorTopology<"drain-feedback", DrainFeedbackComponents>({
  id: "drain-feedback",
  title: "Drain-to-gate feedback bias",
  description: "Feedback resistor rf from drain to gate (no gate current, so VG = VD), drain resistor rd, optional source resistor rs.",
  components: [field.rf, field.rd, field.rsOptional],
  map: (c, stage, rec) => {
    if (!(c.rf > 0)) throw new InputError(c.rf, "a feedback resistance > 0 Ω", `${stage.name ? `stage "${stage.name}"` : "drain-feedback stage"}: components.rf`);
    rec?.note("Gate bias", "No DC current flows in RF, so the gate sits at the drain voltage: VG = VD and VGS = VDS.");
    return { gateToDrain: true, rd: c.rd, rs: c.rs ?? 0 };
  },
  amplifiers: (s, rec) => [feedbackView(s, (s.stage.components as unknown as DrainFeedbackComponents).rf, rec)],
  swing: (s, rec) => [drainSwing(s, rec)],
});
