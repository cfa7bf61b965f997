/**
 * What `pinchoff op` prints at a terminal: the chosen values with units, the
 * operating point, region and margins, every check marked pass or FAIL with
 * its margin, the spread and yields over tolerances, the findings and the
 * caution. Plain text, one fact per line, for reading rather than parsing
 * (`--json` is for programs).
 */
import type { ToleranceChecks } from "../bias/check-yield.js";
import type { SynthesisResult } from "../bias/synthesis/common.js";
import { topologyFor, type Stage, type StageAnalysis, type StageCheck, type StageDevice } from "../bias/topology.js";
import { partModel } from "../device/discrete-part.js";
import { dimensions, type Dimension } from "../quantity.js";
import { cautions } from "../record/cautions.js";
import { formatQuantity } from "../units/format.js";

/** Everything one `pinchoff op` found, for either output form. */
export interface OpOutcome {
  readonly file: string;
  readonly record?: string;
  /** The stage analysed: as given, or as designed with the chosen values. */
  readonly stage: Stage;
  readonly analysis: StageAnalysis;
  readonly design?: SynthesisResult;
  readonly tolerance?: ToleranceChecks;
  /** Further checks beside the stage's own (a discrete part's ratings). */
  readonly extraChecks?: readonly StageCheck[];
  /** One line per failed check; empty when every check passed. */
  readonly failures: readonly string[];
}

const dimOfUnit = (unit: string): Dimension | undefined => (Object.keys(dimensions) as Dimension[]).find((d) => dimensions[d].unit === unit && d !== "fraction" && d !== "count");

/** A checked value with enough digits that value, bound and margin never contradict each other; a difference (a margin) gets no °C. */
export function formatChecked(value: number, unit: string, digits = 4, difference = false): string {
  const dim = dimOfUnit(unit);
  if (!Number.isFinite(value)) return `${value > 0 ? "∞" : "−∞"}${unit ? ` ${unit}` : ""}`;
  return dim ? formatQuantity(value, dim, { digits, celsius: !difference }) : `${+value.toPrecision(digits)}${unit ? ` ${unit}` : ""}`;
}

/** One check as a line: verdict, name, value, bound, margin. */
export function checkLine(c: StageCheck): string {
  const bound = [c.min !== undefined ? `≥ ${formatChecked(c.min, c.unit)}` : "", c.max !== undefined ? `≤ ${formatChecked(c.max, c.unit)}` : ""].filter(Boolean).join(", ");
  return `${c.passed ? "pass" : "FAIL"}  ${c.name}: ${formatChecked(c.value, c.unit)}${bound ? ` (needs ${bound}; margin ${formatChecked(c.margin, c.unit, 4, true)})` : ""}`;
}

/** A component's dimension, from its topology's field list (the one that validates it). */
const componentDim = (name: string, stage: Stage): Dimension => topologyFor(stage.topology).components.find((f) => f.name === name)?.dim ?? "dimensionless";

export function opText(o: OpOutcome): string {
  const a = o.analysis;
  const q = (v: number, d: Dimension) => formatQuantity(v, d, { digits: 4 });
  const out: string[] = [];
  const title = `${o.stage.name ?? o.stage.topology} (${o.stage.topology}, ${a.polarity.toUpperCase()})`;
  out.push(`${o.design ? "Designed" : "Operating point of"} ${title}`, `design file: ${o.file}${o.record ? `; record: ${o.record}` : ""}`, "");
  out.push(o.design ? `Chosen values${o.design.snap ? ` (${o.design.snap.series})` : ""}` : "Values");
  for (const [n, v] of Object.entries(o.stage.components)) out.push(`  ${n.toUpperCase().padEnd(6)} ${q(v, componentDim(n, o.stage))}`);
  const device = (label: string, d: StageDevice) =>
    d.part
      ? `  ${label} ${d.part.part.name}: discrete part, model k = ${q(d.card.kp, "transconductanceParameter")}, Vt = ${q(Math.abs(d.card.vt0), "voltage")} from its datasheet; ambient ${formatQuantity(d.part.ambient, "temperature", { celsius: true })}${d.part.rthCA !== undefined ? `, heat sink RθCA ${q(d.part.rthCA, "thermalResistance")}` : ""}`
      : `  ${label} ${d.card.name ?? "card"}: W ${q(d.w, "length")}, L ${q(d.l, "length")}`;
  out.push(device("device", o.stage.device));
  for (const [role, d] of Object.entries(o.stage.devices ?? {})) out.push(device(role, d));
  out.push(`  supplies: VDD ${q(o.stage.supplies.vdd, "voltage")}${o.stage.supplies.vss ? `, VSS ${q(o.stage.supplies.vss, "voltage")}` : ""}`, "");
  out.push(`Operating point: ${a.region}`);
  if (a.currents.drainMagnitude === undefined) {
    // A netlist topology (pairs, cascodes): its own node names, then every transistor.
    out.push(`  nodes: ${Object.entries(a.nodes).map(([n, v]) => `${n} ${q(v, "voltage")}`).join("   ")}`);
    const row = (name: string, op: StageAnalysis["op"]) => `  ${name.padEnd(3)} ${op.region.padEnd(10)} ID ${q(Math.abs(op.channelCurrent), "current")}   VOV ${q(op.vov, "voltage")}   saturation margin ${q(op.saturationMargin, "voltage")}`;
    // The analysis keeps the main transistor in `op` and the others by name: the main one is the name missing from `devices`.
    let main = 1;
    while (a.devices?.[`M${main}`]) main++;
    out.push(row(`M${main}`, a.op));
    for (const [n, d] of Object.entries(a.devices ?? {})) out.push(row(n, d.op));
  } else {
    out.push(`  VG ${q(a.nodes.gate, "voltage")}   VS ${q(a.nodes.source, "voltage")}   VD ${q(a.nodes.drain, "voltage")}`);
    out.push(`  ID ${q(a.currents.drainMagnitude, "current")}   VOV ${q(a.op.vov, "voltage")}   Vt ${q(a.op.vt, "voltage")}   saturation margin ${q(a.op.saturationMargin, "voltage")}`);
  }
  out.push(`  gm ${q(a.smallSignal.gm, "conductance")}   ro ${Number.isFinite(a.smallSignal.ro) ? q(a.smallSignal.ro, "resistance") : "∞"}   transistor ${q(a.power.transistor, "power")}   supply ${q(a.power.total, "power")}`);
  for (const m of a.metrics.amplifiers) out.push(`  ${m.kind}: gain ${+m.gain.toPrecision(4)}, Rin ${Number.isFinite(m.rin) ? q(m.rin, "resistance") : "∞"}, Rout ${q(m.rout, "resistance")}`);
  if (o.design) {
    const { id, output } = o.design.deviation;
    const rel = (x: number) => `${x >= 0 ? "+" : ""}${(x * 100).toFixed(2)} %`;
    out.push(`  against the specification: ID ${q(id.achieved, "current")} for ${q(id.target, "current")} (${rel(id.relative)}), output node ${q(output.achieved, "voltage")} for ${q(output.target, "voltage")} (${rel(output.relative)})`);
  }
  out.push("", "Checks");
  const checks = [...a.metrics.checks, ...(o.extraChecks ?? [])];
  for (const c of checks) out.push(`  ${checkLine(c)}`);
  for (const it of o.design?.dissipation?.items ?? [])
    if (it.checked) out.push(`  ${it.passed ? "pass" : "FAIL"}  ${it.name} dissipation: ${q(it.power, "power")} (allowed ${q(it.allowed!, "power")})`);
  const t = o.tolerance;
  if (t) {
    const temps = t.temperatures.filter((x): x is NonNullable<typeof x> => x !== undefined).map((k) => `${+(k - 273.15).toFixed(2)} °C`);
    out.push("", `Tolerances: ${t.method === "corners" ? "worst-case corners" : "Monte Carlo"}, ${t.cases} cases${temps.length ? ` at ${temps.join(", ")}` : ""}`);
    out.push(`  parts: ${t.parameters.map((p) => `${p.name} ±${p.relative ? `${+(p.band * 100).toPrecision(3)} %` : q(p.band, "voltage")}`).join(", ") || "none spread"}`);
    const sp = (label: string, s: { nominal: number; min: number; max: number }, d: Dimension) =>
      `  ${label.padEnd(18)} ${q(s.min, d)} … ${q(s.max, d)} (nominal ${q(s.nominal, d)}${d === "current" && s.nominal ? `; ${((s.min / s.nominal - 1) * 100).toFixed(1)} % … +${((s.max / s.nominal - 1) * 100).toFixed(1)} %` : ""})`;
    out.push(sp("ID", t.spread.id, "current"), sp("VD", t.spread.vd, "voltage"), sp("VOV", t.spread.vov, "voltage"), sp("saturation margin", t.spread.saturationMargin, "voltage"));
    const req = t.required === undefined ? "no yield asked" : t.method === "corners" ? "every corner must pass" : `needs ≥ ${+(t.required * 100).toPrecision(4)} %`;
    out.push(`  yield per check (${req}):`);
    for (const c of t.checks)
      out.push(`  ${c.ok ? "pass" : "FAIL"}  ${c.name}: ${c.passed}/${c.cases} (${+(c.yield * 100).toPrecision(4)} %), value ${formatChecked(c.min, c.unit)} … ${formatChecked(c.max, c.unit)}`);
    if (t.unsolved) out.push(`  ${t.unsolved} case(s) could not be solved and count as failing every check`);
  }
  const partFindings = [o.stage.device, ...Object.values(o.stage.devices ?? {})].flatMap((d) => (d.part ? partModel(d.part.part).findings : []));
  const findings = [...partFindings, ...a.findings];
  if (findings.length) {
    out.push("", "Findings");
    for (const f of findings) out.push(`  - ${f}`);
  }
  out.push("", o.failures.length ? `${o.failures.length} check(s) FAILED (exit status 1)` : "Every check passed.", "", cautions);
  return out.join("\n");
}
