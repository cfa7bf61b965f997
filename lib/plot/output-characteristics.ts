/**
 * Output characteristics: the ID–VDS family for several gate drives, the
 * triode/saturation edge drawn from the model in use, the stage's DC load line
 * (or a non-linear load curve) and the operating point.
 */
import { InputError, requireFinite, requirePositive } from "../errors.js";
import type { Device } from "../device/card.js";
import type { ClmMode } from "../device/drain-current.js";
import { regionOf } from "../device/region.js";
import { formatQuantity } from "../units/format.js";
import { deviceView, sweepSetup, type SweepOptions } from "./device-view.js";
import { modelOf } from "../device/card.js";
import type { Volts } from "../quantity.js";
import { models } from "../device/models/index.js";
import { operatingPoint } from "../device/drain-current.js";
import {
  axisInfo,
  axisTitle,
  baseConfig,
  baseLayout,
  palette,
  plotSchema,
  pointTrace,
  scaled,
  scaleFor,
  sweep,
  type PlotSpec,
  type Trace,
} from "./figure.js";

/** A straight DC load line VDS = openCircuit − ID·resistance (device polarity). */
export interface LoadLine {
  /** VDS at ID = 0, e.g. VDD for a four-resistor stage. */
  readonly openCircuit: number;
  /** Total resistance in the drain–source current loop, e.g. RD + RS. */
  readonly resistance: number;
  readonly label?: string;
}

/** A non-linear load (e.g. a diode-connected device): current the load passes at each VDS of this device. */
export interface LoadCurve {
  readonly vds: readonly number[];
  readonly id: readonly number[];
  readonly label: string;
}

export interface OutputCharacteristicsOptions extends SweepOptions {
  /** Gate drives in the device's own polarity (VGS for NMOS, VSG for PMOS), in V. */
  readonly gateDrives: readonly number[];
  /** Right end of the VDS sweep (device polarity), in V. */
  readonly vdsMax: number;
  readonly loadLine?: LoadLine;
  readonly loadCurve?: LoadCurve;
}

const origin = "outputCharacteristics";

export function outputCharacteristics(dev: Device, opts: OutputCharacteristicsOptions): PlotSpec {
  const { op, v, ps } = sweepSetup(dev, opts, "options { gateDrives, vdsMax, … }", origin);
  if (!Array.isArray(opts.gateDrives) || opts.gateDrives.length === 0 || opts.gateDrives.length > 12)
    throw new InputError(opts.gateDrives, "a list of 1 to 12 gate drives in V", `${origin}.gateDrives`);
  opts.gateDrives.forEach((g, i) => requireFinite(g, `${origin}.gateDrives[${i}]`, "a finite gate drive in V"));
  requirePositive(opts.vdsMax, `${origin}.vdsMax`, `the largest ${ps.vds} to plot, > 0 V`);
  const vds = sweep(0, opts.vdsMax, opts.points ?? 161, origin);

  // The operating point's own curve, if its drive is not in the family already.
  const drives = [...opts.gateDrives];
  if (op && !drives.some((g) => Math.abs(g - op.vgs) < 1e-6)) drives.push(op.vgs);
  drives.sort((a, b) => a - b);

  const curves = drives.map((g) => vds.map((x) => v.current(g, x)));
  const vovMax = Math.max(...drives) - v.vt;
  let top = Math.max(0, ...curves.flat(), op?.id ?? 0);
  if (opts.loadCurve) top = Math.max(top, ...opts.loadCurve.id.filter((y) => y <= 2 * top));
  if (!(top > 0))
    throw new InputError(opts.gateDrives, `at least one gate drive above the threshold ${ps.vt} = ${formatQuantity(v.vt, "voltage")}`, `${origin}.gateDrives`);
  const yMax = top * 1.12;
  const xs = scaleFor([opts.vdsMax], "voltage");
  const ys = scaleFor([yMax], "current");

  const data: Trace[] = curves.map((ids, i) => {
    const g = drives[i]!;
    const isOp = op !== undefined && Math.abs(g - op.vgs) < 1e-6;
    const label = `${v.sym.vgs} = ${formatQuantity(g, "voltage")}`;
    return {
      type: "scatter",
      mode: "lines",
      name: isOp ? `${label} (bias)` : label,
      x: scaled(vds, xs.divisor),
      y: scaled(ids, ys.divisor),
      line: { color: isOp ? palette.highlight : palette.curves[i % palette.curves.length]!, width: isOp ? 2.6 : 1.8 },
      hovertemplate: `${label}<br>${v.sym.vds} = %{x:.4g} ${xs.unit}<br>${v.sym.id} = %{y:.4g} ${ys.unit}<extra></extra>`,
      meta: { role: "curve", gateDrive: g },
    };
  });

  const model = modelOf(dev.card);
  // The model's own saturation voltage VDsat at a gate drive (device polarity), from its operating point at the far end of the sweep.
  const sgn = dev.card.polarity === "nmos" ? 1 : -1;
  const vdsatAt = (g: number) => operatingPoint(dev, { vgs: (sgn * g) as Volts, vds: (sgn * opts.vdsMax) as Volts, vsb: (sgn * v.vsb) as Volts }).vdsat;
  if (model !== "square-law") {
    // Saturation edge of a model with its own VDsat: (VDsat, ID(VDsat)) for each drive, up to the largest plotted.
    const gMax = Math.max(...drives);
    const gMin = model === "ekv" ? Math.min(v.vt - 0.2, ...drives) : v.vt + 1e-3;
    const gs = sweep(gMin, gMax, 81, `${origin}.boundary`);
    const edgeX = gs.map(vdsatAt).map((x) => Math.min(x, opts.vdsMax));
    const edgeY = gs.map((g, i) => v.current(g, edgeX[i]!));
    data.push({
      type: "scatter",
      mode: "lines",
      name: `triode | saturation edge (${v.sym.vds} = V<sub>D,sat</sub>)`,
      x: scaled(edgeX, xs.divisor),
      y: scaled(edgeY, ys.divisor),
      line: { color: palette.boundary, width: 1.6, dash: "dash" },
      hovertemplate: `edge: ${v.sym.vds} = V<sub>D,sat</sub> = %{x:.4g} ${xs.unit}<br>${v.sym.id} = %{y:.4g} ${ys.unit}<extra></extra>`,
      meta: { role: "boundary", model: `${model}: VDS = VDsat from the model` },
    });
  }
  // Saturation edge: the current at VDS = VOV for each VOV, from the same model (incl. λ).
  else if (vovMax > 0) {
    const edgeX = sweep(0, Math.min(vovMax, opts.vdsMax), 81, `${origin}.boundary`);
    const edgeY = edgeX.map((x) => v.current(v.vt + x, x));
    data.push({
      type: "scatter",
      mode: "lines",
      name: `triode | saturation edge (${v.sym.vds} = V<sub>OV</sub>)`,
      x: scaled(edgeX, xs.divisor),
      y: scaled(edgeY, ys.divisor),
      line: { color: palette.boundary, width: 1.6, dash: "dash" },
      hovertemplate: `edge: ${v.sym.vds} = V<sub>OV</sub> = %{x:.4g} ${xs.unit}<br>${v.sym.id} = %{y:.4g} ${ys.unit}<extra></extra>`,
      meta: { role: "boundary", model: v.lambda && v.clm === "continuous" ? "k/2·VDS²·(1+λ·VDS)" : v.lambda ? "k/2·VDS²·(1+λ·VDS) (saturation side)" : "k/2·VDS²" },
    });
  }

  let loadText = "";
  if (opts.loadLine) {
    const ll = opts.loadLine;
    requirePositive(ll.openCircuit, `${origin}.loadLine.openCircuit`, `the open-circuit ${ps.vds} of the stage, > 0 V`);
    requirePositive(ll.resistance, `${origin}.loadLine.resistance`, "the total series resistance of the drain–source loop, > 0 Ω");
    const xEnd = Math.min(ll.openCircuit, opts.vdsMax);
    const lx = [0, xEnd];
    const ly = lx.map((x) => (ll.openCircuit - x) / ll.resistance);
    const name = ll.label ?? `load line ${ps.vds} = ${formatQuantity(ll.openCircuit, "voltage")} − ${ps.id}·${formatQuantity(ll.resistance, "resistance")}`;
    data.push({
      type: "scatter",
      mode: "lines",
      name,
      x: scaled(lx, xs.divisor),
      y: scaled(ly, ys.divisor),
      line: { color: palette.load, width: 2, dash: "dashdot" },
      hovertemplate: `load line<br>${v.sym.vds} = %{x:.4g} ${xs.unit}<br>${v.sym.id} = %{y:.4g} ${ys.unit}<extra></extra>`,
      meta: { role: "load-line", openCircuit: ll.openCircuit, resistance: ll.resistance },
    });
    loadText = ` The DC load line is ${ps.vds} = ${formatQuantity(ll.openCircuit, "voltage")} − ${ps.id}·${formatQuantity(ll.resistance, "resistance")}.`;
  }
  if (opts.loadCurve) {
    const lc = opts.loadCurve;
    if (!Array.isArray(lc.vds) || !Array.isArray(lc.id) || lc.vds.length !== lc.id.length || lc.vds.length < 2)
      throw new InputError(lc, "a load curve with equally long vds and id lists of at least 2 points", `${origin}.loadCurve`);
    lc.vds.forEach((x, i) => requireFinite(x, `${origin}.loadCurve.vds[${i}]`));
    lc.id.forEach((y, i) => requireFinite(y, `${origin}.loadCurve.id[${i}]`));
    data.push({
      type: "scatter",
      mode: "lines",
      name: lc.label,
      x: scaled(lc.vds, xs.divisor),
      y: scaled(lc.id, ys.divisor),
      line: { color: palette.load, width: 2, dash: "dashdot" },
      meta: { role: "load-curve" },
    });
    loadText += ` The load curve is ${lc.label}.`;
  }

  let opText = "";
  if (op) {
    const region = model === "square-law" ? regionOf(op.vgs - v.vt, op.vds) : op.vds < vdsatAt(op.vgs) ? "triode" : "saturation";
    data.push(
      pointTrace(`operating point (${region})`, op.vds / xs.divisor, op.id / ys.divisor, { role: "operating-point", vgs: op.vgs, vds: op.vds, id: op.id, region }, {
        hovertemplate: `operating point (${region})<br>${v.sym.vds} = %{x:.4g} ${xs.unit}<br>${v.sym.id} = %{y:.4g} ${ys.unit}<extra></extra>`,
      }),
    );
    const edgeV = model === "square-law" ? op.vgs - v.vt : vdsatAt(op.vgs);
    opText = ` Operating point: ${ps.vgs} = ${formatQuantity(op.vgs, "voltage")}, ${ps.vds} = ${formatQuantity(op.vds, "voltage")}, ${ps.id} = ${formatQuantity(op.id, "current")} (${region}; ${ps.vds} − ${model === "square-law" ? "VOV" : "VDsat"} = ${formatQuantity(op.vds - edgeV, "voltage")}).`;
  }

  const title = opts.title ?? `Output characteristics, ${v.name}`;
  const edge = v.lambda ? `ID = ½k·${ps.vds}²·(1 + λ·${ps.vds})` : `ID = ½k·${ps.vds}²`;
  const summary =
    `${title}: ${ps.id} against ${ps.vds} from 0 to ${formatQuantity(opts.vdsMax, "voltage")} for ${ps.vgs} = ${drives.map((g) => formatQuantity(g, "voltage")).join(", ")}` +
    (model === "square-law"
      ? ` (square law, k = ${formatQuantity(v.k, "transconductanceParameter")}, ${ps.vt} = ${formatQuantity(v.vt, "voltage")}, λ = ${formatQuantity(v.lambda, "inverseVoltage")}, VSB = ${formatQuantity(v.vsb, "voltage")}).` +
        ` Dashed: the triode/saturation edge ${ps.vds} = VOV, ${edge}.${loadText}${opText}`
      : ` (${models[model].title}, ${ps.vt} = ${formatQuantity(v.vt, "voltage")}, VSB = ${formatQuantity(v.vsb, "voltage")}). Dashed: the triode/saturation edge ${ps.vds} = VDsat, the model's own saturation voltage.${loadText}${opText}`);

  return {
    schema: plotSchema,
    kind: "output-characteristics",
    title,
    summary,
    axes: { x: axisInfo(v.pmos ? "VSD" : "VDS", "voltage", xs), y: axisInfo(v.pmos ? "|ID|" : "ID", "current", ys) },
    figure: {
      data,
      layout: baseLayout(title, { title: { text: axisTitle(v.sym.vds, xs.unit) }, range: [0, opts.vdsMax / xs.divisor] }, { title: { text: axisTitle(v.sym.id, ys.unit) }, range: [0, yMax / ys.divisor] }),
      config: baseConfig("output-characteristics"),
    },
  };
}

/**
 * The load curve of a diode-connected device (gate tied to drain) between the
 * supply rail and this device's drain: at each VDS of the driver the load sees
 * VGS = VDS = supply − VDS in its own polarity. `vsb` gives the load's
 * source-body voltage for a driver VDS (0 when its body is tied to its source).
 */
export function diodeLoadCurve(
  load: Device,
  supply: number,
  opts: { vdsMax?: number; points?: number; clm?: ClmMode; vsb?: (driverVds: number) => number; label?: string } = {},
): LoadCurve {
  requirePositive(supply, "diodeLoadCurve.supply", "a supply voltage > 0 V");
  const x = sweep(0, Math.min(opts.vdsMax ?? supply, supply), opts.points ?? 161, "diodeLoadCurve");
  const id = x.map((vds) => {
    const v = deviceView(load, opts.vsb ? opts.vsb(vds) : 0, opts.clm ?? "continuous", "diodeLoadCurve");
    const over = supply - vds;
    return v.current(over, over);
  });
  return { vds: x, id, label: opts.label ?? `diode-connected load ${load.card.name || load.card.polarity.toUpperCase()}` };
}
