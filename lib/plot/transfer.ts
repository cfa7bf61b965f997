/**
 * Transfer characteristic: ID against the gate drive at a fixed VDS, with the
 * threshold and the operating point marked.
 */
import { InputError, requireFinite, requirePositive } from "../errors.js";
import type { Device } from "../device/card.js";
import { regionOf } from "../device/region.js";
import { formatQuantity } from "../units/format.js";
import { fixedVds, sweepSetup, type SweepOptions } from "./device-view.js";
import { axisInfo, axisTitle, baseConfig, baseLayout, palette, plotSchema, pointTrace, scaled, scaleFor, sweep, type PlotSpec, type Trace } from "./figure.js";

export interface TransferOptions extends SweepOptions {
  /** Fixed drain-source voltage (device polarity); the operating point's when omitted. */
  readonly vds?: number;
  /** Gate-drive sweep (device polarity), in V; from 0 unless told. */
  readonly vgsMin?: number;
  readonly vgsMax: number;
}

const origin = "transferCharacteristic";

export function transferCharacteristic(dev: Device, opts: TransferOptions): PlotSpec {
  const { op, v, ps } = sweepSetup(dev, opts, "options { vgsMax, vds or operatingPoint, … }", origin);
  const vds = fixedVds(opts.vds, op, ps, origin);
  requirePositive(opts.vgsMax, `${origin}.vgsMax`, `the largest ${ps.vgs} to plot, > 0 V`);
  const from = opts.vgsMin ?? 0;
  requireFinite(from, `${origin}.vgsMin`);
  const g = sweep(from, opts.vgsMax, opts.points ?? 161, origin);
  const ids = g.map((x) => v.current(x, vds));
  const top = Math.max(0, ...ids, op?.id ?? 0);
  if (!(top > 0)) throw new InputError(opts.vgsMax, `a sweep reaching above the threshold ${ps.vt} = ${formatQuantity(v.vt, "voltage")}`, `${origin}.vgsMax`);
  const yMax = top * 1.1;
  const xs = scaleFor([opts.vgsMax, from], "voltage");
  const ys = scaleFor([yMax], "current");
  const data: Trace[] = [
    {
      type: "scatter",
      mode: "lines",
      name: `${v.sym.id} at ${v.sym.vds} = ${formatQuantity(vds, "voltage")}`,
      x: scaled(g, xs.divisor),
      y: scaled(ids, ys.divisor),
      line: { color: palette.curves[1]!, width: 2.2 },
      hovertemplate: `${v.sym.vgs} = %{x:.4g} ${xs.unit}<br>${v.sym.id} = %{y:.4g} ${ys.unit}<extra></extra>`,
      meta: { role: "curve", vds },
    },
    {
      type: "scatter",
      mode: "lines",
      name: `${v.sym.vt} = ${formatQuantity(v.vt, "voltage")}`,
      x: scaled([v.vt, v.vt], xs.divisor),
      y: [0, Number((yMax / ys.divisor).toPrecision(6))],
      line: { color: palette.threshold, width: 1.2, dash: "dot" },
      meta: { role: "threshold", vt: v.vt },
    },
  ];
  let opText = "";
  if (op) {
    const region = regionOf(op.vgs - v.vt, op.vds);
    data.push(pointTrace(`operating point (${region})`, op.vgs / xs.divisor, op.id / ys.divisor, { role: "operating-point", vgs: op.vgs, vds: op.vds, id: op.id, region }));
    opText = ` Operating point: ${ps.vgs} = ${formatQuantity(op.vgs, "voltage")}, ${ps.id} = ${formatQuantity(op.id, "current")} (${region}).`;
  }
  const title = opts.title ?? `Transfer characteristic, ${v.name}`;
  const summary =
    `${title}: ${ps.id} against ${ps.vgs} from ${formatQuantity(from, "voltage")} to ${formatQuantity(opts.vgsMax, "voltage")} at ${ps.vds} = ${formatQuantity(vds, "voltage")}` +
    ` (square law, k = ${formatQuantity(v.k, "transconductanceParameter")}, ${ps.vt} = ${formatQuantity(v.vt, "voltage")} at VSB = ${formatQuantity(v.vsb, "voltage")}; subthreshold current not modelled).${opText}`;
  return {
    schema: plotSchema,
    kind: "transfer-characteristic",
    title,
    summary,
    axes: { x: axisInfo(v.pmos ? "VSG" : "VGS", "voltage", xs), y: axisInfo(v.pmos ? "|ID|" : "ID", "current", ys) },
    figure: {
      data,
      layout: baseLayout(title, { title: { text: axisTitle(v.sym.vgs, xs.unit) }, range: [from / xs.divisor, opts.vgsMax / xs.divisor] }, { title: { text: axisTitle(v.sym.id, ys.unit) }, range: [0, yMax / ys.divisor] }),
      config: baseConfig("transfer-characteristic"),
    },
  };
}
