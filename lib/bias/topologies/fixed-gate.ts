/** Fixed-gate stage: gate held at vg by an ideal source, drain resistor, optional source resistor. */
import { singleTransistorTopology } from "../stage.js";
import { commonSourceViews, drainSwing } from "../metrics.js";
import type { FixedGateComponents } from "../topology.js";
import { field } from "./fields.js";

export const fixedGate = singleTransistorTopology<"fixed-gate", FixedGateComponents>({
  id: "fixed-gate",
  title: "Fixed gate voltage",
  description: "Gate held at a fixed voltage vg, drain resistor rd to the drain-side rail, optional source resistor rs to the source-side rail.",
  components: [field.vg, field.rd, field.rsOptional],
  map: (c) => ({ vg: c.vg, rd: c.rd, rs: c.rs ?? 0 }),
  amplifiers: (s, rec) => commonSourceViews(s, Infinity, "gate driven directly (ideal bias source)", rec),
  swing: (s, rec) => [drainSwing(s, rec)],
});
