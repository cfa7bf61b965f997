/** Source follower: divider gate bias, source resistor as the load, drain at its rail or via rd. */
import { singleTransistorTopology } from "../stage.js";
import { followerView, sourceSwing } from "../metrics.js";
import type { SourceFollowerComponents } from "../topology.js";
import { dividerBias } from "./divider.js";
import { field } from "./fields.js";
import { InputError } from "../../errors.js";

export const sourceFollower = singleTransistorTopology<"source-follower", SourceFollowerComponents>({
  id: "source-follower",
  title: "Source follower",
  description: "Gate divider rg1 (to vdd) / rg2 (to vss), source resistor rs as the load, drain to its rail directly or through rd.",
  components: [field.rg1, field.rg2, field.rs, field.rdOptional],
  map: (c, stage, rec) => {
    if (!(c.rs > 0)) throw new InputError(c.rs, "a source (load) resistance > 0 Ω", `${stage.name ? `stage "${stage.name}"` : "source-follower stage"}: components.rs`);
    const { vgg } = dividerBias(c.rg1, c.rg2, stage, rec);
    return { vg: vgg, rd: c.rd ?? 0, rs: c.rs, divider: { rg1: c.rg1, rg2: c.rg2 } };
  },
  amplifiers: (s, rec) => {
    const c = s.stage.components as unknown as SourceFollowerComponents;
    return [followerView(s, (c.rg1 * c.rg2) / (c.rg1 + c.rg2), "input resistance RG1 ∥ RG2", rec)];
  },
  swing: (s, rec) => [sourceSwing(s, rec)],
});
