/**
 * The cautions every report and rendering carries, in one place: the report lists
 * them, each rendered derivation closes with them joined.
 */
export const cautionList = [
  "Hand analysis with the long-channel square law is approximate: short-channel effects, mobility degradation, subthreshold conduction and self-heating are not captured.",
  "Verify the design by simulation with the foundry or manufacturer model, and by measurement on the built circuit.",
  "Respect the device ratings (voltages, currents, power, temperature) in the manufacturer's datasheet, with margin.",
  "Defer to local codes, standards and licensed engineering practice where they apply; this is not a substitute for a qualified review.",
] as const;

/** The cautions as one paragraph. */
export const cautions = cautionList.join(" ");
