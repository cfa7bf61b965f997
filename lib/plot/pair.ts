/**
 * The DC transfer characteristic of a differential pair: each output node
 * against the differential input, every point re-solved by the stage's own
 * nodal analysis (so the curve bends where one side cuts off or an output
 * device leaves saturation), with the solved bias point marked.
 * Allocation: one analysis per point (121 by default).
 */
import { analyzeStage } from "../bias/analyze.js";
import type { Stage, StageAnalysis } from "../bias/topology.js";
import { InputError } from "../errors.js";
import { formatQuantity } from "../units/format.js";
import { axisInfo, axisTitle, baseConfig, baseLayout, palette, plotSchema, pointTrace, scaled, scaleFor, sweep, type PlotSpec, type Trace } from "./figure.js";

export interface PairTransferOptions {
  /** Half-width of the differential-input sweep; 1 V when omitted. */
  readonly range?: number;
  readonly points?: number;
}

/**
 * Output voltage(s) against vid for a `diff-pair` (both drains), `diff-pair-mirror-load` (the output) or
 * `two-stage-miller` (both stages' outputs; the sweep centred on the stage's vid and, by default, wide enough
 * for the output to cross its range four times over at the open-loop gain).
 */
export function pairTransferPlot(stage: Stage, analysis: StageAnalysis, opts: PairTransferOptions = {}): PlotSpec {
  const origin = "pairTransferPlot";
  const twoStage = stage.topology === "two-stage-miller";
  if (stage.topology !== "diff-pair" && stage.topology !== "diff-pair-mirror-load" && !twoStage) throw new InputError(stage.topology, `"diff-pair", "diff-pair-mirror-load" or "two-stage-miller"`, `${origin}: stage.topology`);
  const c = stage.components as Readonly<Record<string, number>>;
  const vcm = c.vcm!;
  const vdd = stage.supplies.vdd;
  const vss = stage.supplies.vss ?? 0;
  const room = 2 * Math.min(vdd - vcm, vcm - vss);
  const gain = twoStage ? Math.abs((analysis as StageAnalysis & { twoStage?: { gain: number } }).twoStage?.gain ?? 0) : 0;
  const centre = twoStage ? (c.vid ?? 0) : 0;
  const range = Math.min(opts.range ?? (gain > 1 ? (4 * (vdd - vss)) / gain : 1), room - Math.abs(centre));
  if (!(range > 0)) throw new InputError(opts.range, "a sweep half-width > 0 V that keeps both inputs within the rails", `${origin}: range`);
  const vids = sweep(centre - range, centre + range, opts.points ?? 121, origin);
  const nodes = stage.topology === "diff-pair" ? ["d1", "d2"] : twoStage ? ["o1", "out"] : ["out"];
  const ys = nodes.map(() => [] as number[]);
  for (const vid of vids) {
    const a = analyzeStage({ ...stage, components: { ...c, vid } });
    nodes.forEach((n, i) => ys[i]!.push(a.nodes[n]!));
  }
  const xs = scaleFor([Math.abs(centre) + range], "voltage");
  const yv = scaleFor([vdd, vss], "voltage");
  const data: Trace[] = nodes.map((n, i) => ({
    type: "scatter",
    mode: "lines",
    name: `V(${n})`,
    x: scaled(vids, xs.divisor),
    y: scaled(ys[i]!, yv.divisor),
    line: { color: palette.curves[i === 0 ? 0 : 2]!, width: 2.2 },
    hovertemplate: `vid = %{x:.4g} ${xs.unit}<br>V(${n}) = %{y:.4g} ${yv.unit}<extra></extra>`,
    meta: { role: "curve", node: n },
  }));
  const vid0 = c.vid ?? 0;
  for (const n of nodes) data.push(pointTrace(`bias point V(${n})`, vid0 / xs.divisor, analysis.nodes[n]! / yv.divisor, { role: "operating-point", vid: vid0, node: n, v: analysis.nodes[n]! }));
  const name = stage.name ?? stage.topology;
  const title = `DC transfer against the differential input, ${name}`;
  const summary = `Output node voltage${nodes.length > 1 ? "s" : ""} ${nodes.map((n) => `V(${n})`).join(" and ")} against the differential input vid = vin1 − vin2 from ${formatQuantity(centre - range, "voltage")} to ${formatQuantity(centre + range, "voltage")} at the common mode ${formatQuantity(vcm, "voltage")}, each point solved by nodal analysis (square law); the bias point at vid = ${formatQuantity(vid0, "voltage")} is marked.`;
  return {
    schema: plotSchema,
    kind: "transfer-characteristic",
    title,
    summary,
    axes: { x: axisInfo("vid", "voltage", xs), y: axisInfo("V(out)", "voltage", yv) },
    figure: { data, layout: baseLayout(title, { title: { text: axisTitle("v<sub>id</sub>", xs.unit) } }, { title: { text: axisTitle("V<sub>out</sub>", yv.unit) } }), config: baseConfig("pair-transfer") },
  };
}
