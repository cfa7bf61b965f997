/**
 * Device characterisation: a process library's transistor swept over VGS, VDS
 * and VSB for a set of L at a reference W, read back as per-width tables.
 *
 * Method: one ngspice deck per core, each holding a share of the lengths: one
 * instance per (L, VSB) on shared gate and drain sources, so one library load and
 * one nested `dc` sweep (VGS inner, VDS outer) give every point of those lengths,
 * written to one binary raw file (full double precision). Saved device outputs (BSIM4 in ngspice 39):
 * `@m1[id]`, `gm`, `gds`, `gmbs`, `vth`, `vdsat`, `cgg`, `cgs`, `cgd`. Values are
 * stored in the device's own polarity as magnitudes (PMOS sweeps run with negative
 * VGS, VDS and positive VBS), per unit width (A/m, S/m, F/m); Cgs and Cgd are the
 * capacitances −∂Qg/∂Vs and −∂Qg/∂Vd (BSIM4 reports the signed derivatives).
 * Decks run in parallel, one per core (`jobs`, default `availableParallelism()`;
 * the runner also never starts more ngspice processes than cores).
 * Cache: keyed by a SHA-256 fingerprint of the library and include files' bytes,
 * section, device, W, temperature and grid, in `$PINCHOFF_CACHE`, else
 * `$XDG_CACHE_HOME/pinchoff`, else `~/.cache/pinchoff` (folder `characterisation/`).
 * A cached table is a JSON header plus a float64 file; a damaged cache entry is
 * ignored and rewritten. Failure modes: the runner's typed errors (no ngspice, bad
 * library, section or device, timeout); a grid outside the process's L range or
 * supply maximum is an `InputError`.
 */
import { join } from "node:path";
import { InputError } from "../errors.js";
import type { Meters } from "../quantity.js";
import { canonicalJson } from "../record/fingerprint.js";
import { nodeCrypto, nodeFs, nodeOs } from "../io/lazy-builtins.js";
import { element, includeLine, libLine, spiceNumber, writeDeck } from "../spice/deck.js";
import { column } from "../spice/raw.js";
import { runDeck } from "../spice/run.js";
import { checkGeometry, cornerSection, type Polarity, type ProcessDescription } from "./description.js";

const { mkdirSync, readFileSync, renameSync, writeFileSync } = nodeFs;

/** The stored quantities, per point, in device polarity (magnitudes), per unit width where a width enters. */
export const tableQuantities = ["idw", "gmw", "gdsw", "gmbw", "vth", "vdsat", "cggw", "cgsw", "cgdw"] as const;
export type TableQuantity = (typeof tableQuantities)[number];

export interface SweepGrid {
  /** Drawn lengths (m), ascending. */
  readonly l: readonly number[];
  /** |VGS|, |VDS|, |VSB| grid points (V), ascending, evenly spaced. */
  readonly vgs: readonly number[];
  readonly vds: readonly number[];
  readonly vsb: readonly number[];
}

/** A characterisation table: one device of one process at one corner and temperature. */
export interface DeviceTable {
  readonly kind: "pinchoff-device-table";
  readonly version: 1;
  readonly process: string;
  readonly polarity: Polarity;
  readonly model: string;
  readonly library: string;
  readonly section: string;
  readonly temperature: number;
  /** Reference width of the swept device (m). */
  readonly w: number;
  readonly grid: SweepGrid;
  /** SHA-256 (hex) of the library bytes, section, device, W, temperature and grid. */
  readonly fingerprint: string;
  /** Index order [l][vsb][vds][vgs], VGS fastest. */
  readonly data: Readonly<Record<TableQuantity, Float64Array>>;
}

/** An evenly spaced grid from `a` to `b` with `n` points. */
export const evenGrid = (a: number, b: number, n: number): number[] => Array.from({ length: n }, (_, i) => (n === 1 ? a : a + ((b - a) * i) / (n - 1)));

/**
 * Lengths no more than 25 % apart from 0.28 µm to 10 µm: between lengths a factor 2
 * apart, gm/ID sizing misses its current by up to 8 % (measured on the open 180 nm
 * kit); at 25 % steps by under 1 %.
 */
export const defaultLengths = [0.28, 0.35, 0.42, 0.5, 0.6, 0.7, 0.85, 1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6.5, 8, 10].map((x) => x * 1e-6);

/** The default grid: the default lengths, VGS 0…supply in 67 points, VDS 0…supply in 34, VSB 0…1.2 V in 5. */
export function defaultGrid(p: ProcessDescription, polarity: Polarity): SweepGrid {
  const v = p.supply.nominal;
  const r = p.devices[polarity].l;
  const ls = defaultLengths.filter((x) => x >= r.min && x <= r.max);
  return { l: ls.length ? ls : [r.min], vgs: evenGrid(0, v, 67), vds: evenGrid(0, v, 34), vsb: evenGrid(0, Math.min(1.2, v / 2), 5) };
}

export interface CharacterizeOptions {
  readonly polarity: Polarity;
  readonly grid?: SweepGrid;
  /** Reference width (m); default 10 µm, inside the process's W range. */
  readonly w?: number;
  readonly corner?: string;
  /** Override the cache folder; `false` disables the cache. */
  readonly cache?: string | false;
  /** Parallel decks; default the machine's cores. */
  readonly jobs?: number;
  /** Called as decks finish (done, total). */
  readonly progress?: (done: number, total: number) => void;
  readonly timeoutMs?: number;
}

/** The cache folder (documented in the module header). */
export function cacheFolder(env: NodeJS.ProcessEnv = process.env): string {
  if (env.PINCHOFF_CACHE) return env.PINCHOFF_CACHE;
  const base = env.XDG_CACHE_HOME || join(nodeOs().homedir(), ".cache");
  return join(base, "pinchoff");
}

function checkGrid(p: ProcessDescription, polarity: Polarity, g: SweepGrid): void {
  const axis = (xs: readonly number[], name: string, lo: number, hi: number) => {
    if (!Array.isArray(xs) || xs.length === 0) throw new InputError(xs, "a non-empty list of numbers", `grid.${name}`);
    xs.forEach((x, i) => {
      if (typeof x !== "number" || !Number.isFinite(x) || x < lo - 1e-12 || x > hi + 1e-12) throw new InputError(x, `a value from ${lo} to ${hi}`, `grid.${name}[${i}]`);
      if (i > 0 && !(x > xs[i - 1]!)) throw new InputError(x, `ascending values (after ${xs[i - 1]})`, `grid.${name}[${i}]`);
    });
  };
  g.l.forEach((l, i) => checkGeometry(p, polarity, "l", l, `grid.l[${i}]`));
  axis(g.l, "l", 0, 1);
  axis(g.vgs, "vgs", 0, p.supply.max);
  axis(g.vds, "vds", 0, p.supply.max);
  axis(g.vsb, "vsb", 0, p.supply.max);
  for (const [name, xs] of [["vgs", g.vgs], ["vds", g.vds], ["vsb", g.vsb]] as const)
    if (xs.length > 1) {
      const h = (xs[xs.length - 1]! - xs[0]!) / (xs.length - 1);
      xs.forEach((x, i) => {
        if (Math.abs(x - (xs[0]! + h * i)) > 1e-9 * Math.max(1, Math.abs(h))) throw new InputError(x, `evenly spaced values (step ${h} V)`, `grid.${name}[${i}]`);
      });
    }
}

/** The fingerprint of a characterisation: library and include bytes, section, device, W, temperature, grid. */
export function tableFingerprint(p: ProcessDescription, polarity: Polarity, section: string, w: number, grid: SweepGrid): string {
  const h = nodeCrypto().createHash("sha256");
  h.update("pinchoff-device-table/1\n");
  for (const f of [p.library.file, ...p.includes]) h.update(readFileSync(f));
  h.update(canonicalJson({ section, model: p.devices[polarity].model, polarity, w, temperature: p.temperature, grid }));
  return h.digest("hex");
}

/** The vectors saved per swept instance, with the raw-file name each comes back under. */
const savedOutputs = [
  ["idw", "id", "i"],
  ["gmw", "gm", ""],
  ["gdsw", "gds", ""],
  ["gmbw", "gmbs", ""],
  ["vth", "vth", "v"],
  ["vdsat", "vdsat", "v"],
  ["cggw", "cgg", ""],
  ["cgsw", "cgs", ""],
  ["cgdw", "cgd", ""],
] as const satisfies ReadonlyArray<readonly [TableQuantity, string, "" | "i" | "v"]>;

/** The instance sweeping length `i` (of the deck's lengths) at VSB index `k`. */
const instanceName = (i: number, k: number): string => `M${i}_${k}`;

/**
 * The deck for a group of lengths: one instance per (L, VSB) on shared gate and
 * drain nodes, each VSB on its own body source, so a single nested `dc` (VGS
 * inner, VDS outer) sweeps them all after one library load and writes one binary
 * raw file, `table.raw`, holding only the saved device outputs and the two swept
 * voltages. Every terminal is held by an ideal source, so the instances do not
 * load one another: each point is the operating point of each device alone.
 */
export function characterisationDeck(p: ProcessDescription, polarity: Polarity, section: string, w: number, ls: readonly number[], grid: SweepGrid): string {
  const s = polarity === "nmos" ? 1 : -1;
  const range = (xs: readonly number[]) => {
    const h = xs.length > 1 ? (xs[xs.length - 1]! - xs[0]!) / (xs.length - 1) : 1;
    return `${spiceNumber(s * xs[0]!)} ${spiceNumber(s * xs[xs.length - 1]!)} ${spiceNumber(s * h)}`;
  };
  const lines = [libLine(p.library.file, section), ...p.includes.map((f) => includeLine(f)), `.temp ${spiceNumber(p.temperature)}`, element("VD", ["d", "0"], 0), element("VG", ["g", "0"], 0)];
  grid.vsb.forEach((vsb, k) => lines.push(element(`VB${k}`, [`b${k}`, "0"], -s * vsb)));
  const control = ["set filetype=binary", "save v(g) v(d)"];
  ls.forEach((l, i) =>
    grid.vsb.forEach((_, k) => {
      const m = instanceName(i, k);
      lines.push(element(m, ["d", "g", "0", `b${k}`], p.devices[polarity].model, { W: w, L: l }));
      control.push(`save ${savedOutputs.map(([, q]) => `@${m.toLowerCase()}[${q}]`).join(" ")}`);
    }),
  );
  control.push(`dc VG ${range(grid.vgs)} VD ${range(grid.vds)}`, "write table.raw", "quit 0");
  return writeDeck({
    title: `pinchoff characterisation: ${p.name} ${p.devices[polarity].model} W=${w} L=${ls.join(" ")} section ${section}`,
    lines,
    control,
  });
}

function readCache(folder: string, fp: string): DeviceTable | undefined {
  try {
    const head = JSON.parse(readFileSync(join(folder, `${fp}.json`), "utf8")) as Omit<DeviceTable, "data"> & { sizes: number };
    const bin = readFileSync(join(folder, `${fp}.bin`));
    const n = head.sizes;
    if (head.fingerprint !== fp || bin.byteLength !== n * 8 * tableQuantities.length) return undefined;
    const all = new Float64Array(bin.buffer.slice(bin.byteOffset, bin.byteOffset + bin.byteLength));
    const data = Object.fromEntries(tableQuantities.map((q, i) => [q, all.subarray(i * n, (i + 1) * n)])) as Record<TableQuantity, Float64Array>;
    const { sizes: _s, ...rest } = head;
    return { ...rest, data };
  } catch {
    return undefined;
  }
}

function writeCache(folder: string, t: DeviceTable): void {
  mkdirSync(folder, { recursive: true });
  const n = t.data.idw.length;
  const all = new Float64Array(n * tableQuantities.length);
  tableQuantities.forEach((q, i) => all.set(t.data[q], i * n));
  const { data: _d, ...head } = t;
  const tmp = join(folder, `.${t.fingerprint}.${process.pid}`);
  writeFileSync(`${tmp}.bin`, new Uint8Array(all.buffer));
  writeFileSync(`${tmp}.json`, JSON.stringify({ ...head, sizes: n }));
  renameSync(`${tmp}.bin`, join(folder, `${t.fingerprint}.bin`));
  renameSync(`${tmp}.json`, join(folder, `${t.fingerprint}.json`));
}

/** Characterise one device of a process (from the cache when the fingerprint matches). */
export async function characterize(p: ProcessDescription, opts: CharacterizeOptions): Promise<DeviceTable> {
  const polarity = opts.polarity;
  if (polarity !== "nmos" && polarity !== "pmos") throw new InputError(polarity, '"nmos" or "pmos"', "characterize polarity");
  const grid = opts.grid ?? defaultGrid(p, polarity);
  checkGrid(p, polarity, grid);
  const w = checkGeometry(p, polarity, "w", opts.w ?? Math.min(Math.max(10e-6, p.devices[polarity].w.min), p.devices[polarity].w.max), "characterize W") as Meters;
  const section = cornerSection(p, opts.corner);
  const fingerprint = tableFingerprint(p, polarity, section, w, grid);
  const folder = opts.cache === false ? undefined : join(opts.cache ?? cacheFolder(), "characterisation");
  if (folder) {
    const hit = readCache(folder, fingerprint);
    if (hit) return hit;
  }
  const nG = grid.vgs.length, nD = grid.vds.length, nB = grid.vsb.length;
  const perL = nG * nD * nB;
  const size = grid.l.length * perL;
  const data = Object.fromEntries(tableQuantities.map((q) => [q, new Float64Array(size)])) as Record<TableQuantity, Float64Array>;
  const s = polarity === "nmos" ? 1 : -1;
  let done = 0;
  // As many decks as cores (at most one per length), lengths dealt round-robin so each deck gets short and long ones.
  const jobs = Math.max(1, Math.min(opts.jobs ?? nodeOs().availableParallelism(), grid.l.length));
  const groups = Array.from({ length: jobs }, (_, j) => grid.l.map((_, li) => li).filter((li) => li % jobs === j));
  const one = async (group: readonly number[]) => {
    const ls = group.map((li) => grid.l[li]!);
    const origin = `${p.name} ${p.devices[polarity].model} L=${ls.join(", ")}`;
    const r = await runDeck({ deck: characterisationDeck(p, polarity, section, w, ls, grid), outputs: ["table.raw"], timeoutMs: opts.timeoutMs ?? 120000, origin });
    const plot = r.raw["table.raw"]![0]!;
    if (plot.points !== nG * nD) throw new InputError(plot.points, `${nG * nD} sweep points`, `table.raw of ${origin}`, "io");
    const vg = column(plot, "v(g)");
    const vd = column(plot, "v(d)");
    // Sanity: the sweep order is VGS fastest, as the table's index.
    if (Math.abs(s * vg[1 % plot.points]! - grid.vgs[1 % nG]!) > 1e-6 || Math.abs(s * vd[plot.points - 1]! - grid.vds[nD - 1]!) > 1e-6)
      throw new InputError(vg[1], `the sweep order VGS inside VDS`, `table.raw of ${origin}`, "io");
    group.forEach((li, i) => {
      for (let k = 0; k < nB; k++) {
        const m = instanceName(i, k).toLowerCase();
        const base = li * perL + k * nG * nD;
        for (const [q, name, kind] of savedOutputs) {
          const col = column(plot, kind ? `${kind}(@${m}[${name}])` : `@${m}[${name}]`);
          const out = data[q];
          // Magnitudes per width; Cgs and Cgd are −∂Qg/∂Vs and −∂Qg/∂Vd (BSIM4 reports the signed derivatives).
          if (q === "vth" || q === "vdsat") for (let x = 0; x < nG * nD; x++) out[base + x] = Math.abs(col[x]!);
          else if (q === "cggw") for (let x = 0; x < nG * nD; x++) out[base + x] = col[x]! / w;
          else if (q === "cgsw" || q === "cgdw") for (let x = 0; x < nG * nD; x++) out[base + x] = -col[x]! / w;
          else for (let x = 0; x < nG * nD; x++) out[base + x] = Math.abs(col[x]!) / w;
        }
      }
      opts.progress?.(++done, grid.l.length);
    });
  };
  await Promise.all(groups.map(one));
  const table: DeviceTable = { kind: "pinchoff-device-table", version: 1, process: p.name, polarity, model: p.devices[polarity].model, library: p.library.file, section, temperature: p.temperature, w, grid, fingerprint, data };
  if (folder) writeCache(folder, table);
  return table;
}

/** The table as CSV: one row per point, derived ratios and fT included. */
export function tableCsv(t: DeviceTable): string {
  const { l, vgs, vds, vsb } = t.grid;
  const rows = ["l_m,vsb_v,vds_v,vgs_v,id_per_w_a_m,gm_id_s_a,gds_id_s_a,gm_gds,vth_v,vdsat_v,cgg_per_w_f_m,cgs_per_w_f_m,cgd_per_w_f_m,ft_hz"];
  let i = 0;
  const r = (x: number) => (Number.isFinite(x) ? String(x) : "");
  for (const L of l)
    for (const b of vsb)
      for (const d of vds)
        for (const g of vgs) {
          const id = t.data.idw[i]!, gm = t.data.gmw[i]!, gds = t.data.gdsw[i]!, cgg = t.data.cggw[i]!;
          rows.push([L, b, d, g, id, id > 0 ? gm / id : NaN, id > 0 ? gds / id : NaN, gds > 0 ? gm / gds : NaN, t.data.vth[i]!, t.data.vdsat[i]!, cgg, t.data.cgsw[i]!, t.data.cgdw[i]!, cgg > 0 ? gm / (2 * Math.PI * cgg) : NaN].map(r).join(","));
          i++;
        }
  return rows.join("\n") + "\n";
}

/** The table as JSON data (arrays in place of typed arrays). */
export function tableJson(t: DeviceTable): string {
  return JSON.stringify({ ...t, data: Object.fromEntries(tableQuantities.map((q) => [q, Array.from(t.data[q])])) });
}
