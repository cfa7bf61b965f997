/**
 * `pinchoff op --verify`: read the process description, simulate the stage, write
 * the deck when asked, and the text block shown under the operating point.
 */
import { InputError } from "../errors.js";
import { verifyStage, type Compared, type StageVerification } from "../bias/simulation-check.js";
import type { Stage } from "../bias/topology.js";
import { writeFileAtomic } from "../io/atomic-write.js";
import { readProcess } from "../process/description.js";
import type { Derivation } from "../record/derivation.js";
import { formatQuantity } from "../units/format.js";

export async function verifyFromCommandLine(stage: Stage, processFile: string, tolerance: string | undefined, deckFile: string | undefined, rec: Derivation): Promise<StageVerification> {
  let tol: number | undefined;
  if (tolerance !== undefined) {
    tol = Number(tolerance);
    if (!Number.isFinite(tol) || tol <= 0 || tol >= 1) throw new InputError(tolerance, "a fraction between 0 and 1 (0.1 is ±10 %)", "--verify-tolerance");
  }
  const p = readProcess(processFile);
  const v = await verifyStage(stage, p, tol === undefined ? {} : { tolerance: tol }, rec);
  if (deckFile !== undefined) writeFileAtomic(deckFile, v.deck);
  return v;
}

const pct = (x: number) => (Number.isFinite(x) ? `${x >= 0 ? "+" : ""}${(100 * x).toFixed(2)} %` : "n/a");
const row = (name: string, c: Compared, dim: "current" | "conductance" | "voltage" | "dimensionless") =>
  `  ${name.padEnd(16)}${(dim === "dimensionless" ? c.hand.toPrecision(4) : formatQuantity(c.hand, dim)).padStart(12)}${(dim === "dimensionless" ? c.sim.toPrecision(4) : formatQuantity(c.sim, dim)).padStart(12)}${pct(c.deviation).padStart(11)}`;

export function verificationText(v: StageVerification): string {
  const lines = [`Simulation with ${v.process} (${v.section}), ngspice:`, `  ${"".padEnd(16)}${"hand".padStart(12)}${"simulated".padStart(12)}${"deviation".padStart(11)}`];
  for (const [n, c] of Object.entries(v.nodes)) lines.push(row(`V(${n})`, c, "voltage"));
  for (const d of v.devices) {
    lines.push(row(`${d.instance} ID`, d.id, "current"), row(`${d.instance} gm`, d.gm, "conductance"), row(`${d.instance} gds`, d.gds, "conductance"));
    lines.push(`  ${d.instance} (${d.model}): ${d.simRegion} in the simulator (|VDS| ${d.vds.toFixed(3)} V, VDsat ${d.vdsat.toFixed(3)} V), ${d.handRegion} by hand`);
  }
  if (v.gain) lines.push(row("gain", v.gain, "dimensionless"));
  lines.push(`  ${v.passed ? "pass" : "FAIL"}  drain current within ±${(100 * v.tolerance).toFixed(1)} % of the hand value`);
  return lines.join("\n");
}

export const verificationFailure = (v: StageVerification): string =>
  `FAIL simulated drain current ${pct(v.devices[0]!.id.deviation)} from the hand value (allowed ±${(100 * v.tolerance).toFixed(1)} %, ${v.process})`;
