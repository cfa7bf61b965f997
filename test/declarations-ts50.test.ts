/**
 * The emitted declarations must compile under TypeScript 5.0 (tslab 1.0.22 compiles
 * notebook cells with its own 5.0.4, resolving packages by Node10 rules). This compiles
 * a consumer of every entry point with that compiler, with skipLibCheck off, and shows
 * the check can fail: a unit mismatch in the consumer is a type error.
 */
import { execFileSync, spawnSync } from "node:child_process";
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { join, resolve } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

const root = resolve(__dirname, "..");
const tsc50 = join(root, "node_modules/@tslab/typescript-for-tslab/bin/tsc");
let dir: string;

beforeAll(() => {
  if (!process.env.PINCHOFF_PREBUILT) execFileSync(process.execPath, [join(root, "lib/setup/prepare.mjs"), "build", "kernel"], { stdio: "pipe" });
  mkdirSync(join(root, ".pinchoff-run"), { recursive: true });
  dir = mkdtempSync(join(root, ".pinchoff-run/ts50-"));
  writeFileSync(
    join(dir, "tsconfig.json"),
    JSON.stringify({
      compilerOptions: { strict: true, noEmit: true, module: "commonjs", moduleResolution: "node", target: "es2022", lib: ["es2022", "dom"], types: ["node"], skipLibCheck: false },
      files: ["consumer.ts"],
    }),
  );
}, 240_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function compile(source: string): { status: number | null; out: string } {
  writeFileSync(join(dir, "consumer.ts"), source);
  const r = spawnSync(process.execPath, [tsc50, "-p", dir], { encoding: "utf8" });
  return { status: r.status, out: r.stdout + r.stderr };
}

const header = `import * as core from "pinchoff";
import * as units from "pinchoff/units";
import * as render from "pinchoff/render";
import * as nb from "pinchoff/notebook";
import * as fit from "pinchoff/fit";
const fitted: (s: fit.Sweep) => fit.FitResult = (s) => fit.fitSweep(fit.ekvFit, s, { window: { vov: [0.2, 1] } });
void fitted;
const card: core.DeviceCard = { name: "t (invented)", polarity: "nmos", kp: core.amperesPerVoltSquared(2e-4), vt0: core.volts(0.5) };
const m = core.device(card, core.meters(1e-5), core.meters(1e-6));
const op = core.operatingPoint(m, { vgs: core.volts(1), vds: core.volts(1) });
export const used = [units.parseQuantity, render, nb.show, op.id];
`;

describe("declarations under TypeScript 5.0.4", () => {
  it("compile for every entry point", () => {
    const r = compile(header);
    expect(r.out).toBe("");
    expect(r.status).toBe(0);
  }, 120_000);
  it("still reject a current passed as a voltage", () => {
    const r = compile(`${header}core.operatingPoint(m, { vgs: op.id, vds: core.volts(1) });\n`);
    expect(r.status).not.toBe(0);
    expect(r.out).toMatch(/Type 'Amperes' is not assignable to type 'Volts'/);
  }, 120_000);
});
