/**
 * `npm run bench`: builds the library, then runs every case in
 * test/bench/cases/*.ts several times, prints medians (and ratios where a case
 * compares two things), and writes machine-readable results to out/bench.json
 * (gitignored). All figures come from one run on this machine; the machine is
 * shared, so the load average is printed with them.
 *
 * A case file exports `cases: BenchCase[]` (types in test/bench/case.ts):
 *
 *   export const cases = defineCases([{
 *     id: "bias.opsPerSecond",              // "area.what", used by --filter
 *     title: "Bias solver operating points per second",
 *     repeats: 7,                           // medians are over the repeats (default 7)
 *     setup() { ... },                      // once: inputs, warm-up (optional)
 *     measure() { ...; return { rate } },   // one repeat: a number for every figure
 *     figures: { rate: { unit: "points/s", better: "higher", target: 1e5, note: "..." } },
 *     ratios: [{ name: "notebook over kernel", of: "notebook", over: "kernel" }], // optional
 *     teardown() { ... },                   // once (optional)
 *   }]);
 *
 * A figure with a target is judged on its median: "higher" needs median ≥
 * target, "lower" median ≤ target. A ratio is median(of) / median(over).
 *
 * Options: --filter TEXT (cases whose id contains TEXT), --repeats N (override),
 * --out FILE (default out/bench.json), --check (exit 1 when a target is missed;
 * without it a missed target is reported but the exit status is 0, since the
 * numbers depend on the machine and its load).
 */
import { mkdirSync, readdirSync, writeFileSync } from "node:fs";
import { cpus, loadavg, totalmem } from "node:os";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { parseArgs } from "node:util";
import type { BenchCase, BenchFigure } from "./case.js";

const here = dirname(fileURLToPath(import.meta.url));
const root = resolve(here, "../..");

const { values: opts } = parseArgs({
  options: {
    filter: { type: "string" },
    repeats: { type: "string" },
    out: { type: "string", default: join(root, "out/bench.json") },
    check: { type: "boolean", default: false },
    help: { type: "boolean", short: "h", default: false },
  },
});
if (opts.help) {
  console.log("usage: tsx test/bench/run.ts [--filter TEXT] [--repeats N] [--out FILE] [--check]");
  process.exit(0);
}
const repeatOverride = opts.repeats === undefined ? undefined : Number(opts.repeats);
if (repeatOverride !== undefined && !(Number.isInteger(repeatOverride) && repeatOverride >= 1)) {
  console.error(`bench: --repeats: got ${JSON.stringify(opts.repeats)}, expected a whole number ≥ 1`);
  process.exit(2);
}

function median(xs: readonly number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const n = s.length;
  return n % 2 ? s[(n - 1) / 2]! : (s[n / 2 - 1]! + s[n / 2]!) / 2;
}

const met = (value: number, f: { better?: "higher" | "lower"; target?: number }) =>
  f.target === undefined ? undefined : (f.better ?? "higher") === "higher" ? value >= f.target : value <= f.target;

/** Three significant digits, with thousands grouped for big rates. */
function show(v: number): string {
  if (!Number.isFinite(v)) return String(v);
  const a = Math.abs(v);
  if (a >= 1e6) return `${(v / 1e6).toPrecision(3)} M`;
  if (a >= 1e4) return `${(v / 1e3).toPrecision(3)} k`;
  return a === 0 ? "0" : v.toPrecision(3);
}

interface FigureResult extends BenchFigure {
  readonly median: number;
  readonly min: number;
  readonly max: number;
  readonly samples: readonly number[];
  readonly met?: boolean;
}

async function loadCases(): Promise<BenchCase[]> {
  const dir = join(here, "cases");
  const files = readdirSync(dir)
    .filter((f) => f.endsWith(".ts"))
    .sort();
  const all: BenchCase[] = [];
  for (const f of files) {
    const mod = (await import(pathToFileURL(join(dir, f)).href)) as { cases?: readonly BenchCase[] };
    if (!Array.isArray(mod.cases)) throw new Error(`bench: ${f} exports no "cases" array (see the comment at the top of test/bench/run.ts)`);
    all.push(...mod.cases);
  }
  const seen = new Set<string>();
  for (const c of all) {
    if (seen.has(c.id)) throw new Error(`bench: two cases have the id "${c.id}"`);
    seen.add(c.id);
  }
  return all.filter((c) => !opts.filter || c.id.includes(opts.filter));
}

async function runCase(c: BenchCase) {
  const repeats = repeatOverride ?? c.repeats ?? 7;
  await c.setup?.();
  const samples: Record<string, number[]> = Object.fromEntries(Object.keys(c.figures).map((k) => [k, []]));
  try {
    for (let r = 0; r < repeats; r++) {
      const got = await c.measure();
      for (const k of Object.keys(c.figures)) {
        const v = got[k];
        if (typeof v !== "number" || !Number.isFinite(v)) throw new Error(`bench: case "${c.id}" repeat ${r + 1}: figure "${k}" is ${String(v)}, expected a finite number`);
        samples[k]!.push(v);
      }
    }
  } finally {
    await c.teardown?.();
  }
  const figures: Record<string, FigureResult> = {};
  for (const [k, f] of Object.entries(c.figures)) {
    const s = samples[k]!;
    const m = median(s);
    const ok = met(m, f);
    figures[k] = { ...f, median: m, min: Math.min(...s), max: Math.max(...s), samples: s, ...(ok === undefined ? {} : { met: ok }) };
  }
  const ratios = (c.ratios ?? []).map((r) => {
    const of = figures[r.of];
    const over = figures[r.over];
    if (!of || !over) throw new Error(`bench: case "${c.id}": ratio "${r.name}" names a figure it does not have`);
    const value = of.median / over.median;
    const ok = met(value, r);
    return { ...r, value, ...(ok === undefined ? {} : { met: ok }) };
  });
  return { id: c.id, title: c.title, repeats, figures, ratios };
}

function table(rows: string[][]): string {
  const widths = rows[0]!.map((_, i) => Math.max(...rows.map((r) => r[i]!.length)));
  return rows.map((r) => r.map((cell, i) => (i >= 2 && i <= 4 ? cell.padStart(widths[i]!) : cell.padEnd(widths[i]!))).join("  ")).join("\n");
}

const verdict = (ok: boolean | undefined) => (ok === undefined ? "" : ok ? "met" : "MISSED");

async function main() {
  const cases = await loadCases();
  if (cases.length === 0) {
    console.error(`bench: no case matches ${JSON.stringify(opts.filter)}`);
    process.exit(2);
  }
  const startLoad = loadavg();
  console.log(`pinchoff bench: node ${process.version}, ${cpus().length} CPU (${cpus()[0]?.model ?? "?"}), load average ${startLoad.map((x) => x.toFixed(2)).join(" ")}`);
  const results = [];
  for (const c of cases) {
    process.stdout.write(`  running ${c.id} …\n`);
    results.push(await runCase(c));
  }
  const rows: string[][] = [["case", "figure", "median", "min", "max", "unit", "target", ""]];
  for (const r of results) {
    for (const [k, f] of Object.entries(r.figures)) {
      const target = f.target === undefined ? "" : `${f.better === "higher" ? "≥" : "≤"} ${show(f.target)}`;
      rows.push([r.id, k, show(f.median), show(f.min), show(f.max), f.unit, target, verdict(f.met)]);
    }
    for (const q of r.ratios) {
      const target = q.target === undefined ? "" : `${(q.better ?? "higher") === "higher" ? "≥" : "≤"} ${show(q.target)}`;
      rows.push([r.id, `ratio: ${q.name}`, show(q.value), "", "", "×", target, verdict(q.met)]);
    }
  }
  console.log("");
  console.log(table(rows));
  const endLoad = loadavg();
  console.log(`\nmedians over each case's repeats (${results.map((r) => `${r.id} ×${r.repeats}`).join(", ")}); load average at the end ${endLoad.map((x) => x.toFixed(2)).join(" ")}`);
  const missed = results.flatMap((r) => [...Object.entries(r.figures).filter(([, f]) => f.met === false).map(([k]) => `${r.id}.${k}`), ...r.ratios.filter((q) => q.met === false).map((q) => `${r.id}: ${q.name}`)]);
  const report = {
    date: new Date().toISOString(),
    node: process.version,
    platform: `${process.platform} ${process.arch}`,
    cpus: cpus().length,
    cpuModel: cpus()[0]?.model,
    memoryMB: Math.round(totalmem() / 2 ** 20),
    loadAverage: { start: startLoad, end: endLoad },
    cases: results,
    missed,
  };
  const out = resolve(opts.out!);
  mkdirSync(dirname(out), { recursive: true });
  writeFileSync(out, `${JSON.stringify(report, null, 2)}\n`);
  console.log(`results written to ${out}`);
  if (missed.length) {
    console.log(`targets missed: ${missed.join(", ")}${opts.check ? "" : " (reported only; --check makes this an error)"}`);
    if (opts.check) process.exit(1);
  }
}

await main();
