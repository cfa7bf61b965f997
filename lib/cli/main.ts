#!/usr/bin/env node
/**
 * The `pinchoff` command. Each subcommand lives in its own module, loaded only
 * when called, and exports `main(argv): Promise<number>` (the exit code).
 */
import { PinchoffError } from "../errors.js";

type Command = { summary: string; load: () => Promise<{ main: (argv: string[]) => Promise<number> }> };

// One line per subcommand; add yours here when its module exists.
export const commands: Record<string, Command> = {
  run: { summary: "run a design notebook headless into a design-run folder: report, run record, notebook as run", load: () => import("./run.js") },
  new: { summary: "copy a template notebook to a path", load: () => import("./new.js") },
  list: { summary: "list the template notebooks", load: () => import("./list.js") },
  kernel: { summary: "register the TypeScript kernel for Jupyter", load: () => import("./kernel.js") },
  notebook: { summary: "open the Jupyter Notebook UI on a working folder (127.0.0.1)", load: () => import("./notebook.js") },
  demo: { summary: "run the demo template and print its report's path", load: () => import("./demo.js") },
  op: { summary: "solve a design file's operating point (or design it from its specification); print JSON", load: () => import("./op.js") },
};

function usage(): string {
  const rows = Object.entries(commands).map(([n, c]) => `  ${n.padEnd(10)}${c.summary}`);
  return ["usage: pinchoff <command> [options]", "", "commands:", ...rows, "", "pinchoff <command> --help for a command's options"].join("\n");
}

export async function cli(argv: string[]): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === "--help" || name === "-h") {
    console.log(usage());
    return name ? 0 : 2;
  }
  const cmd = commands[name];
  if (!cmd) {
    console.error(`pinchoff: unknown command "${name}"\n\n${usage()}`);
    return 2;
  }
  try {
    return await (await cmd.load()).main(rest);
  } catch (e) {
    if (e instanceof PinchoffError) {
      console.error(`pinchoff ${name}: ${e.message}`);
      return 1;
    }
    throw e;
  }
}

cli(process.argv.slice(2)).then((code) => process.exit(code));
