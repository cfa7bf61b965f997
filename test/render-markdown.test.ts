import { describe, expect, it } from "vitest";
import { renderMarkdown, escapeMarkdown } from "../lib/record/render.js";
import { fixtureDerivation } from "./support/derivation-fixture.js";

describe("Markdown rendering", () => {
  const data = fixtureDerivation().toJSON();
  const md = renderMarkdown(data);

  it("typesets each formula step as three display-math blocks", () => {
    const formulas = data.steps.filter((s) => s.kind === "formula");
    expect(md.match(/^ {3}\$\$.*\$\$$/gm)).toHaveLength(3 * formulas.length);
    // Formula, substituted values with units, result: e.g. the device gain step.
    expect(md).toContain("$$k = \\frac{{k'}\\cdot{W}}{{L}}$$");
    expect(md).toContain("\\left(120\\,\\mu\\mathrm{A/V^{2}}\\right)");
    expect(md).toContain("$$k = 2.40\\,\\mathrm{m}\\mathrm{A/V^{2}}$$");
  });

  it("escapes user text for HTML and Markdown, including table pipes and dollar signs", () => {
    expect(md).not.toContain("<script>");
    expect(md).toContain("&lt;script&gt;");
    expect(md).toContain("invented 1.8 V bias cell \\| test");
    expect(escapeMarkdown("a|b $x$ *y* [z](u)")).toBe("a\\|b \\$x\\$ \\*y\\* \\[z\\]\\(u\\)");
    expect(md).toContain("Invented reference \\*for\\* the test \\[1\\]");
  });

  it("has a checks table with one row per check, value, bound and margin", () => {
    const rows = md.split("\n").filter((l) => /^\| (✓ pass|✗ \*\*FAIL\*\*) \|/.test(l));
    expect(rows).toHaveLength(3);
    expect(rows[1]).toContain("300 mV … 500 mV");
    expect(rows[1]).toContain("\\-44.8 mV");
    for (const r of rows) expect(r.split(" | ")).toHaveLength(5);
  });

  it("shows the short fingerprint, the verdict and the cautions", () => {
    expect(md).toContain(`Inputs \`${data.fingerprint!.slice(0, 12)}\``);
    expect(md).toContain("1 of 3 checks fail");
    expect(md).toMatch(/^> Hand analysis/m);
    expect(renderMarkdown(data, { omitCautions: true })).not.toContain("Hand analysis");
  });
});
