/**
 * Test oracle: a thin layer over pinchoff's own ngspice home (`lib/spice/run.ts`).
 * Many operating points go in one deck as repeated `alter …` / `op` / `print …`
 * lines in the .control block, to keep process start-up off each point. Print one
 * expression per `print` line: `print v(d) -i(VD)` is read by ngspice as the single
 * expression v(d) − i(VD). ngspice 39 in batch mode exits 1 after a .control block
 * unless it ends with `quit 0`, which is appended here.
 */
import { printedValues, runDeckSync } from "../../lib/spice/run.js";

export interface OracleRun {
  /** Circuit lines (elements and .model cards), without .control/.end. */
  readonly circuit: string;
  /** Control lines run after `set numdgt=12`, typically `op` then `print ...` lines. */
  readonly control: string;
}

/** Run one deck; returns a map from printed name (lower case, as ngspice echoes it) to value, in print order. */
export function runNgspice(run: OracleRun): Array<[string, number]> {
  // Test-authored text goes in as is (the deck writer guards user strings, not the oracle's own decks).
  const deck = `* pinchoff oracle deck\n${run.circuit}\n.control\nset numdgt=12\n${run.control}\nquit 0\n.endc\n.end\n`;
  return printedValues(runDeckSync({ deck, origin: "ngspice oracle" }).log);
}

export { printedValues as parsePrinted };
