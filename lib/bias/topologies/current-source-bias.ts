/** Current-source-biased stage: gate at vg, source fed by an ideal current source (e.g. a differential-pair tail), drain resistor. */
import { singleTransistorTopology } from "../stage.js";
import { commonGateView, commonSourceViews, drainSwing } from "../metrics.js";
import type { CurrentSourceBiasComponents } from "../topology.js";
import { field } from "./fields.js";

export const currentSourceBias = singleTransistorTopology<"current-source-bias", CurrentSourceBiasComponents>({
  id: "current-source-bias",
  title: "Current-source bias",
  description: "Gate held at vg, source fed by an ideal current source iss (a sink to vss for an NMOS, a source from vdd for a PMOS), drain resistor rd.",
  components: [field.vg, field.iss, field.rd],
  map: (c, _stage, rec) => {
    rec?.note("Bias current", "The ideal current source fixes ID = ISS; the source node moves to whatever VGS the channel needs.");
    return { vg: c.vg, rd: c.rd, rs: 0, iss: c.iss };
  },
  amplifiers: (s, rec) => [...commonSourceViews(s, Infinity, "gate driven directly", rec, true), commonGateView(s, rec)],
  swing: (s, rec) => [drainSwing(s, rec)],
});
