/**
 * What the plots need to know about a device, all in the device's own polarity
 * (magnitudes VSG, VSD, source→drain current for a PMOS), so one set of figure
 * builders serves both polarities. Numbers come from lib/device.
 */
import { InputError, requireFinite, requireNonNegative } from "../errors.js";
import { checkDevice, defaultPhi, polaritySign, type Device } from "../device/card.js";
import { drainCurrent, type ClmMode, type OperatingPoint } from "../device/drain-current.js";
import { thresholdMagnitude } from "../device/threshold.js";
import type { SqrtVolts, Volts } from "../quantity.js";

/** A bias point in device polarity: gate drive, drain-source voltage, channel current. */
export interface PlotPoint {
  readonly vgs: number;
  readonly vds: number;
  readonly id: number;
  /** Source-body voltage in device polarity; 0 when omitted. */
  readonly vsb?: number;
}

export const isOperatingPoint = (p: PlotPoint | OperatingPoint): p is OperatingPoint => "vdsDevice" in p;

/** Accept either a lib/device OperatingPoint or a plain point; reject non-finite numbers. */
export function plotPoint(p: PlotPoint | OperatingPoint, origin: string): PlotPoint {
  if (!p || typeof p !== "object") throw new InputError(p, "an operating point (from operatingPoint()) or { vgs, vds, id }", origin);
  const q: PlotPoint = isOperatingPoint(p)
    ? { vgs: p.vgsDevice, vds: p.vdsDevice, id: p.channelCurrent, vsb: p.vsbDevice }
    : p;
  requireFinite(q.vgs, `${origin}.vgs`, "a finite gate drive in V");
  requireFinite(q.vds, `${origin}.vds`, "a finite drain-source voltage in V");
  requireFinite(q.id, `${origin}.id`, "a finite drain current in A");
  if (q.vsb !== undefined) requireFinite(q.vsb, `${origin}.vsb`, "a finite source-body voltage in V");
  return q;
}

export interface DeviceView {
  readonly dev: Device;
  readonly pmos: boolean;
  readonly clm: ClmMode;
  readonly vsb: number;
  /** |Vt| at this VSB. */
  readonly vt: number;
  readonly k: number;
  readonly lambda: number;
  /** Channel current (device polarity) at device-polarity gate drive and VDS. */
  current(vgs: number, vds: number): number;
  /** Symbols for axis titles. */
  readonly sym: { readonly vgs: string; readonly vds: string; readonly id: string; readonly vt: string };
  readonly name: string;
}

export function deviceView(device: Device, vsb: number, clm: ClmMode, origin: string): DeviceView {
  const dev = checkDevice(device, `${origin}.device`);
  requireFinite(vsb, `${origin}.vsb`, "a finite source-body voltage in V");
  if (clm !== "continuous" && clm !== "saturation-only") throw new InputError(clm, `"continuous" or "saturation-only"`, `${origin}.clm`);
  const c = dev.card;
  const s = polaritySign(c);
  const pmos = s < 0;
  const vt = thresholdMagnitude((s * c.vt0) as Volts, (c.gamma ?? 0) as SqrtVolts, (c.phi ?? defaultPhi) as Volts, vsb as Volts);
  return {
    dev,
    pmos,
    clm,
    vsb,
    vt,
    k: (c.kp * dev.w) / dev.l,
    lambda: c.lambda ?? 0,
    current: (vgs, vds) => s * drainCurrent(dev, s * vgs, s * vds, s * vsb, clm),
    sym: pmos
      ? { vgs: "V<sub>SG</sub>", vds: "V<sub>SD</sub>", id: "|I<sub>D</sub>|", vt: "|V<sub>t</sub>|" }
      : { vgs: "V<sub>GS</sub>", vds: "V<sub>DS</sub>", id: "I<sub>D</sub>", vt: "V<sub>t</sub>" },
    name: c.name || (pmos ? "PMOS" : "NMOS"),
  };
}

/** Plain-text symbol names for summaries. */
export const plainSym = (v: DeviceView) =>
  v.pmos ? { vgs: "VSG", vds: "VSD", id: "|ID|", vt: "|Vt|" } : { vgs: "VGS", vds: "VDS", id: "ID", vt: "Vt" };

/** What every device sweep takes besides its own range. */
export interface SweepOptions {
  readonly points?: number;
  /** Source-body voltage (device polarity); the operating point's when omitted, else 0. */
  readonly vsb?: number;
  readonly clm?: ClmMode;
  /** Drawn as a marker. */
  readonly operatingPoint?: PlotPoint | OperatingPoint;
  readonly title?: string;
}

/** Check a sweep's options object and set up the device view (and the operating point, when given). */
export function sweepSetup(dev: Device, opts: SweepOptions, expected: string, origin: string): { op: PlotPoint | undefined; v: DeviceView; ps: ReturnType<typeof plainSym> } {
  if (!opts || typeof opts !== "object") throw new InputError(opts, expected, origin);
  const op = opts.operatingPoint ? plotPoint(opts.operatingPoint, `${origin}.operatingPoint`) : undefined;
  const v = deviceView(dev, opts.vsb ?? op?.vsb ?? 0, opts.clm ?? "continuous", origin);
  return { op, v, ps: plainSym(v) };
}

/** The fixed VDS of a sweep against the gate drive: given, or the operating point's. */
export function fixedVds(vds: number | undefined, op: PlotPoint | undefined, ps: ReturnType<typeof plainSym>, origin: string): number {
  const x = vds ?? op?.vds;
  if (x === undefined) throw new InputError(x, `a fixed ${ps.vds} in V (or an operating point to take it from)`, `${origin}.vds`);
  return requireNonNegative(x, `${origin}.vds`, `a fixed ${ps.vds} ≥ 0 V in the device's polarity`);
}
