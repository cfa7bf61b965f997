// The README's specification-field tables are generated from the table that validates them; keep them equal.
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { specificationMarkdown } from "../lib/bias/spec-fields.js";

describe("README", () => {
  it("documents exactly the specification fields the design-file reader accepts", () => {
    const readme = readFileSync(join(__dirname, "..", "README.md"), "utf8");
    const m = /<!-- specification-fields:begin -->\n([^]*?)\n<!-- specification-fields:end -->/.exec(readme);
    expect(m, "README lacks the specification-fields markers").not.toBeNull();
    expect(m![1]).toBe(specificationMarkdown().trimEnd());
  });
});
