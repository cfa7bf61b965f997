/**
 * The `specification` section of a design file, as data: for each topology
 * with a designer, every field of its specification with the dimension it is
 * parsed in, the range it must lie in, whether it is required, and what is
 * assumed when it is left out. The design-file reader validates against this
 * table, its error messages quote it, and `specificationRows` renders it as
 * the schema documentation, so the three cannot drift apart.
 *
 * Left out here on purpose, because the design file states them once for both
 * analysis and design: the card (`device.card`), `supplies`, `body`,
 * `options`, `limits` and `name`.
 */
import { describeDimension, type Dimension } from "../quantity.js";
import { maxCandidates, seriesNames } from "./eseries.js";
import type { SpecificationOf, StageSpec } from "./synthesis.js";

/** The range a number must lie in, checked after parsing. */
export type SpecRange = "positive" | "finite" | "fraction" | "derating";

interface FieldBase {
  readonly meaning: string;
  readonly required?: true;
  /** What the designer assumes when the field is left out. */
  readonly fallback?: string;
}

export type SpecField =
  | (FieldBase & { readonly kind: "quantity"; readonly dim: Dimension; readonly range: SpecRange })
  | (FieldBase & { readonly kind: "integer"; readonly min: number; readonly max?: number })
  | (FieldBase & { readonly kind: "boolean" })
  | (FieldBase & { readonly kind: "choice"; readonly values: readonly string[] })
  /** An object; with `oneOf`, exactly one of those keys must be given. */
  | (FieldBase & { readonly kind: "group"; readonly fields: Readonly<Record<string, SpecField>>; readonly oneOf?: readonly string[] })
  /** An object keyed by component name, each entry of the one shape. */
  | (FieldBase & { readonly kind: "byName"; readonly entry: SpecField })
  /** A device card, read exactly as `device.card` is. */
  | (FieldBase & { readonly kind: "card" });

export const rangeText: Readonly<Record<SpecRange, string>> = {
  positive: "> 0",
  finite: "any finite value",
  fraction: "0 < f < 1",
  derating: "0 < f ≤ 1",
};

/** Whether a parsed number lies in its range. */
export function inRange(x: number, range: SpecRange): boolean {
  switch (range) {
    case "positive":
      return Number.isFinite(x) && x > 0;
    case "finite":
      return Number.isFinite(x);
    case "fraction":
      return x > 0 && x < 1;
    case "derating":
      return x > 0 && x <= 1;
  }
}

const q = (dim: Dimension, range: SpecRange, meaning: string, extra: Omit<FieldBase, "meaning"> = {}): SpecField => ({ kind: "quantity", dim, range, meaning, ...extra });

const rating: SpecField = {
  kind: "group",
  meaning: "a part's power rating",
  fields: {
    rating: q("power", "positive", "rated power at the intended ambient", { required: true }),
    derating: q("dimensionless", "derating", "fraction of the rating the design may use", { fallback: "1" }),
  },
};

const base = {
  id: q("current", "positive", "target drain current magnitude (the output current for a mirror)", { required: true }),
  sizing: {
    kind: "group",
    meaning: "the transistor's size: the overdrive with L (W follows from ID), or the drawn W with L (VOV follows)",
    required: true,
    oneOf: ["vov", "w"],
    fields: {
      vov: q("voltage", "positive", "overdrive VGS − Vt magnitude"),
      w: q("length", "positive", "drawn channel width W"),
      l: q("length", "positive", "drawn channel length L", { required: true }),
    },
  },
  series: {
    kind: "choice",
    values: [...seriesNames, "exact"],
    meaning: 'IEC 60063 series the resistors are chosen from; "exact" keeps the ideal values',
    fallback: "E24",
  },
  candidates: {
    kind: "integer",
    min: 1,
    max: maxCandidates,
    meaning: `standard values tried per resistor, nearest first; at most ${maxCandidates} because the combinations tried grow as candidates^resistors (${maxCandidates}⁴ = ${maxCandidates ** 4} for four resistors)`,
    fallback: "2 (the neighbours either side)",
  },
  dissipation: {
    kind: "group",
    meaning: "power limits the chosen design is checked against",
    fallback: "no power check",
    fields: {
      resistor: { ...rating, meaning: "rating for every resistor without its own entry" },
      resistors: { kind: "byName", entry: rating, meaning: "ratings by component name (e.g. rd), overriding resistor" },
      transistor: { ...rating, meaning: "the transistor's allowed dissipation (datasheet PD at the intended ambient)" },
    },
  },
} as const satisfies Record<string, SpecField>;

const drain = (fallback: string): SpecField => ({
  kind: "group",
  meaning: "where the drain goes: an absolute node voltage, or a gain magnitude (inverting)",
  oneOf: ["vd", "gain"],
  fallback,
  fields: {
    vd: q("voltage", "finite", "drain node voltage, absolute"),
    gain: q("dimensionless", "positive", "gain magnitude |vout/vin|"),
  },
});
const sourceBudget = (meaning: string, fallback: string): SpecField => ({
  kind: "group",
  meaning,
  oneOf: ["vrs", "fraction"],
  fallback,
  fields: {
    vrs: q("voltage", "positive", "voltage across the source element"),
    fraction: q("dimensionless", "fraction", "that voltage as a fraction of the rail span VDD − VSS"),
  },
});
const gate: SpecField = {
  kind: "group",
  meaning: "the gate divider: its current, that current as a ratio to ID, or its input resistance RG1 ∥ RG2",
  oneOf: ["current", "ratio", "rin"],
  fallback: "ratio 0.1",
  fields: {
    current: q("current", "positive", "divider current"),
    ratio: q("dimensionless", "positive", "divider current / ID"),
    rin: q("resistance", "positive", "input resistance RG1 ∥ RG2"),
  },
};
const bypassed: SpecField = { kind: "boolean", meaning: "whether RS is bypassed for signal (which gain a gain target means)", fallback: "true" };
const midSwing = "mid-swing between the triode edge and the drain rail";
const margin = q("voltage", "positive", "saturation margin kept at each device's limit", { fallback: "0.1 V (common practice)" });
/** A load transistor the designer sizes: its card and length. */
const loadDevice = (meaning: string, card: string, l: string): SpecField => ({
  kind: "group",
  meaning,
  required: true,
  fields: { card: { kind: "card", meaning: card, required: true }, l: q("length", "positive", l, { required: true }) },
});
const commonMode: SpecField = {
  kind: "group",
  meaning: "the input common-mode range the pair must cover (absolute); the stage is designed and solved at its middle",
  required: true,
  fields: { min: q("voltage", "finite", "lowest input common mode", { required: true }), max: q("voltage", "finite", "highest input common mode", { required: true }) },
};
const cascode: SpecField = {
  kind: "group",
  meaning: "the cascode device(s): length, and overdrive",
  required: true,
  fallback: "overdrive: the lower device's",
  fields: { l: q("length", "positive", "cascode channel length L", { required: true }), vov: q("voltage", "positive", "cascode overdrive VGS − Vt") },
};

/** Each topology's specification fields; the type makes every field of its Spec type appear, and nothing else. */
export const specFields = {
  "four-resistor": {
    ...base,
    drain: drain(midSwing),
    bypassed,
    gate,
    source: sourceBudget("voltage budget across RS", "fraction 0.25"),
  },
  "fixed-gate": {
    ...base,
    drain: drain(midSwing),
    bypassed: { ...bypassed, meaning: "whether RS (when present) is bypassed for signal" },
    source: sourceBudget("voltage budget across RS", "no RS: the source at its rail"),
  },
  "drain-feedback": {
    ...base,
    feedback: {
      kind: "group",
      meaning: "the feedback resistor RF, or the input resistance RF/(1 − Av) it should give",
      oneOf: ["rf", "rin"],
      fallback: "rf 1 MΩ",
      fields: { rf: q("resistance", "positive", "feedback resistor RF"), rin: q("resistance", "positive", "input resistance") },
    },
    source: sourceBudget("voltage budget across RS", "no RS: the source at its rail"),
  },
  "source-follower": {
    ...base,
    output: {
      kind: "group",
      meaning: "the output (source) node",
      fallback: "mid-swing between the source rail and the triode edge",
      fields: { vs: q("voltage", "finite", "source node voltage, absolute", { required: true }) },
    },
    gate,
  },
  "current-source-bias": {
    ...base,
    drain: drain(midSwing),
    source: sourceBudget("headroom across the current source", "fraction 0.25"),
  },
  "current-mirror": {
    ...base,
    ratio: q("dimensionless", "positive", "mirror ratio N = (W/L)out/(W/L)ref; id and sizing are the output transistor's", { fallback: "1" }),
    output: {
      kind: "group",
      meaning: "the output node",
      fallback: "halfway between compliance and the drain rail",
      fields: { vout: q("voltage", "finite", "output voltage, absolute", { required: true }) },
    },
    load: { kind: "choice", values: ["resistor", "source"], meaning: "what holds the output: a designed load resistor to the drain rail, or an ideal source at VOUT", fallback: "resistor" },
  },
  "diode-load": {
    ...base,
    load: loadDevice("the diode-connected load transistor; its W is designed", "the load's device card (same or complementary type), read like device.card", "the load's drawn channel length L"),
    output: {
      kind: "group",
      meaning: "an absolute output voltage, or a gain magnitude",
      oneOf: ["vout", "gain"],
      fallback: "halfway between the driver's triode edge and the load's conduction edge",
      fields: { vout: q("voltage", "finite", "output voltage, absolute"), gain: q("dimensionless", "positive", "gain magnitude |vout/vin|") },
    },
  },
  "diff-pair": {
    id: { ...base.id, meaning: "tail current (both sides together)" },
    sizing: { ...base.sizing, meaning: "the input pair M1/M2: the overdrive with L (W follows from half the tail current), or the drawn W with L" },
    series: base.series,
    candidates: base.candidates,
    commonMode,
    drain: { ...drain("mid-swing between the input pair's triode edge at the highest common mode and the drain rail"), meaning: "the drain nodes (output common mode, absolute), or the differential gain magnitude" },
    tail: {
      kind: "group",
      meaning: "a tail transistor (same card) with this length, its overdrive what the lowest common mode leaves",
      fallback: "an ideal tail current",
      fields: { l: q("length", "positive", "tail channel length L", { required: true }) },
    },
    margin,
  },
  "diff-pair-mirror-load": {
    id: { ...base.id, meaning: "tail current (both sides together)" },
    gain: q("dimensionless", "positive", "differential gain magnitude (sets the input pair's overdrive through λ of both cards)", { required: true }),
    commonMode,
    l: q("length", "positive", "channel length of the input pair and the tail (λ on the card belongs to it)", { required: true }),
    load: loadDevice("the current-mirror load M3/M4 (the other polarity); its W is designed", "the load's device card, read like device.card", "the load's channel length L"),
    output: {
      kind: "group",
      meaning: "the highest output the load must allow (absolute; lowest for a PMOS input)",
      fallback: "what the highest common mode leaves",
      fields: { max: q("voltage", "finite", "highest output voltage, absolute", { required: true }) },
    },
    margin,
  },
  "cascode-stage": {
    id: base.id,
    sizing: { ...base.sizing, meaning: "the input device M1: the overdrive with L, or the drawn W with L" },
    series: base.series,
    candidates: base.candidates,
    cascode,
    drain: drain("mid-swing between the lowest output and the drain rail"),
    outputResistance: q("resistance", "positive", "least output resistance looking into the cascode", { fallback: "not checked" }),
    margin,
  },
  "cascode-mirror": {
    id: { ...base.id, meaning: "output current (the reference current, 1:1)" },
    sizing: { ...base.sizing, meaning: "the lower devices M1/M2: the overdrive with L, or the drawn W with L" },
    cascode: { ...cascode, fallback: "overdrive: what the compliance target leaves (at most VOV1), else VOV1" },
    output: {
      kind: "group",
      meaning: "the output node",
      fallback: "halfway between compliance plus margin and the drain rail",
      fields: { vout: q("voltage", "finite", "output voltage, absolute", { required: true }) },
    },
    compliance: q("voltage", "finite", "the output voltage (absolute) down to which (NMOS; up to which, PMOS) the mirror must hold its current", { fallback: "VSR + VOV1 + margin + VOV3, as designed" }),
    margin,
  },
} as const satisfies { [T in StageSpec["topology"]]: Record<keyof SpecificationOf<T>, SpecField> };

export type SpecTopology = keyof typeof specFields;

/** What a field accepts, in words: "a current in A, > 0", `"E24" or …`. */
export function acceptsText(f: SpecField): string {
  switch (f.kind) {
    case "quantity":
      return `${describeDimension(f.dim)}, ${rangeText[f.range]}`;
    case "integer":
      return f.max === undefined ? `a whole number ≥ ${f.min}` : `a whole number from ${f.min} to ${f.max}`;
    case "boolean":
      return "true or false";
    case "choice":
      return `one of ${f.values.map((v) => JSON.stringify(v)).join(", ")}`;
    case "group":
      return f.oneOf ? `an object with exactly one of ${f.oneOf.join(", ")}` : `an object { ${Object.keys(f.fields).join(", ")} }`;
    case "byName":
      return "an object keyed by component name";
    case "card":
      return "a device card { name, polarity, kp, vt0, … }";
  }
}

export interface SpecRow {
  /** Field path under `specification`, e.g. "sizing.vov" or "dissipation.resistors.<name>.rating". */
  readonly path: string;
  readonly accepts: string;
  /** "yes", "no", or "one of …" for a member of a oneOf group. */
  readonly required: string;
  readonly fallback: string;
  readonly meaning: string;
}

/** The schema of one topology's specification, flattened to documentation rows. */
export function specificationRows(topology: SpecTopology): SpecRow[] {
  const rows: SpecRow[] = [];
  // `parent` is the nearest optional group above: its members are required only when it is given.
  const walk = (fields: Readonly<Record<string, SpecField>>, prefix: string, oneOf: readonly string[] | undefined, parent: string | undefined) => {
    for (const [name, f] of Object.entries(fields)) {
      const path = prefix + name;
      const when = parent ? ` (when ${parent} is given)` : "";
      const required = oneOf?.includes(name) ? `one of ${oneOf.join("/")}${when}` : f.required ? `yes${when}` : "no";
      rows.push({ path, accepts: acceptsText(f), required, fallback: f.fallback ?? "", meaning: f.meaning });
      const next = f.required ? parent : path;
      if (f.kind === "group") walk(f.fields, `${path}.`, f.oneOf, next);
      if (f.kind === "byName" && f.entry.kind === "group") walk(f.entry.fields, `${path}.<name>.`, f.entry.oneOf, `${path}.<name>`);
    }
  };
  walk(specFields[topology], "", undefined, undefined);
  return rows;
}

const cell = (s: string) => s.replace(/\|/g, "\\|");

/** Markdown tables of the specification schema: the shared fields once, then each topology's own. */
export function specificationMarkdown(): string {
  const header = "| field | accepts | required | when omitted | meaning |\n|---|---|---|---|---|";
  const line = (r: SpecRow) => `| \`${r.path}\` | ${cell(r.accepts)} | ${r.required} | ${cell(r.fallback)} | ${cell(r.meaning)} |`;
  const shared = new Set(Object.keys(base));
  const topologies = Object.keys(specFields) as SpecTopology[];
  const sharedRows = specificationRows(topologies[0]!).filter((r) => shared.has(r.path.split(".")[0]!));
  const parts = [`Every topology (unless its section says otherwise):\n\n${header}\n${sharedRows.map(line).join("\n")}`];
  for (const t of topologies) {
    const own = specificationRows(t).filter((r) => !shared.has(r.path.split(".")[0]!));
    const absent = [...shared].filter((k) => !(k in specFields[t]));
    const redefined = [...shared].filter((k) => k in specFields[t] && (specFields[t] as Record<string, SpecField>)[k]!.meaning !== (base as Record<string, SpecField>)[k]!.meaning);
    const notes = [
      ...(redefined.length ? [`Here ${redefined.map((k) => `\`${k}\` is ${(specFields[t] as Record<string, SpecField>)[k]!.meaning}`).join("; ")}.`] : []),
      ...(absent.length ? [`Not taken: ${absent.map((k) => `\`${k}\``).join(", ")}.`] : []),
    ];
    parts.push(`\`${t}\`:${notes.length ? ` ${notes.join(" ")}` : ""}\n\n${header}\n${own.map(line).join("\n")}`);
  }
  return parts.join("\n\n");
}
