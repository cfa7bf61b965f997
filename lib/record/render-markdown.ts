/**
 * Markdown rendering of a derivation, with TeX in $…$ and $$…$$ (Jupyter and
 * most Markdown viewers with math typeset these). User text is escaped both
 * for HTML (Jupyter's Markdown allows raw HTML) and for Markdown syntax.
 */
import escapeHtml from "escape-html";
import { formatQuantity } from "../units/format.js";
import type { DerivationData } from "./derivation.js";
import { asList, boundText, cautions, marginText, noInputsNote, shortFingerprintOf, valueText, verdict, type DerivationLike, type RenderOptions } from "./render-parts.js";
import { stepTex } from "./substitute.js";

/** Escape a user string for Markdown text and table cells. */
export function escapeMarkdown(text: string): string {
  return escapeHtml(text)
    .replace(/([\\`*_{}[\]()#+!|$~>-])/g, "\\$1")
    .replace(/\r?\n/g, " ");
}

const cell = (s: string) => escapeMarkdown(s);

function table(header: readonly string[], rows: ReadonlyArray<readonly string[]>): string {
  return [`| ${header.join(" | ")} |`, `|${header.map(() => " --- ").join("|")}|`, ...rows.map((r) => `| ${r.join(" | ")} |`)].join("\n");
}

function one(d: DerivationData, opts: RenderOptions): string {
  const out: string[] = [];
  const v = verdict(d);
  out.push(`### ${escapeMarkdown(d.title)}`, "");
  if (d.subtitle) out.push(`*${escapeMarkdown(d.subtitle)}*`, "");
  out.push(`Inputs \`${shortFingerprintOf(d)}\`${noInputsNote(d)} · **${v.passed ? "" : "⚠ "}${v.text}**`, "");
  if (d.inputs.length) {
    out.push("**Given**", "");
    out.push(
      table(
        ["Quantity", "Value", "From"],
        d.inputs.map((i) => [cell(i.name), cell(formatQuantity(i.value, i.dim, { ...opts, origin: `input ${i.name}` })), cell([i.origin, i.text ? `"${i.text}"` : ""].filter(Boolean).join(" "))]),
      ),
      "",
    );
  }
  if (d.steps.length) {
    out.push("**Working**", "");
    d.steps.forEach((s, n) => {
      out.push(`${n + 1}. **${escapeMarkdown(s.title)}**${s.kind === "formula" && s.because ? ` — ${escapeMarkdown(s.because)}` : ""}`, "");
      // A note's own line breaks are kept (a hard break per line), so a list in a note stays a list.
      if (s.kind === "note") out.push(s.text.split("\n").map((l) => `   ${escapeMarkdown(l)}`).join("  \n"), "");
      else {
        const t = stepTex(s, opts);
        out.push(`   $$${t.formula}$$`, "", `   $$${t.substituted}$$`, "", `   $$${t.result}$$`, "");
      }
    });
  }
  if (d.checks.length) {
    out.push("**Checks**", "");
    out.push(
      table(
        ["", "Check", "Value", "Required", "Margin"],
        d.checks.map((c) => [c.passed ? "✓ pass" : "✗ **FAIL**", cell(c.title) + (c.detail ? ` — ${cell(c.detail)}` : ""), cell(valueText(c, opts)), cell(boundText(c, opts)), cell(marginText(c, opts))]),
      ),
      "",
    );
  }
  if (d.assumptions.length) out.push("**Assumptions**", "", ...d.assumptions.map((a) => `- ${escapeMarkdown(a)}`), "");
  if (d.findings.length) out.push("**Findings**", "", ...d.findings.map((f) => `- **${f.severity}:** ${escapeMarkdown(f.text)}`), "");
  if (d.sources.length) out.push("**Sources**", "", ...d.sources.map((s, i) => `${i + 1}. ${escapeMarkdown(s)}`), "");
  return out.join("\n");
}

/** A derivation, or a whole design's derivations, as Markdown. */
export function renderMarkdown(data: DerivationLike | readonly DerivationLike[], opts: RenderOptions = {}): string {
  const body = asList(data).map((d) => one(d, opts)).join("\n---\n\n");
  return opts.omitCautions ? body : `${body}\n> ${escapeMarkdown(cautions)}\n`;
}
