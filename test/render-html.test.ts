import { describe, expect, it } from "vitest";
import { renderHtml, renderHtmlFragment, htmlStyles, katexCss, typeset } from "../lib/record/render.js";
import { fingerprint } from "../lib/record/fingerprint.js";
import { cautionList } from "../lib/record/cautions.js";
import { fixtureDerivation } from "./support/derivation-fixture.js";

describe("HTML rendering", () => {
  const d = fixtureDerivation();
  const data = d.toJSON();
  const page = renderHtml(data);

  it("is self-contained: no script, no external link, every font a data URL", () => {
    // Assert on the matches, not the page: a failure should not print half a megabyte.
    expect(page.match(/<script|<link|<iframe|<img/gi)).toBeNull();
    expect(page.match(/url\((?!data:)[^)]*\)/g)).toBeNull();
    // XML namespace names are identifiers that browsers never fetch.
    const urls = new Set(page.match(/https?:\/\/[^"' )]*/g) ?? []);
    expect([...urls].sort()).toEqual(["http://www.w3.org/1998/Math/MathML", "http://www.w3.org/2000/svg"]);
    const faces = katexCss().match(/@font-face\{[^}]*\}/g) ?? [];
    expect(faces.length).toBeGreaterThanOrEqual(20);
    for (const f of faces) expect(f).toMatch(/src:url\(data:font\/woff2;base64,[A-Za-z0-9+/=]{100,}\) format\("woff2"\)/);
  });

  it("stays within a size an e-mail attachment tolerates (< 1 MB; measured about 0.45 MB)", () => {
    expect(Buffer.byteLength(page)).toBeLessThan(1_000_000);
  });

  it("escapes every user string", () => {
    expect(page).not.toContain("<script>alert");
    expect(page).toContain("&lt;script&gt;alert(&#39;x&#39;)&lt;/script&gt;");
    expect(page).toContain("Operating point of M1 &lt;bias&gt; &amp; &quot;cell&quot;");
    expect(page).toContain("<title>Operating point of M1 &lt;bias&gt; &amp; &quot;cell&quot;</title>");
  });

  it("typesets each formula step three times: formula, substituted, result", () => {
    const formulas = data.steps.filter((s) => s.kind === "formula").length;
    const frag = renderHtmlFragment(data);
    expect(frag.match(/class="po-eq[" ]/g)?.length).toBe(3 * formulas);
    expect(frag.match(/class="katex-display"/g)?.length).toBe(3 * formulas);
    expect(frag).not.toContain("katex-error");
    // The substituted line carries values with units, typeset: 120 µA/V² shows as "120" with μ in MathML.
    expect(frag).toContain("<mn>120</mn>");
  });

  it("shows notes as text and checks as a pass/fail table with value, bound and margin", () => {
    expect(page).toMatch(/<li class="po-note"><div class="po-step-title">Region: saturation<\/div><p>VGS − Vt = /);
    const rows = page.match(/<tr class="po-(passed|failed)">.*?<\/tr>/g) ?? [];
    expect(rows).toHaveLength(3);
    expect(rows[0]).toContain("✓ pass");
    expect(rows[0]).toContain("≥ 100 mV");
    expect(rows[1]).toContain("✗ FAIL");
    expect(rows[1]).toContain("300 mV … 500 mV");
    expect(rows[1]).toMatch(/-44\.8 mV/);
    expect(rows[2]).toContain("∞ Ω");
    expect(page).toContain("1 of 3 checks fail");
  });

  it("carries the fingerprint, short in view and full in data", () => {
    const fp = fingerprint(data);
    expect(page).toContain(`data-fingerprint="${fp}"`);
    expect(page).toContain(`>${fp.slice(0, 12)}</code>`);
  });

  it("lists findings by severity, assumptions, sources and the cautions", () => {
    expect(page).toMatch(/<li class="po-caution"><span class="po-severity">caution<\/span>/);
    expect(page).toMatch(/<li class="po-warning">/);
    expect(page).toContain("Body tied to ground");
    expect(page).toContain("Shichman &amp; Hodges");
    for (const c of cautionList) expect(page).toContain(c.replace(/'/g, "&#39;"));
  });

  it("puts several derivations in one page with KaTeX's stylesheet once, and a design fingerprint", () => {
    const two = renderHtml([data, data]);
    expect(two.match(/data-pinchoff="katex"/g)).toHaveLength(1);
    expect(two.match(/<section class="po-record"/g)).toHaveLength(2);
    expect(two).toContain(`design inputs <code title="${fingerprint([data, data])}">`);
    expect(htmlStyles({ katex: false })).not.toContain("KaTeX_Main");
  });

  it("has a MathML-only form that needs no stylesheet", () => {
    const frag = renderHtmlFragment(data, { math: "mathml" });
    expect(frag).not.toContain('class="katex-html"');
    expect(frag).toContain("<math");
    expect(renderHtml(data, { math: "mathml" })).not.toContain("KaTeX_Main");
    expect(typeset("x^2", "mathml")).toMatch(/^<span class="katex"><math/);
  });
});
