/**
 * One argument layer for every `pinchoff` command, on Node's own
 * `node:util` parseArgs in strict mode. A command declares its positionals and
 * options once (`CommandSpec`); the usage line, the help text and the parser
 * all come from that declaration, so the usage line lists every option.
 *
 * Failure mode: an unknown option, an option without its value, a value given
 * to a flag, or the wrong number of positionals throws `UsageError`, which
 * `lib/cli/main.ts` prints as `pinchoff <cmd>: <message>` with the usage line
 * and exit status 2. `-h/--help` and `--version` are added to every command.
 */
import { parseArgs } from "node:util";
import { toolVersion } from "../runner/paths.js";

/** Exit statuses of every command (documented in each help text and the README). */
export const exitStatus = { ok: 0, failed: 1, usage: 2 } as const;

export const exitStatusHelp = `Exit status: 0 done and every check passed; 1 a check failed, or the design
could not be read, solved or written; 2 a usage error (unknown option, missing
value, wrong number of arguments).`;

/** A command-line usage mistake (not a design or file problem): exit 2 with the usage line. */
export class UsageError extends Error {
  override readonly name = "UsageError";
  constructor(
    message: string,
    /** The command's usage line, printed after the message. */
    readonly usage: string,
  ) {
    super(message);
  }
}

export type OptionSpec = {
  /** "flag": present or not; "value": takes one value (`--out DIR` or `--out=DIR`). */
  readonly kind: "flag" | "value";
  readonly short?: string;
  /** A value option given more than once collects every value. */
  readonly repeatable?: boolean;
  /** Placeholder for the value in the usage line, e.g. "DIR". */
  readonly placeholder?: string;
  readonly help: string;
};

export type PositionalSpec = {
  readonly name: string;
  readonly optional?: boolean;
};

export type CommandSpec = {
  /** The subcommand, e.g. "op". */
  readonly name: string;
  readonly positionals: readonly PositionalSpec[];
  readonly options: { readonly [name: string]: OptionSpec };
  /** Paragraphs after the usage line: what the command does, in plain words. */
  readonly description: string;
  /** Extra paragraphs after the options (e.g. a caution). */
  readonly notes?: string;
};

/** Options every command has. */
const common: { readonly [name: string]: OptionSpec } = {
  help: { kind: "flag", short: "h", help: "this text" },
  version: { kind: "flag", help: "print the tool version" },
};

type ValueOf<O extends OptionSpec> = O["kind"] extends "flag" ? boolean : O["repeatable"] extends true ? string[] : string;

/** The parsed values, typed from the declaration: flags are booleans, value options strings (arrays when repeatable). */
export type ParsedValues<S extends CommandSpec> = { -readonly [K in keyof S["options"]]?: ValueOf<S["options"][K]> };

export type Parsed<S extends CommandSpec> = { values: ParsedValues<S>; positionals: string[] };

function optionUsage(name: string, o: OptionSpec): string {
  const flag = o.short ? `-${o.short}|--${name}` : `--${name}`;
  const text = o.kind === "value" ? `${flag} ${o.placeholder ?? "VALUE"}` : flag;
  return o.repeatable ? `[${text} ...]` : `[${text}]`;
}

/** The one-line usage of a command, listing every positional and option. */
export function usageLine(spec: CommandSpec): string {
  const pos = spec.positionals.map((p) => (p.optional ? `[<${p.name}>]` : `<${p.name}>`));
  const opts = Object.entries({ ...spec.options, ...common }).map(([n, o]) => optionUsage(n, o));
  return ["usage: pinchoff", spec.name, ...pos, ...opts].join(" ");
}

/** The full help text: usage line, description, the option table, notes, exit statuses. */
export function helpText(spec: CommandSpec): string {
  const rows = Object.entries({ ...spec.options, ...common }).map(([n, o]) => {
    const left = `${o.short ? `-${o.short}, ` : ""}--${n}${o.kind === "value" ? ` ${o.placeholder ?? "VALUE"}` : ""}`;
    return [left, o.help] as const;
  });
  const w = Math.max(...rows.map(([l]) => l.length)) + 2;
  const table = rows
    .map(([l, h]) => {
      const [first, ...more] = h.split("\n");
      return [`  ${l.padEnd(w)}${first}`, ...more.map((m) => `  ${" ".repeat(w)}${m}`)].join("\n");
    })
    .join("\n");
  return [usageLine(spec), spec.description.trim(), `options:\n${table}`, ...(spec.notes ? [spec.notes.trim()] : []), exitStatusHelp].join("\n\n");
}

/** Node's own message on one line, without its advice on `--` (rarely what a mistyped option means). */
function tidy(message: string): string {
  return message
    .replace(/\s*To specify a positional argument starting with a '-'.*$/s, "")
    .replace(/\s*\n\s*/g, " ")
    .trim();
}

function countWords(n: number): string {
  return n === 1 ? "one argument" : `${n} arguments`;
}

/**
 * Parse `argv` against the declaration. Returns "help" or "version" when the
 * user asked for them (the caller prints `helpText(spec)` or the version);
 * throws `UsageError` for anything the declaration does not allow.
 */
export function parseCommand<S extends CommandSpec>(spec: S, argv: readonly string[]): Parsed<S> | "help" | "version" {
  const all = { ...spec.options, ...common };
  const options: Record<string, { type: "boolean" | "string"; short?: string; multiple?: boolean }> = {};
  for (const [n, o] of Object.entries(all)) options[n] = { type: o.kind === "flag" ? "boolean" : "string", ...(o.short ? { short: o.short } : {}), ...(o.repeatable ? { multiple: true } : {}) };
  const usage = usageLine(spec);
  let parsed: { values: Record<string, unknown>; positionals: string[] };
  try {
    parsed = parseArgs({ args: [...argv], options, allowPositionals: true, strict: true });
  } catch (e) {
    throw new UsageError(tidy((e as Error).message), usage);
  }
  if (parsed.values["help"]) return "help";
  if (parsed.values["version"]) return "version";
  const max = spec.positionals.length;
  const min = spec.positionals.filter((p) => !p.optional).length;
  const got = parsed.positionals.length;
  if (got < min || got > max) {
    const want = min === max ? (max === 0 ? "no arguments" : countWords(max)) : `${min} to ${max} arguments`;
    const names = spec.positionals.map((p) => `<${p.name}>`).join(" ");
    throw new UsageError(`expected ${want}${names ? ` (${names})` : ""}, got ${got}${got ? `: ${parsed.positionals.map((p) => JSON.stringify(p)).join(" ")}` : ""}`, usage);
  }
  return { values: parsed.values as ParsedValues<S>, positionals: parsed.positionals };
}

/**
 * A command's `main(argv)` from its declaration and its action: help and
 * version are answered here, usage errors are thrown as `UsageError`, and the
 * action gets the typed values and positionals and returns the exit status.
 */
export function defineCommand<S extends CommandSpec>(spec: S, action: (args: Parsed<S>) => Promise<number>): (argv: string[]) => Promise<number> {
  return async (argv: string[]) => {
    const p = parseCommand(spec, argv);
    if (p === "help") {
      console.log(helpText(spec));
      return exitStatus.ok;
    }
    if (p === "version") {
      console.log(toolVersion());
      return exitStatus.ok;
    }
    return action(p);
  };
}
