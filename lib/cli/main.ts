#!/usr/bin/env node
/**
 * The `pinchoff` command. Each subcommand lives in its own module, loaded only
 * when called, and exports `main(argv): Promise<number>` (the exit status),
 * made with `defineCommand` from its declaration in `./args.ts`.
 *
 * This is the one place that prints an error and picks its exit status:
 * `pinchoff <cmd>: <message>`, then for a usage error the command's usage
 * line (exit 2); a design, file or solver error exits 1. Modules throw and
 * never prefix their own messages.
 */
import { realpathSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { PinchoffError } from "../errors.js";
import { toolVersion } from "../runner/paths.js";
import { exitStatus, exitStatusHelp, UsageError } from "./args.js";

type Command = { summary: string; load: () => Promise<{ main: (argv: string[]) => Promise<number> }> };

// One line per subcommand; add yours here when its module exists.
export const commands: Record<string, Command> = {
  run: { summary: "run a design notebook headless into a design-run folder: report, run record, notebook as run", load: () => import("./run.js") },
  new: { summary: "copy a template notebook to a path", load: () => import("./new.js") },
  list: { summary: "list the template notebooks", load: () => import("./list.js") },
  kernel: { summary: "register the TypeScript kernel for Jupyter", load: () => import("./kernel.js") },
  notebook: { summary: "open the Jupyter Notebook UI on a working folder (127.0.0.1)", load: () => import("./notebook.js") },
  demo: { summary: "run the demo template and print its report's path", load: () => import("./demo.js") },
  characterize: { summary: "sweep a process library's transistors with ngspice into gm/ID tables", load: () => import("./characterize.js") },
  fit: { summary: "fit a device model to measured I–V sweeps; write the card and a fit report", load: () => import("./fit.js") },
  op: { summary: "solve a design file's operating point (or design it from its specification)", load: () => import("./op.js") },
};

export function usage(): string {
  const width = Math.max(...Object.keys(commands).map((n) => n.length)) + 2;
  const rows = Object.entries(commands).map(([n, c]) => `  ${n.padEnd(width)}${c.summary}`);
  return ["usage: pinchoff <command> [options]", "       pinchoff --version", "", "commands:", ...rows, "", "pinchoff <command> --help for a command's options.", "", exitStatusHelp].join("\n");
}

/** Run one command line; returns the exit status. Errors of the tool's own kinds are printed here, once. */
export async function cli(argv: string[]): Promise<number> {
  const [name, ...rest] = argv;
  if (name === "--help" || name === "-h") {
    console.log(usage());
    return exitStatus.ok;
  }
  if (name === "--version") {
    console.log(toolVersion());
    return exitStatus.ok;
  }
  if (!name) {
    console.error(`pinchoff: no command given\n\n${usage()}`);
    return exitStatus.usage;
  }
  const cmd = Object.hasOwn(commands, name) ? commands[name] : undefined;
  if (!cmd) {
    console.error(`pinchoff: unknown command ${JSON.stringify(name)}\n\n${usage()}`);
    return exitStatus.usage;
  }
  return runCommand(name, async (argv) => (await cmd.load()).main(argv), rest);
}

/** Run one command's `main`, printing the tool's own errors once with the command's prefix; returns the exit status. */
export async function runCommand(name: string, main: (argv: string[]) => Promise<number>, argv: string[]): Promise<number> {
  try {
    return await main(argv);
  } catch (e) {
    if (e instanceof UsageError) {
      console.error(`pinchoff ${name}: ${e.message}\n${e.usage}\n(pinchoff ${name} --help for the options)`);
      return exitStatus.usage;
    }
    if (e instanceof PinchoffError) {
      console.error(`pinchoff ${name}: ${e.message}`);
      return exitStatus.failed;
    }
    throw e;
  }
}

// Run when executed (also through the npm bin link), not when imported.
if (process.argv[1] && fileURLToPath(import.meta.url) === realpathSync(process.argv[1])) {
  process.exit(await cli(process.argv.slice(2)));
}
