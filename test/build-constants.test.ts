/**
 * Stage 3 of lib/setup/build.mjs: top-level `var` written back as `const` where the linked file
 * never assigns the name, and left alone wherever constness is not certain. Crafted files in a
 * temporary folder; the result must still parse and evaluate as before.
 */
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { describe, expect, it } from "vitest";
// @ts-expect-error: a plain-JavaScript build script without declarations
import { restoreConstants } from "../lib/setup/build.mjs";

const restore = restoreConstants as (file: string) => number;

function linked(source: string): { file: string; text: () => string } {
  const file = join(mkdtempSync(join(tmpdir(), "pinchoff-build-constants-")), "chunk.js");
  writeFileSync(file, source);
  return { file, text: () => readFileSync(file, "utf8") };
}

describe("restoreConstants (build stage 3)", () => {
  it("writes const back for never-assigned initialised top-level vars, one or several declarators", () => {
    const f = linked("var zone0 = -7;\nvar a = 1, b = a + 1;\nfunction f(y) { return y < zone0 ? a : b; }\nexport { f };\n");
    expect(restore(f.file)).toBe(2);
    expect(f.text()).toBe("const zone0 = -7;\nconst a = 1, b = a + 1;\nfunction f(y) { return y < zone0 ? a : b; }\nexport { f };\n");
  });

  it("keeps var for a name assigned anywhere (any scope, compound, ++, destructuring, for-of), a var without initialiser and a destructured declaration", () => {
    const source = [
      "var table;",
      "var hits = 0;",
      "var total = 0;",
      "var last = null;",
      "var pair = 1;",
      "var item = 0;",
      "var { x } = { x: 1 };",
      "var kept = 3;",
      "function use(v) { table ??= [v]; hits++; total += v; [pair] = [v]; for (item of [v]) ; return kept; }",
      "function inner() { let last = 1; last = 2; return last; }",
      "export { use, inner, x, table, hits, total, last, pair, item };",
      "",
    ].join("\n");
    const f = linked(source);
    expect(restore(f.file)).toBe(1);
    expect(f.text()).toBe(source.replace("var kept = 3;", "const kept = 3;"));
  });

  it("leaves a property write alone: the object binding stays const, and the module still evaluates", async () => {
    const f = linked("var state = { n: 0 };\nvar cells = new Float64Array(2);\nstate.n = 1;\ncells[0] = 2;\nexport const read = () => state.n + cells[0];\n");
    expect(restore(f.file)).toBe(2);
    const m = (await import(pathToFileURL(f.file).href)) as { read: () => number };
    expect(m.read()).toBe(3);
  });
});
