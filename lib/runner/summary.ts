/** The run summary printed on the terminal: checks with margins, failed cells, the design-run folder written (printed only after every file is in place). */
import { formatQuantity } from "../units/format.js";
import type { RunResult } from "./run.js";

const q = (v: number | null | undefined, dim: Parameters<typeof formatQuantity>[1]) => (typeof v === "number" && !Number.isNaN(v) ? formatQuantity(v, dim) : "—");

export function summarize(r: RunResult, shown: (p: string) => string = (p) => p): string {
  const out: string[] = [];
  const set = r.inputs.filter((i) => i.overridden);
  if (set.length) out.push(`inputs set: ${set.map((i) => `${i.name} = ${i.text} (notebook: ${i.original})`).join(", ")}`);
  if (r.checks.length) {
    out.push("checks:");
    const w = Math.min(48, Math.max(...r.checks.map((c) => c.title.length)));
    for (const c of r.checks) {
      const req = [typeof c.min === "number" ? `≥ ${q(c.min, c.dim)}` : "", typeof c.max === "number" ? `≤ ${q(c.max, c.dim)}` : ""].filter(Boolean).join(", ");
      out.push(`  ${c.passed ? "pass" : "FAIL"}  ${c.title.padEnd(w)}  ${q(c.value, c.dim)}${req ? ` (${req})` : ""}, margin ${q(c.margin, c.dim)}  [${c.derivation}, cell ${c.cell + 1}]`);
    }
  } else out.push("checks: none recorded");
  for (const f of r.failures) {
    out.push(`cell ${f.cell + 1} ${f.status === "timeout" ? "timed out" : "failed"}:`);
    for (const l of f.lines) out.push(`  ${l}`);
  }
  if (r.skipped.length) out.push(`not run after the failure: cell${r.skipped.length > 1 ? "s" : ""} ${r.skipped.map((i) => i + 1).join(", ")}`);
  out.push(`design-run folder ${shown(r.outDir)}:`);
  out.push(`  report      ${shown(r.reportPath)} (${(r.reportBytes / 1e6).toFixed(2)} MB)`);
  out.push(`  run record  ${shown(r.recordPath)}`);
  out.push(`  notebook    ${shown(r.notebookPath)}`);
  const failed = r.checks.filter((c) => !c.passed).length;
  const verdict = r.failures.length ? `incomplete: cell ${r.failures[0]!.cell + 1} failed` : failed ? `${failed} of ${r.checks.length} checks fail` : `${r.checks.length} of ${r.checks.length} checks pass`;
  out.push(`result: ${verdict} (${r.seconds.total.toFixed(1)} s)`);
  return out.join("\n");
}
