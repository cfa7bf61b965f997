/**
 * Measured (or simulated) I–V sweeps from CSV, parsed with csv-parse.
 *
 * Two layouts are accepted:
 * - long: one row per point, columns for the drain current and the terminal
 *   voltages (and optionally W, L, corner, temperature), e.g. the open 180 nm
 *   data `W (um), L (um), corner, temp, vds, vgs, vbs, id`;
 * - wide: one column for the swept voltage and one current column per sweep,
 *   its fixed voltage in the header, e.g. `vgs (V), id (mA) @ vds=0.1, id (mA) @ vds=1`.
 * Units come from the header (`id (mA)`, `W (um)`) or from `units`; a missing
 * unit means the SI base unit, except temperature, which means °C (common
 * practice in data files). Values absent from the file (a bench sweep with no
 * VBS column) come from `fixed`. The input is only read; errors name the file,
 * the line and the column. The result is column arrays in SI (Float64Array),
 * temperature in kelvin.
 */
import { readFileSync } from "node:fs";
import { parse } from "csv-parse/sync";
import { InputError, PinchoffError } from "../errors.js";

/** The quantities a measurement file can hold, one column each in the long layout. */
export const measuredColumns = ["w", "l", "corner", "temp", "vgs", "vds", "vbs", "id"] as const;
export type MeasuredColumn = (typeof measuredColumns)[number];
type NumericColumn = Exclude<MeasuredColumn, "corner">;

/** Points of one file, column-wise, SI units, temperature in K, SPICE signs (id into the drain). */
export interface MeasuredSet {
  readonly origin: string;
  readonly count: number;
  readonly w: Float64Array;
  readonly l: Float64Array;
  readonly temp: Float64Array;
  readonly vgs: Float64Array;
  readonly vds: Float64Array;
  readonly vbs: Float64Array;
  readonly id: Float64Array;
  readonly corner: readonly string[];
  /** File line of each point (1-based, the header is line 1), for error messages. */
  readonly line: Int32Array;
}

export interface ReadOptions {
  /** Header name in the file for each quantity, when it is not the quantity's own name (case-insensitive). */
  readonly columns?: Partial<Record<MeasuredColumn, string>>;
  /** Unit of each quantity when the header does not give one (e.g. `{ id: "mA" }`). */
  readonly units?: Partial<Record<NumericColumn, string>>;
  /** Values for quantities the file does not hold, in SI (temperature in K, W and L in m). */
  readonly fixed?: Partial<Record<NumericColumn, number>> & { readonly corner?: string };
}

// Powers of ten, applied by division for small prefixes so 10 um reads as exactly 1e-5 m.
const prefixes: Record<string, number> = { f: -15, p: -12, n: -9, u: -6, µ: -6, μ: -6, m: -3, "": 0, k: 3, M: 6 };
const baseUnit: Record<NumericColumn, string> = { w: "m", l: "m", temp: "K", vgs: "V", vds: "V", vbs: "V", id: "A" };

/** Scale and offset from a unit string to SI for one quantity; throws naming where the unit came from. */
export function unitToSI(column: NumericColumn, unit: string, origin: string): { scale: number; offset: number } {
  const c = unitConversion(column, unit, origin);
  return { scale: c.power < 0 ? 1 / 10 ** -c.power : 10 ** c.power, offset: c.offset };
}

function unitConversion(column: NumericColumn, unit: string, origin: string): { power: number; offset: number } {
  const u = unit.trim();
  if (column === "temp") {
    if (u === "" || /^(°C|degC|C|deg C|celsius)$/i.test(u)) return { power: 0, offset: 273.15 };
    if (/^K$/i.test(u)) return { power: 0, offset: 0 };
    throw new InputError(unit, "a temperature unit: °C, degC or K", origin);
  }
  const base = baseUnit[column];
  if (u === "") return { power: 0, offset: 0 };
  if (u.endsWith(base)) {
    const p = prefixes[u.slice(0, -base.length)];
    if (p !== undefined) return { power: p, offset: 0 };
  }
  throw new InputError(unit, `a unit of ${base} with an SI prefix (f p n u m k M), e.g. m${base}`, origin);
}

interface HeaderCell {
  readonly index: number;
  readonly column: MeasuredColumn;
  readonly unit: string;
  /** Wide layout: the fixed voltage of this current column. */
  readonly at?: { readonly column: NumericColumn; readonly value: number };
}

const headerPattern = /^\s*([^()@]+?)\s*(?:\(([^)]*)\))?\s*(?:@\s*(vgs|vds|vbs|temp)\s*=\s*([-+0-9.eE]+)\s*([^\s]*))?\s*$/i;

function readHeader(header: readonly string[], opts: ReadOptions, origin: string): HeaderCell[] {
  const byName = new Map<string, MeasuredColumn>();
  for (const c of measuredColumns) byName.set((opts.columns?.[c] ?? c).toLowerCase(), c);
  const cells: HeaderCell[] = [];
  header.forEach((raw, index) => {
    const m = headerPattern.exec(raw);
    if (!m) return;
    const name = m[1]!.toLowerCase();
    const column = byName.get(name) ?? byName.get(raw.trim().toLowerCase());
    if (!column) return; // other columns are kept out of the way, not an error
    const unit = m[2] ?? (column === "corner" ? "" : (opts.units?.[column] ?? ""));
    if (column !== "corner") unitToSI(column, unit, `${origin}: line 1, column ${index + 1} "${raw}"`);
    if (m[3]) {
      if (column !== "id") throw new InputError(raw, `"@ <voltage>=<value>" only on current columns (wide layout: "id (mA) @ vds=0.1")`, `${origin}: line 1, column ${index + 1}`);
      const atColumn = m[3].toLowerCase() as NumericColumn;
      const conv = unitToSI(atColumn, m[5] ?? "", `${origin}: line 1, column ${index + 1} "${raw}"`);
      cells.push({ index, column, unit, at: { column: atColumn, value: Number(m[4]) * conv.scale + conv.offset } });
    } else cells.push({ index, column, unit });
  });
  return cells;
}

/** Parse CSV text; `origin` names the file in errors. */
export function parseMeasurements(text: string, origin: string, opts: ReadOptions = {}): MeasuredSet {
  let rows: string[][];
  let lines: number[];
  try {
    const recs = parse(text, { skip_empty_lines: true, trim: true, relax_column_count: false, comment: "#", bom: true, info: true }) as unknown as { record: string[]; info: { lines: number } }[];
    rows = recs.map((x) => x.record);
    lines = recs.map((x) => x.info.lines);
  } catch (e) {
    const err = e as { lines?: number; message: string };
    throw new PinchoffError("unparseable", `not a readable CSV file (${err.message})`, err.lines ? `${origin}: line ${err.lines}` : origin);
  }
  if (rows.length === 0) throw new InputError("an empty file", "a header line and data lines", origin);
  const header = rows[0]!;
  const cells = readHeader(header, opts, origin);
  const idCells = cells.filter((c) => c.column === "id");
  if (idCells.length === 0) {
    // the open 180 nm kit ships a description of its sweeps beside the measurements (data/pdk180/SOURCE.md)
    const sweepList = header.some((h) => h.trim().toLowerCase() === "sweeps") && header.some((h) => h.trim().toLowerCase() === "const_var");
    const hint = sweepList ? "; this looks like a list of the sweeps measured (const_var, sweeps), not the measurements: the currents are in the matching *_meas_id.csv" : "";
    throw new InputError(header.join(","), `a drain-current column ("id", "id (mA)", or "id (A) @ vds=0.1" per sweep; map another name with columns.id)${hint}`, `${origin}: line 1`);
  }
  const wide = idCells.some((c) => c.at);
  if (wide && idCells.some((c) => !c.at)) throw new InputError(header.join(","), "either one current column (long layout) or every current column with its fixed voltage (wide layout), not both", `${origin}: line 1`);
  if (!wide && idCells.length > 1) throw new InputError(header.join(","), "one drain-current column (two have the same name)", `${origin}: line 1`);
  const single = new Map<MeasuredColumn, HeaderCell>();
  for (const c of cells) {
    if (c.column === "id") continue;
    if (single.has(c.column)) throw new InputError(header[c.index], `one column for ${c.column}`, `${origin}: line 1, column ${c.index + 1}`);
    single.set(c.column, c);
  }
  // Every voltage and the geometry must come from a column, a wide header or `fixed`.
  for (const q of ["vgs", "vds", "vbs", "w", "l", "temp"] as const) {
    if (single.has(q) || idCells.every((c) => c.at?.column === q) || opts.fixed?.[q] !== undefined) continue;
    if (q === "vbs") continue; // body tied to the source when the file says nothing
    if (q === "temp") continue; // 25 °C when the file says nothing (stated in the result's origin)
    const hint = q === "w" || q === "l" ? `; give it with fixed.${q} (in m) or --${q}` : `; give it with fixed.${q}`;
    throw new InputError(header.join(","), `a "${q}" column${hint}`, `${origin}: line 1`);
  }
  const n = (rows.length - 1) * idCells.length;
  const out = {
    w: new Float64Array(n), l: new Float64Array(n), temp: new Float64Array(n),
    vgs: new Float64Array(n), vds: new Float64Array(n), vbs: new Float64Array(n), id: new Float64Array(n),
  };
  const corner: string[] = new Array(n);
  const line = new Int32Array(n);
  const conv = new Map<HeaderCell, { power: number; offset: number }>();
  for (const c of cells) if (c.column !== "corner") conv.set(c, unitConversion(c.column, c.unit, origin));
  const num = (row: string[], c: HeaderCell, r: number): number => {
    // csv-parse counts the line a record ends on
    const s = row[c.index] ?? "";
    const v = Number(s);
    if (s === "" || !Number.isFinite(v)) throw new InputError(s, `a number in ${c.unit || baseUnit[c.column as NumericColumn]}`, `${origin}: line ${lines[r]}, column ${c.index + 1} "${header[c.index]}"`);
    const k = conv.get(c)!;
    return (k.power < 0 ? v / 10 ** -k.power : v * 10 ** k.power) + k.offset;
  };
  const defaults: Record<NumericColumn, number> = { w: NaN, l: NaN, temp: 298.15, vgs: NaN, vds: NaN, vbs: 0, id: NaN };
  let k = 0;
  for (let r = 1; r < rows.length; r++) {
    const row = rows[r]!;
    const base: Record<NumericColumn, number> = { ...defaults };
    for (const q of ["w", "l", "temp", "vgs", "vds", "vbs"] as const) {
      const c = single.get(q);
      base[q] = c ? num(row, c, r) : (opts.fixed?.[q] ?? defaults[q]);
    }
    const cc = single.get("corner");
    const cornerName = cc ? (row[cc.index] ?? "") : (opts.fixed?.corner ?? "");
    for (const c of idCells) {
      const i = num(row, c, r);
      const v = c.at ? { ...base, [c.at.column]: c.at.value } : base;
      out.w[k] = v.w; out.l[k] = v.l; out.temp[k] = v.temp;
      out.vgs[k] = v.vgs; out.vds[k] = v.vds; out.vbs[k] = v.vbs; out.id[k] = i;
      corner[k] = cornerName;
      line[k] = lines[r]!;
      k++;
    }
  }
  return { origin, count: n, ...out, corner, line };
}

/** Read a CSV file (never written). */
export function readMeasurements(path: string, opts: ReadOptions = {}): MeasuredSet {
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (e) {
    throw new PinchoffError("io", `cannot read the measurement file (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`, path);
  }
  return parseMeasurements(text, path, opts);
}
