/**
 * AC oracle: runs a deck's circuit lines through ngspice 39 (batch mode), an
 * `ac` sweep, and reads |v(node)| for each named node back from `wrdata`.
 * Corners are read off the sampled response by log-log interpolation.
 */
import { execFileSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

export interface AcResult {
  readonly freq: number[];
  /** |v(node)| per node, in the order asked. */
  readonly mag: number[][];
}

/** `quantity` "vp" reads the phase in radians (ngspice's vp) instead of the magnitude. */
export function runAc(circuit: string, nodes: readonly string[], sweep: { pointsPerDecade: number; start: number; stop: number }, quantity: "vm" | "vp" = "vm"): AcResult {
  const dir = mkdtempSync(join(tmpdir(), "pinchoff-ac-"));
  try {
    const deck = join(dir, "deck.cir");
    const data = join(dir, "ac.txt");
    writeFileSync(
      deck,
      `* pinchoff ac oracle\n${circuit}\n.control\nset wr_singlescale\nset wr_vecnames\noption numdgt=12\nac dec ${sweep.pointsPerDecade} ${sweep.start} ${sweep.stop}\nwrdata ${data} ${nodes.map((n) => `${quantity}(${n})`).join(" ")}\nquit 0\n.endc\n.end\n`,
    );
    execFileSync("ngspice", ["-b", deck], { encoding: "utf8", stdio: ["ignore", "pipe", "pipe"], maxBuffer: 256 << 20 });
    const rows = readFileSync(data, "utf8").trim().split("\n").slice(1).map((l) => l.trim().split(/\s+/).map(Number));
    return { freq: rows.map((r) => r[0]!), mag: nodes.map((_, j) => rows.map((r) => r[j + 1]!)) };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

const interp = (f: number[], m: number[], i: number, level: number) => {
  // Between samples i and i+1, log-log.
  const a = Math.log(m[i]!) - Math.log(level);
  const b = Math.log(m[i + 1]!) - Math.log(level);
  const t = a / (a - b);
  return Math.exp(Math.log(f[i]!) + t * (Math.log(f[i + 1]!) - Math.log(f[i]!)));
};

/** |H| at frequency f by log-log interpolation. */
export function magAt(freq: number[], mag: number[], f: number): number {
  let i = 0;
  while (i < freq.length - 2 && freq[i + 1]! < f) i++;
  const t = (Math.log(f) - Math.log(freq[i]!)) / (Math.log(freq[i + 1]!) - Math.log(freq[i]!));
  return Math.exp(Math.log(mag[i]!) + t * (Math.log(mag[i + 1]!) - Math.log(mag[i]!)));
}

/** The −3 dB corners either side of fMid, relative to |H(fMid)|; undefined where the sweep does not reach one. */
export function cornersAround(freq: number[], mag: number[], fMid: number): { low?: number; high?: number; mid: number } {
  const mid = magAt(freq, mag, fMid);
  const level = mid / Math.SQRT2;
  let k = 0;
  while (k < freq.length - 1 && freq[k + 1]! <= fMid) k++;
  let low: number | undefined;
  for (let i = k; i > 0; i--)
    if (mag[i - 1]! < level && mag[i]! >= level) {
      low = interp(freq, mag, i - 1, level);
      break;
    }
  let high: number | undefined;
  for (let i = k; i < freq.length - 1; i++)
    if (mag[i]! >= level && mag[i + 1]! < level) {
      high = interp(freq, mag, i, level);
      break;
    }
  return { mid, ...(low !== undefined ? { low } : {}), ...(high !== undefined ? { high } : {}) };
}

/** The first frequency where |H| falls through `level` (log-log interpolation); undefined when it never does. */
export function fallsThrough(freq: readonly number[], mag: readonly number[], level: number): number | undefined {
  for (let i = 0; i < freq.length - 1; i++) if (mag[i]! >= level && mag[i + 1]! < level) return interp(freq as number[], mag as number[], i, level);
  return undefined;
}
