/**
 * The region test: cutoff, triode or saturation, and the margins that decide it.
 * All comparisons are on magnitudes in the device's own polarity.
 */
export const regions = ["cutoff", "triode", "saturation"] as const;
export type Region = (typeof regions)[number];

/** Region from overdrive and drain-source voltage (both in device polarity, VDS ≥ 0). */
export function regionOf(vov: number, vds: number): Region {
  if (vov <= 0) return "cutoff";
  return vds < vov ? "triode" : "saturation";
}

/** Why the region is what it is, in words an engineer would write on the page. */
export function regionReason(region: Region, vov: number, vds: number, pmos: boolean): string {
  const gs = pmos ? "VSG" : "VGS";
  const ds = pmos ? "VSD" : "VDS";
  const vt = pmos ? "|Vt|" : "Vt";
  const f = (x: number) => `${+x.toPrecision(4)} V`;
  switch (region) {
    case "cutoff":
      return `${gs} − ${vt} = ${f(vov)} ≤ 0: no channel is formed, so the device is in cutoff.`;
    case "triode":
      return `${gs} − ${vt} = ${f(vov)} > 0 and ${ds} = ${f(vds)} < VOV: the channel reaches the drain, so the device is in triode (VDS short of VOV by ${f(vov - vds)}).`;
    case "saturation":
      return `${gs} − ${vt} = ${f(vov)} > 0 and ${ds} = ${f(vds)} ≥ VOV: the channel is pinched off at the drain, so the device is in saturation (margin VDS − VOV = ${f(vds - vov)}).`;
  }
}

/** The region sentence for a model with its own saturation voltage VDsat (and, for EKV, an inversion coefficient). */
export function modelRegionReason(region: Region, vov: number, vds: number, vdsat: number, pmos: boolean, ic?: number): string {
  const gs = pmos ? "VSG" : "VGS";
  const ds = pmos ? "VSD" : "VDS";
  const vt = pmos ? "|Vt|" : "Vt";
  const f = (x: number) => `${+x.toPrecision(4)} V`;
  const level = ic === undefined ? "" : ` The channel is in ${ic < 0.1 ? "weak" : ic > 10 ? "strong" : "moderate"} inversion (IC = ${+ic.toPrecision(3)}).`;
  switch (region) {
    case "cutoff":
      return `${gs} − ${vt} = ${f(vov)} ≤ 0: no channel is formed, so the device is in cutoff.`;
    case "triode":
      return `${ds} = ${f(vds)} < VDsat = ${f(vdsat)}: the channel reaches the drain, so the device is in triode (short of VDsat by ${f(vdsat - vds)}).${level}`;
    case "saturation":
      return `${ds} = ${f(vds)} ≥ VDsat = ${f(vdsat)}: the channel is pinched off or velocity-saturated at the drain, so the device is in saturation (margin ${ds} − VDsat = ${f(vds - vdsat)}).${level}`;
  }
}
