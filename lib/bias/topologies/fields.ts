/** Component field descriptions shared by the built-in topologies. */
import type { ComponentField } from "../topology.js";

export const field = {
  vg: { name: "vg", dim: "voltage", required: true, meaning: "gate bias voltage (absolute, from an ideal source)" },
  rd: { name: "rd", dim: "resistance", required: true, meaning: "drain resistor to the drain-side rail" },
  rdOptional: { name: "rd", dim: "resistance", required: false, meaning: "drain resistor to the drain-side rail (0 or omitted: drain at the rail)" },
  rs: { name: "rs", dim: "resistance", required: true, meaning: "source resistor to the source-side rail" },
  rsOptional: { name: "rs", dim: "resistance", required: false, meaning: "source resistor to the source-side rail (0 or omitted: source at the rail)" },
  rg1: { name: "rg1", dim: "resistance", required: true, meaning: "gate divider resistor from gate to vdd" },
  rg2: { name: "rg2", dim: "resistance", required: true, meaning: "gate divider resistor from gate to vss" },
  rf: { name: "rf", dim: "resistance", required: true, meaning: "feedback resistor from drain to gate" },
  iss: { name: "iss", dim: "current", required: true, meaning: "ideal bias current at the source (magnitude)" },
} as const satisfies Record<string, ComponentField>;
