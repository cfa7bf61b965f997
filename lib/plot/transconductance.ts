/**
 * gm and gm/ID against overdrive at a fixed VDS: the sizing view, for every
 * device model. With the square law gm/ID grows without bound as VOV → 0 (the
 * summary says so); with EKV the sweep reaches into weak inversion, where gm/ID
 * levels off towards 1/(n·UT).
 */
import { requireFinite, requirePositive } from "../errors.js";
import { modelOf, type Device } from "../device/card.js";
import { derivativeStep } from "../device/model.js";
import { models } from "../device/models/index.js";
import type { ClmMode } from "../device/drain-current.js";
import { defaultSlopeFactor } from "../device/inversion.js";
import { regionOf } from "../device/region.js";
import { transconductanceEfficiency, transconductanceSat, transconductanceTriode } from "../formulas/device.formulas.js";
import { thermalVoltage, type AmperesPerVoltSquared, type Amperes, type Kelvin, type PerVolt, type Siemens, type Volts } from "../quantity.js";
import { formatQuantity } from "../units/format.js";
import { fixedVds, sweepSetup, type SweepOptions } from "./device-view.js";
import { axisInfo, axisTitle, baseConfig, baseLayout, palette, plotSchema, pointTrace, scaled, scaleFor, sweep, type PlotSpec, type Trace } from "./figure.js";

export interface TransconductanceOptions extends SweepOptions {
  /** Fixed drain-source voltage (device polarity); the operating point's when omitted. */
  readonly vds?: number;
  /** Subthreshold slope factor n for the weak-inversion ceiling line 1/(n·UT); the device model's default (defaultSlopeFactor) unless told. */
  readonly slopeFactor?: number;
  /** Device temperature for UT = kT/q; 300 K unless told. */
  readonly temperature?: number;
  /** Overdrive sweep, in V; vovMin defaults to vovMax/20 (gm/ID = 2/VOV is unbounded at 0). */
  readonly vovMin?: number;
  readonly vovMax: number;
}

const origin = "transconductancePlot";

/** gm from the catalog formula for the region (the square law's ∂ID/∂VGS). */
function gmAt(k: number, vov: number, vds: number, lambda: number, clm: ClmMode): number {
  const region = regionOf(vov, vds);
  if (region === "saturation") return transconductanceSat.fn(k as AmperesPerVoltSquared, vov as Volts, lambda as PerVolt, vds as Volts);
  if (region === "triode") return transconductanceTriode.fn(k as AmperesPerVoltSquared, vds as Volts, (clm === "continuous" ? lambda : 0) as PerVolt);
  return 0;
}

export function transconductancePlot(dev: Device, opts: TransconductanceOptions): PlotSpec {
  const { op, v, ps } = sweepSetup(dev, opts, "options { vovMax, vds or operatingPoint, … }", origin);
  const vds = fixedVds(opts.vds, op, ps, origin);
  requirePositive(opts.vovMax, `${origin}.vovMax`, "the largest overdrive to plot, > 0 V");
  const squareLaw = modelOf(dev.card) === "square-law";
  // A model that conducts below threshold (EKV) is plotted from weak inversion up; the square law from just above VOV = 0.
  const from = opts.vovMin ?? (modelOf(dev.card) === "ekv" ? -0.3 : opts.vovMax / 20);
  if (squareLaw || modelOf(dev.card) === "square-law-mobility") requirePositive(from, `${origin}.vovMin`, "a smallest overdrive > 0 V (gm/ID = 2/VOV is unbounded at 0)");
  else requireFinite(from, `${origin}.vovMin`, "a smallest overdrive in V (negative reaches into weak inversion)");
  const vov = sweep(from, opts.vovMax, opts.points ?? 121, origin);
  // gm: the square law's catalog formula; other models by central difference of their own current (step 10 µV).
  const gmOf = (x: number, d: number) =>
    squareLaw ? gmAt(v.k, x, d, v.lambda, v.clm) : (v.current(v.vt + x + derivativeStep, d) - v.current(v.vt + x - derivativeStep, d)) / (2 * derivativeStep);
  const gm = vov.map((x) => gmOf(x, vds));
  const eff = vov.map((x, i) => transconductanceEfficiency.fn(gm[i]! as Siemens, v.current(v.vt + x, vds) as Amperes));
  const xs = scaleFor([opts.vovMax], "voltage");
  const ys = scaleFor(gm, "conductance");
  const data: Trace[] = [
    {
      type: "scatter",
      mode: "lines",
      name: "g<sub>m</sub>",
      x: scaled(vov, xs.divisor),
      y: scaled(gm, ys.divisor),
      line: { color: palette.curves[0]!, width: 2.2 },
      hovertemplate: `V<sub>OV</sub> = %{x:.4g} ${xs.unit}<br>g<sub>m</sub> = %{y:.4g} ${ys.unit}<extra></extra>`,
      meta: { role: "gm", vds },
    },
    {
      type: "scatter",
      mode: "lines",
      name: "g<sub>m</sub>/I<sub>D</sub>",
      x: scaled(vov, xs.divisor),
      y: scaled(eff, 1),
      yaxis: "y2",
      line: { color: palette.second, width: 2.2, dash: "dash" },
      hovertemplate: `V<sub>OV</sub> = %{x:.4g} ${xs.unit}<br>g<sub>m</sub>/I<sub>D</sub> = %{y:.4g} S/A<extra></extra>`,
      meta: { role: "gm-over-id", vds },
    },
  ];
  // Where the square law's gm/ID = 2/VOV stops meaning anything: weak inversion caps gm/ID near 1/(n·UT).
  const n = opts.slopeFactor ?? defaultSlopeFactor;
  requirePositive(n, `${origin}.slopeFactor`, "a subthreshold slope factor n > 0 (typically 1.2 to 1.6)");
  const ceiling = 1 / (n * thermalVoltage(requirePositive(opts.temperature ?? 300, `${origin}.temperature`, "a temperature > 0 K") as Kelvin));
  data.push({
    type: "scatter",
    mode: "lines",
    name: `weak-inversion limit 1/(n·U<sub>T</sub>) ≈ ${ceiling.toPrecision(3)} S/A (n = ${n})`,
    x: scaled([from, opts.vovMax], xs.divisor),
    y: [Number(ceiling.toPrecision(6)), Number(ceiling.toPrecision(6))],
    yaxis: "y2",
    line: { color: palette.threshold, width: 1.2, dash: "dot" },
    meta: { role: "threshold", gmOverIdCeiling: ceiling, slopeFactor: n },
  });
  let opText = "";
  if (op) {
    const ov = op.vgs - v.vt;
    const g = gmOf(ov, op.vds);
    if (ov > 0 || !squareLaw) {
      const e = g / op.id;
      // One marker per axis: gm on the left axis, gm/ID on the right.
      const gmMark = pointTrace(`bias g<sub>m</sub> = ${formatQuantity(g, "conductance")}`, ov / xs.divisor, g / ys.divisor, { role: "operating-point", vov: ov, gm: g });
      data.push(gmMark);
      data.push(pointTrace(`bias g<sub>m</sub>/I<sub>D</sub> = ${formatQuantity(e, "inverseVoltageEfficiency")}`, ov / xs.divisor, e, { role: "operating-point", vov: ov, gmOverId: e }, { yaxis: "y2", marker: { ...gmMark.marker!, color: palette.second } }));
      opText = ` At the operating point VOV = ${formatQuantity(ov, "voltage")}: gm = ${formatQuantity(g, "conductance")}, gm/ID = ${formatQuantity(e, "inverseVoltageEfficiency")}.`;
    }
  }
  const title = opts.title ?? `Transconductance and gm/ID, ${v.name}`;
  const summary =
    `${title}: gm and gm/ID against overdrive VOV from ${formatQuantity(from, "voltage")} to ${formatQuantity(opts.vovMax, "voltage")} at ${ps.vds} = ${formatQuantity(vds, "voltage")}` +
    (squareLaw
      ? ` (square law, k = ${formatQuantity(v.k, "transconductanceParameter")}). In saturation gm/ID = 2/VOV; the square law does not model weak inversion, where real devices level off near 1/(n·UT) (dotted line), so read the low-VOV end with care.${opText}`
      : ` (${models[modelOf(dev.card)].title}; gm by central difference of the model current). ${modelOf(dev.card) === "ekv" ? "The EKV model covers weak inversion: gm/ID levels off towards 1/(n·UT) (dotted line) instead of rising past it." : "This model has no subthreshold conduction, so gm/ID rises without bound as VOV → 0; read the low-VOV end with care."}${opText}`);
  return {
    schema: plotSchema,
    kind: "transconductance",
    title,
    summary,
    axes: { x: axisInfo("VOV", "voltage", xs), y: axisInfo("gm", "conductance", ys), y2: axisInfo("gm/ID", "inverseVoltageEfficiency", { divisor: 1, unit: "S/A", tex: "\\mathrm{S/A}" }) },
    figure: {
      data,
      layout: baseLayout(
        title,
        { title: { text: axisTitle("V<sub>OV</sub>", xs.unit) }, range: [Math.min(0, from) / xs.divisor, opts.vovMax / xs.divisor] },
        { title: { text: axisTitle("g<sub>m</sub>", ys.unit) } },
        {
          yaxis2: { title: { text: axisTitle("g<sub>m</sub>/I<sub>D</sub>", "S/A") }, overlaying: "y", side: "right", showgrid: false, zeroline: false, linecolor: palette.axis, ticks: "outside" },
          margin: { l: 70, r: 70, t: 56, b: 60 },
          legend: { orientation: "v", x: 0.3, y: 0.98, xanchor: "left", yanchor: "top", bgcolor: "rgba(255,255,255,0.85)" },
        },
      ),
      config: baseConfig("transconductance"),
    },
  };
}
