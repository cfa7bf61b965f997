/**
 * The argument layer every command shares: usage errors exit 2 with the
 * command's usage line and one "pinchoff <cmd>:" prefix, never a stack trace;
 * help and version on every command; the usage line lists every option.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { helpText, parseCommand, usageLine, UsageError, type CommandSpec } from "../lib/cli/args.js";
import { cli, commands } from "../lib/cli/main.js";
import { toolVersion } from "../lib/runner/paths.js";
import { captureCli } from "./support/cli.js";

const run = (argv: string[]) => captureCli(cli, argv);

async function specOf(name: string): Promise<CommandSpec> {
  const m = (await commands[name]!.load()) as unknown as { command: CommandSpec };
  return m.command;
}

describe("command-line arguments", () => {
  it("turns unknown options and missing values into usage errors (exit 2, one prefix, the usage line)", async () => {
    const cases: [string[], RegExp][] = [
      [["run", "x.ipynb", "--foo"], /^pinchoff run: Unknown option '--foo'/],
      [["run", "x.ipynb", "--set"], /^pinchoff run: Option '--set <value>' argument missing/],
      [["run", "x.ipynb", "--set", "--out", "d"], /^pinchoff run: Option '--set' argument is ambiguous/],
      [["new", "--bogus"], /^pinchoff new: Unknown option '--bogus'/],
      [["list", "--x"], /^pinchoff list: Unknown option '--x'/],
      [["kernel", "--x"], /^pinchoff kernel: Unknown option '--x'/],
      [["notebook", "--port"], /^pinchoff notebook: Option '--port <value>' argument missing/],
      [["demo", "--fast"], /^pinchoff demo: Unknown option '--fast'/],
      [["op", "d.json", "--record"], /^pinchoff op: Option '--record <value>' argument missing/],
      [["op", "d.json", "--force=yes"], /^pinchoff op: Option '--force' does not take an argument/],
    ];
    for (const [argv, message] of cases) {
      const r = await run(argv);
      expect(r.code, argv.join(" ")).toBe(2);
      expect(r.err).toMatch(message);
      expect(r.err).not.toMatch(/pinchoff \w+: pinchoff/);
      expect(r.err).not.toMatch(/\n\s+at /); // no stack trace
      expect(r.err).toContain(usageLine(await specOf(argv[0]!)));
    }
  });

  it("refuses the wrong number of arguments for each command with exit 2", async () => {
    const cases: [string[], RegExp][] = [
      [["run"], /^pinchoff run: expected one argument \(<notebook\.ipynb>\), got 0\n/],
      [["run", "a.ipynb", "b.ipynb"], /^pinchoff run: expected one argument .*got 2: "a\.ipynb" "b\.ipynb"/],
      [["new", "cs-nmos"], /^pinchoff new: expected 2 arguments \(<template> <path\.ipynb>\), got 1/],
      [["list", "extra"], /^pinchoff list: expected no arguments, got 1: "extra"/],
      [["kernel", "x"], /^pinchoff kernel: expected no arguments/],
      [["op"], /^pinchoff op: expected one argument \(<design\.json>\), got 0/],
    ];
    for (const [argv, message] of cases) {
      const r = await run(argv);
      expect(r.code, argv.join(" ")).toBe(2);
      expect(r.err).toMatch(message);
    }
  });

  it("answers --version and --help on every command and at the top, exit 0", async () => {
    const version = toolVersion();
    expect(version).toMatch(/^pinchoff \d+\.\d+\.\d+/);
    expect(await run(["--version"])).toMatchObject({ code: 0, out: version });
    const top = await run(["--help"]);
    expect(top.code).toBe(0);
    const columns = new Set<number>();
    for (const name of Object.keys(commands)) {
      // the name stands apart from its summary (two spaces at least), and every summary starts in one column
      const line = top.out.split("\n").find((l) => l.startsWith(`  ${name} `));
      expect(line).toMatch(new RegExp(`^  ${name} {2,}\\S`));
      columns.add(line!.length - line!.slice(2 + name.length).trimStart().length);
      expect(await run([name, "--version"])).toMatchObject({ code: 0, out: version });
      const help = await run([name, "-h"]);
      expect(help.code).toBe(0);
      const spec = await specOf(name);
      expect(help.out).toBe(helpText(spec));
      expect(help.out).toContain("Exit status: 0");
      // The usage line lists every declared option, and the table explains each.
      for (const [opt, o] of Object.entries(spec.options)) {
        expect(usageLine(spec)).toContain(`--${opt}${o.kind === "value" ? ` ${o.placeholder}` : ""}`);
        expect(help.out).toMatch(new RegExp(`^  --${opt}\\b`, "m"));
      }
      expect(usageLine(spec)).toContain("[-h|--help] [--version]");
    }
    expect(columns.size).toBe(1);
  });

  it("prints a file or design error once, prefixed by the command, exit 1", async () => {
    const dir = mkdtempSync(join(tmpdir(), "pinchoff-args-"));
    try {
      const existing = join(dir, "mine.ipynb");
      writeFileSync(existing, "{}");
      const name = (await run(["list"])).out.split("\n")[0]!.split(" ")[0]!;
      const r = await run(["new", name, existing]);
      expect(r.code).toBe(1);
      expect(r.err).toBe(`pinchoff new: ${existing}: already exists; it was left untouched (use --force to replace it)`);
      const noFolder = await run(["notebook", join(dir, "no-such-folder")]);
      expect(noFolder.code).toBe(1);
      expect(noFolder.err.match(/pinchoff notebook:/g)).toHaveLength(1);
      const missing = await run(["run", join(dir, "none.ipynb")]);
      expect(missing.code).toBe(1);
      expect(missing.err).toMatch(/^pinchoff run: (?!pinchoff)/);
      expect(missing.err.match(/pinchoff run:/g)).toHaveLength(1);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it("says so when no command or an unknown command is given (exit 2)", async () => {
    const none = await run([]);
    expect(none.code).toBe(2);
    expect(none.err).toMatch(/^pinchoff: no command given/);
    const unknown = await run(["toString"]); // not an inherited property either
    expect(unknown.code).toBe(2);
    expect(unknown.err).toMatch(/^pinchoff: unknown command "toString"/);
  });

  it("types values from the declaration and keeps repeated values in order", () => {
    const spec = {
      name: "t",
      positionals: [{ name: "a" }, { name: "b", optional: true }],
      options: { set: { kind: "value", repeatable: true, placeholder: "K=V", help: "x" }, flag: { kind: "flag", short: "f", help: "y" } },
      description: "test command",
    } as const satisfies CommandSpec;
    const p = parseCommand(spec, ["one", "--set", "a=1", "-f", "--set=b=2"]);
    if (typeof p === "string") throw new Error("expected values");
    const set: string[] | undefined = p.values.set;
    const flag: boolean | undefined = p.values.flag;
    expect({ set, flag, positionals: p.positionals }).toEqual({ set: ["a=1", "b=2"], flag: true, positionals: ["one"] });
    expect(usageLine(spec)).toBe("usage: pinchoff t <a> [<b>] [--set K=V ...] [-f|--flag] [-h|--help] [--version]");
    expect(() => parseCommand(spec, [])).toThrow(UsageError);
    expect(() => parseCommand(spec, [])).toThrow(/expected 1 to 2 arguments/);
    // Help and version are answered even when the arguments are incomplete.
    expect(parseCommand(spec, ["--help"])).toBe("help");
    expect(parseCommand(spec, ["--version"])).toBe("version");
  });
});
