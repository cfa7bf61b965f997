/** pinchoff run <notebook> [--set NAME=VALUE ...] [--out DIR] [--timeout S] */
import { relative } from "node:path";
import { parseArgs } from "node:util";
import { InputError } from "../errors.js";
import { parseOverride } from "../runner/inputs-cell.js";
import { defaultTimeout, runNotebook } from "../runner/run.js";
import { summarize } from "../runner/summary.js";

export const help = `usage: pinchoff run <notebook.ipynb> [--set NAME=VALUE ...] [--out DIR] [--timeout S]

Runs the notebook headless with the TypeScript kernel and writes, into DIR
(default: <name>-run/ beside the notebook), the executed notebook and a
standalone HTML report. The source notebook is never modified.

  --set NAME=VALUE  replace one design input (checked against its declared
                    dimension before anything runs), e.g. --set ID=300uA
  --out DIR         output folder
  --timeout S       time limit per cell in seconds (default ${defaultTimeout})

Exit status: 0 when every cell ran and every check passed, 1 otherwise.`;

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
  const r = await runNotebook({ notebook: positionals[0]!, overrides, timeout, ...(values.out ? { outDir: values.out } : {}) });
  console.log(summarize(r, (p) => relative(process.cwd(), p) || p));
  return r.exitCode;
}
