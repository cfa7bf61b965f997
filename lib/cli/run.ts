/** pinchoff run: a notebook headless, its executed copy and its HTML report. */
import { relative } from "node:path";
import { InputError } from "../errors.js";
import { parseOverride } from "../runner/inputs-cell.js";
import { defaultTimeout, runNotebook } from "../runner/run.js";
import { summarize } from "../runner/summary.js";
import { defineCommand, type CommandSpec } from "./args.js";

export const command = {
  name: "run",
  positionals: [{ name: "notebook.ipynb" }],
  options: {
    set: { kind: "value", repeatable: true, placeholder: "NAME=VALUE", help: "replace one design input (checked against its declared\ndimension before anything runs), e.g. --set ID=300uA" },
    out: { kind: "value", placeholder: "DIR", help: "output folder" },
    timeout: { kind: "value", placeholder: "S", help: `time limit per cell in seconds (default ${defaultTimeout})` },
  },
  description: `Runs the notebook headless with the TypeScript kernel and writes, into DIR
(default: <name>-run/ beside the notebook), the executed notebook and a
standalone HTML report. The source notebook is never modified.`,
} as const satisfies CommandSpec;

export const main = defineCommand(command, async ({ values, positionals }) => {
  let timeout = defaultTimeout;
  if (values.timeout !== undefined) {
    timeout = Number(values.timeout);
    if (!Number.isFinite(timeout) || timeout <= 0) throw new InputError(values.timeout, "a time limit in seconds > 0", "--timeout");
  }
  const overrides = (values.set ?? []).map(parseOverride);
  const r = await runNotebook({ notebook: positionals[0]!, overrides, timeout, ...(values.out ? { outDir: values.out } : {}) });
  console.log(summarize(r, (p) => relative(process.cwd(), p) || p));
  return r.exitCode;
});
