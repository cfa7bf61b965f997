/**
 * Test oracle: runs decks through ngspice (Debian package `ngspice`) in batch
 * mode and reads back printed values. Many operating points go in one deck as
 * repeated `alter …` / `op` / `print …` lines in the .control block, to keep
 * process start-up off each point. Print one expression per `print` line:
 * `print v(d) -i(VD)` is read by ngspice as the single expression v(d) − i(VD).
 * ngspice 39 in batch mode exits 1 after a .control block unless it ends with
 * `quit 0`, which is appended here (a second quit in the caller's lines is harmless).
 */
import { execFileSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

export interface OracleRun {
  /** Circuit lines (elements and .model cards), without .control/.end. */
  readonly circuit: string;
  /** Control lines run after `set numdgt=12`, typically `op` then `print ...` lines. */
  readonly control: string;
}

/** Run one deck; returns a map from printed name (lower case, as ngspice echoes it) to value, in print order. */
export function runNgspice(run: OracleRun): Array<[string, number]> {
  const dir = mkdtempSync(join(tmpdir(), "pinchoff-ngspice-"));
  try {
    const deck = join(dir, "deck.cir");
    writeFileSync(deck, `* pinchoff oracle deck\n${run.circuit}\n.control\nset numdgt=12\n${run.control}\nquit 0\n.endc\n.end\n`);
    const out = execFileSync("ngspice", ["-b", deck], { encoding: "utf8", stdio: ["ignore", "pipe", "pipe"], maxBuffer: 64 << 20 });
    return parsePrinted(out);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Parse lines such as `v(d) = 1.234000000000e+00` or `@m1[gm] = 5.0e-04`. */
export function parsePrinted(out: string): Array<[string, number]> {
  const rows: Array<[string, number]> = [];
  for (const line of out.split("\n")) {
    const m = /^\s*([^\s=]+)\s*=\s*([-+0-9.eE]+)\s*$/.exec(line);
    if (m) rows.push([m[1]!.toLowerCase(), Number(m[2])]);
  }
  return rows;
}
