/** Four-resistor stage: gate divider rg1/rg2, drain resistor rd, source resistor rs. */
import { singleTransistorTopology } from "../stage.js";
import { commonSourceViews, drainSwing } from "../metrics.js";
import type { FourResistorComponents } from "../topology.js";
import { dividerBias } from "./divider.js";
import { field } from "./fields.js";

export const fourResistor = singleTransistorTopology<"four-resistor", FourResistorComponents>({
  id: "four-resistor",
  title: "Four-resistor bias",
  description: "Gate divider rg1 (to vdd) / rg2 (to vss), drain resistor rd, source resistor rs; a common-source amplifier.",
  components: [field.rg1, field.rg2, field.rd, field.rs],
  map: (c, stage, rec) => {
    const { vgg } = dividerBias(c.rg1, c.rg2, stage, rec);
    return { vg: vgg, rd: c.rd, rs: c.rs, divider: { rg1: c.rg1, rg2: c.rg2 } };
  },
  amplifiers: (s, rec) => {
    const c = s.stage.components as unknown as FourResistorComponents;
    return commonSourceViews(s, (c.rg1 * c.rg2) / (c.rg1 + c.rg2), "input resistance RG1 ∥ RG2", rec);
  },
  swing: (s, rec) => [drainSwing(s, rec)],
});
