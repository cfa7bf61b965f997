/** pinchoff run <notebook> [--set NAME=VALUE ...] [--out DIR] [--timeout S]: one design run into a design-run folder. */
import { relative } from "node:path";
import { InputError } from "../errors.js";
import { parseOverride } from "../runner/inputs-cell.js";
import { interruptOnSignals } from "../runner/interrupt.js";
import { defaultTimeout, RunInterrupted, runNotebook } from "../runner/run.js";
import { summarize } from "../runner/summary.js";
import { defineCommand, type CommandSpec } from "./args.js";

export const command = {
  name: "run",
  positionals: [{ name: "notebook.ipynb" }],
  options: {
    set: { kind: "value", repeatable: true, placeholder: "NAME=VALUE", help: "replace one design input (checked against its declared\ndimension before anything runs), e.g. --set ID=300uA" },
    out: { kind: "value", placeholder: "DIR", help: "the design-run folder" },
    timeout: { kind: "value", placeholder: "S", help: `time limit per cell in seconds (default ${defaultTimeout})` },
  },
  description: `Runs the design notebook headless with the TypeScript kernel and writes a
design-run folder DIR (default: <name>-design-run/ beside the notebook):

  report.html            the report a reviewer signs (opens offline)
  run-record.json        the run record: inputs as run (overrides marked),
                         fingerprints, every check with value, limit, margin
                         and verdict, tool version, date, source, outputs
  notebook-as-run.ipynb  the notebook with its outputs

The source notebook is never modified. Files are replaced only when an
earlier run wrote them, and only once every new file is complete on disk.
Only one run at a time may write into a folder (it is locked while in use).
Interrupted (SIGINT/SIGTERM), it stops the kernel, writes nothing and exits
130/143.`,
} as const satisfies CommandSpec;

export const main = defineCommand(command, async ({ values, positionals }) => {
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
});
