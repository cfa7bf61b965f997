/** pinchoff run <notebook> [--set NAME=VALUE ...] [--out DIR] [--timeout S]: one design run into a design-run folder. */
import { relative } from "node:path";
import { parseArgs } from "node:util";
import { InputError } from "../errors.js";
import { parseOverride } from "../runner/inputs-cell.js";
import { interruptOnSignals } from "../runner/interrupt.js";
import { defaultTimeout, RunInterrupted, runNotebook } from "../runner/run.js";
import { summarize } from "../runner/summary.js";

export const help = `usage: pinchoff run <notebook.ipynb> [--set NAME=VALUE ...] [--out DIR] [--timeout S]

Runs the design notebook headless with the TypeScript kernel and writes a
design-run folder DIR (default: <name>-design-run/ beside the notebook):

  report.html            the report a reviewer signs (opens offline)
  run-record.json        the run record: inputs as run (overrides marked),
                         fingerprints, every check with value, limit, margin
                         and verdict, tool version, date, source, outputs
  notebook-as-run.ipynb  the notebook with its outputs

The source notebook is never modified. Files are replaced only when an
earlier run wrote them, and only once every new file is complete on disk.
Only one run at a time may write into a folder (it is locked while in use).

  --set NAME=VALUE  replace one design input (checked against its declared
                    dimension before anything runs), e.g. --set ID=300uA
  --out DIR         the design-run folder
  --timeout S       time limit per cell in seconds (default ${defaultTimeout})

Exit status: 0 when every cell ran and every check passed, 1 otherwise,
130/143 when interrupted (SIGINT/SIGTERM; nothing is written).`;

export async function main(argv: string[]): Promise<number> {
  const { values, positionals } = parseArgs({
    args: argv,
    allowPositionals: true,
    options: { set: { type: "string", multiple: true }, out: { type: "string" }, timeout: { type: "string" }, help: { type: "boolean", short: "h" } },
  });
  if (values.help) {
    console.log(help);
    return 0;
  }
  if (positionals.length !== 1) throw new InputError(positionals.length ? positionals.join(" ") : undefined, "exactly one notebook path", "pinchoff run");
  let timeout = defaultTimeout;
  if (values.timeout !== undefined) {
    timeout = Number(values.timeout);
    if (!Number.isFinite(timeout) || timeout <= 0) throw new InputError(values.timeout, "a time limit in seconds > 0", "--timeout");
  }
  const overrides = (values.set ?? []).map(parseOverride);
  const stop = interruptOnSignals((t) => console.error(`pinchoff run: ${t}`));
  try {
    const r = await runNotebook({ notebook: positionals[0]!, overrides, timeout, signal: stop.signal, note: (t) => console.error(`pinchoff run: ${t}`), ...(values.out ? { outDir: values.out } : {}) });
    console.log(summarize(r, (p) => relative(process.cwd(), p) || p));
    return r.exitCode;
  } catch (e) {
    if (e instanceof RunInterrupted) {
      console.error(`pinchoff run: ${e.message}`);
      return stop.exitCode() ?? 130;
    }
    throw e;
  } finally {
    stop.dispose();
  }
}
