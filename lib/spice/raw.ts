/**
 * ngspice raw files (the `write` command's output), binary or ascii, real plots.
 *
 * Method: the text header (Title, Plotname, Flags, No. Variables, No. Points,
 * Variables) is read line by line; binary data are little-endian float64 in point
 * order (one row of all variables per point), which keeps the simulator's full
 * double precision; ascii data are read with `Number`. Several plots in one file
 * follow one another. Complex plots are refused (pinchoff writes only real ones).
 * Failure mode: a truncated or malformed file throws a `PinchoffError("io")`
 * naming the file and what was missing.
 */
import { PinchoffError } from "../errors.js";

export interface RawPlot {
  readonly title: string;
  readonly plotname: string;
  /** Variable names in file order, lower case as ngspice writes them (`v(d)`, `@m1[gm]`, `i(@m1[id])`). */
  readonly names: readonly string[];
  /** One column per variable, `points` long. */
  readonly columns: readonly Float64Array[];
  readonly points: number;
}

/** The column of a variable by name, or a clear error listing what the plot holds. */
export function column(plot: RawPlot, name: string, origin = "raw file"): Float64Array {
  const i = plot.names.indexOf(name.toLowerCase());
  if (i < 0) throw new PinchoffError("io", `no vector ${JSON.stringify(name)} in plot "${plot.plotname}" (has ${plot.names.join(", ")})`, origin);
  return plot.columns[i]!;
}

/** Parse every plot in a raw file. */
export function parseRaw(buf: Uint8Array, origin = "raw file"): RawPlot[] {
  const plots: RawPlot[] = [];
  const bytes = Buffer.from(buf.buffer, buf.byteOffset, buf.byteLength);
  let pos = 0;
  const fail = (what: string): never => {
    throw new PinchoffError("io", `malformed ngspice raw file: ${what}`, origin);
  };
  while (pos < bytes.length) {
    // Skip blank space between plots.
    while (pos < bytes.length && (bytes[pos] === 10 || bytes[pos] === 13 || bytes[pos] === 32)) pos++;
    if (pos >= bytes.length) break;
    const header: Record<string, string> = {};
    const names: string[] = [];
    let mode: "binary" | "ascii" | undefined;
    let nvars = -1;
    let npoints = -1;
    while (mode === undefined) {
      const nl = bytes.indexOf(10, pos);
      if (nl < 0) fail("header ends before the data");
      const line = bytes.toString("latin1", pos, nl).replace(/\r$/, "");
      pos = nl + 1;
      if (line === "Binary:") mode = "binary";
      else if (line === "Values:") mode = "ascii";
      else if (line === "Variables:") {
        if (nvars < 0) fail("Variables before No. Variables");
        for (let k = 0; k < nvars; k++) {
          const e = bytes.indexOf(10, pos);
          if (e < 0) fail("variable list cut short");
          const parts = bytes.toString("latin1", pos, e).trim().split(/\s+/);
          pos = e + 1;
          if (parts.length < 3 || Number(parts[0]) !== k) fail(`variable ${k} line`);
          names.push(parts[1]!.toLowerCase());
        }
      } else {
        const m = /^([^:]+):\s*(.*)$/.exec(line);
        if (m) header[m[1]!.trim()] = m[2]!.trim();
        if (m?.[1] === "No. Variables") nvars = Number(m[2]);
        if (m?.[1] === "No. Points") npoints = Number(m[2]);
      }
    }
    if (!(nvars > 0) || !(npoints >= 0) || names.length !== nvars) fail("variable or point count");
    if (/complex/i.test(header.Flags ?? "")) fail("complex plots are not read");
    const columns = Array.from({ length: nvars }, () => new Float64Array(npoints));
    if (mode === "binary") {
      const need = nvars * npoints * 8;
      if (pos + need > bytes.length) fail(`binary data cut short (${bytes.length - pos} of ${need} bytes)`);
      const view = new DataView(bytes.buffer, bytes.byteOffset + pos, need);
      for (let p = 0, o = 0; p < npoints; p++) for (let v = 0; v < nvars; v++, o += 8) columns[v]![p] = view.getFloat64(o, true);
      pos += need;
    } else {
      for (let p = 0; p < npoints; p++)
        for (let v = 0; v < nvars; v++) {
          const nl = bytes.indexOf(10, pos);
          const end = nl < 0 ? bytes.length : nl;
          const parts = bytes.toString("latin1", pos, end).trim().split(/\s+/);
          pos = end + 1;
          const x = Number(parts[parts.length - 1]);
          if (!Number.isFinite(x)) fail(`value at point ${p}, variable ${names[v]}`);
          columns[v]![p] = x;
        }
    }
    plots.push({ title: header.Title ?? "", plotname: header.Plotname ?? "", names, columns, points: npoints });
  }
  return plots;
}
