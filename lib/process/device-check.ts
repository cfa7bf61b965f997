/**
 * Single transistors of a process simulated at given terminal voltages: many in
 * one deck (one library load), each with its own gate, drain and body sources and
 * its source at ground. Used to check sized devices against the simulator.
 * Values come back in device polarity (magnitudes), full precision (binary raw).
 */
import { InputError } from "../errors.js";
import { element, includeLine, libLine, spiceNumber, writeDeck } from "../spice/deck.js";
import { column } from "../spice/raw.js";
import { runDeck } from "../spice/run.js";
import { checkGeometry, cornerSection, type Polarity, type ProcessDescription } from "./description.js";

export interface DeviceBias {
  readonly polarity: Polarity;
  readonly w: number;
  readonly l: number;
  /** |VGS|, |VDS|, |VSB| (V). */
  readonly vgs: number;
  readonly vds: number;
  readonly vsb?: number;
  /** Identical devices in parallel (the instance's `m`, default 1); `w` is each one's width and the values returned are the total. */
  readonly m?: number;
}

export interface SimulatedDevice {
  readonly id: number;
  readonly gm: number;
  readonly gds: number;
  readonly gmb: number;
  readonly vth: number;
  readonly vdsat: number;
  readonly cgg: number;
}

/** The deck (for a reviewer to re-run) and the simulated values of each device. */
export async function simulateDevices(p: ProcessDescription, devices: readonly DeviceBias[], corner?: string): Promise<{ deck: string; values: SimulatedDevice[] }> {
  if (devices.length === 0) throw new InputError(devices, "at least one device", "simulateDevices");
  const section = cornerSection(p, corner);
  const lines = [libLine(p.library.file, section), ...p.includes.map((f) => includeLine(f)), `.temp ${spiceNumber(p.temperature)}`];
  const saves: string[] = [];
  devices.forEach((d, k) => {
    const s = d.polarity === "nmos" ? 1 : d.polarity === "pmos" ? -1 : 0;
    if (s === 0) throw new InputError(d.polarity, '"nmos" or "pmos"', `device ${k} polarity`);
    checkGeometry(p, d.polarity, "w", d.w, `device ${k} W`);
    checkGeometry(p, d.polarity, "l", d.l, `device ${k} L`);
    const m = d.m ?? 1;
    if (!(Number.isInteger(m) && m >= 1)) throw new InputError(m, "a whole number of parallel devices ≥ 1", `device ${k} m`);
    const n = (x: string) => `${x}${k}`;
    lines.push(element(`VG${k}`, [n("g"), "0"], s * d.vgs), element(`VD${k}`, [n("d"), "0"], s * d.vds), element(`VB${k}`, [n("b"), "0"], -s * (d.vsb ?? 0)));
    lines.push(element(`M${k}`, [n("d"), n("g"), "0", n("b")], p.devices[d.polarity].model, m === 1 ? { W: d.w, L: d.l } : { W: d.w, L: d.l, m }));
    // One save line per device: ngspice drops an over-long save line.
    saves.push(`save ${["id", "gm", "gds", "gmbs", "vth", "vdsat", "cgg"].map((q) => `@m${k}[${q}]`).join(" ")}`);
  });
  const deck = writeDeck({
    title: `pinchoff device check: ${devices.length} device(s) of ${p.name}, section ${section}`,
    lines,
    control: ["set filetype=binary", ...saves, "op", "write op.raw", "quit 0"],
  });
  const r = await runDeck({ deck, outputs: ["op.raw"], origin: `${p.name} device check` });
  const plot = r.raw["op.raw"]![0]!;
  const values = devices.map((_, k) => {
    const v = (q: string, kind: "i" | "v" | "") => Math.abs(column(plot, kind ? `${kind}(@m${k}[${q}])` : `@m${k}[${q}]`)[0]!);
    return { id: v("id", "i"), gm: v("gm", ""), gds: v("gds", ""), gmb: v("gmbs", ""), vth: v("vth", "v"), vdsat: v("vdsat", "v"), cgg: v("cgg", "") };
  });
  return { deck, values };
}
