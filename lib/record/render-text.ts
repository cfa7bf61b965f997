/**
 * Plain-text rendering of a derivation, for a terminal or a log: aligned
 * columns, formulas written as expressions, no markup.
 */
import { formatQuantity } from "../units/format.js";
import type { DerivationData } from "./derivation.js";
import { asList, boundText, cautions, marginText, noInputsNote, shortFingerprintOf, statusText, valueText, verdict, type DerivationLike, type RenderOptions } from "./render-parts.js";
import { substitutedText } from "./substitute.js";

/** Columns padded to their widest cell (code points, which suits the symbols we print). */
export function textTable(header: readonly string[], rows: ReadonlyArray<readonly string[]>, indent = "  "): string {
  const len = (s: string) => [...s].length;
  const widths = header.map((h, i) => Math.max(len(h), ...rows.map((r) => len(r[i] ?? ""))));
  const line = (cells: readonly string[]) =>
    indent + cells.map((c, i) => (i === cells.length - 1 ? c : c + " ".repeat(widths[i]! - len(c)))).join("  ").trimEnd();
  return [line(header), indent + widths.map((w) => "-".repeat(w)).join("  "), ...rows.map(line)].join("\n");
}

function wrap(text: string, width: number, indent: string): string {
  // The text's own line breaks stay (a list in a note is one entry per line); each line is wrapped on its own.
  if (text.includes("\n")) return text.split("\n").map((l) => wrap(l, width, indent)).join("\n");
  const words = text.split(/\s+/).filter(Boolean);
  const lines: string[] = [];
  let cur = "";
  for (const w of words) {
    if (cur && [...cur].length + 1 + [...w].length > width) {
      lines.push(cur);
      cur = w;
    } else cur = cur ? `${cur} ${w}` : w;
  }
  if (cur) lines.push(cur);
  return lines.map((l) => indent + l).join("\n");
}

function one(d: DerivationData, opts: RenderOptions): string {
  const out: string[] = [];
  const v = verdict(d);
  out.push(d.title, "=".repeat([...d.title].length));
  if (d.subtitle) out.push(d.subtitle);
  out.push(`inputs ${shortFingerprintOf(d)}${noInputsNote(d)} · ${v.text}`, "");
  if (d.inputs.length) {
    out.push("Given");
    out.push(
      textTable(
        ["quantity", "value", "from"],
        d.inputs.map((i) => [i.name, formatQuantity(i.value, i.dim, { ...opts, origin: `input ${i.name}` }), [i.origin, i.text ? `"${i.text}"` : ""].filter(Boolean).join(" ")]),
      ),
      "",
    );
  }
  if (d.steps.length) {
    out.push("Working");
    d.steps.forEach((s, n) => {
      const no = `${n + 1}.`;
      const pad = " ".repeat(no.length + 3);
      out.push(`  ${no} ${s.title}`);
      if (s.kind === "note") {
        out.push(wrap(s.text, 76, pad));
      } else {
        if (s.because) out.push(wrap(`(${s.because})`, 76, pad));
        out.push(`${pad}${s.result.name} = ${s.expr}`);
        out.push(`${pad}${" ".repeat(s.result.name.length)} = ${substitutedText(s, opts)}`);
        out.push(`${pad}${" ".repeat(s.result.name.length)} = ${formatQuantity(s.result.value, s.result.dim, { ...opts, origin: `step "${s.title}" result` })}`);
      }
    });
    out.push("");
  }
  if (d.checks.length) {
    out.push("Checks");
    out.push(
      textTable(
        ["", "check", "value", "required", "margin"],
        d.checks.map((c) => [statusText(c), c.title, valueText(c, opts), boundText(c, opts), marginText(c, opts) + (c.detail ? `  ${c.detail}` : "")]),
      ),
      "",
    );
  }
  if (d.assumptions.length) out.push("Assumptions", ...d.assumptions.map((a) => wrap(a, 74, "    ").replace(/^ {4}/, "  - ")), "");
  if (d.findings.length) out.push("Findings", ...d.findings.map((f) => wrap(`${f.severity.toUpperCase()}: ${f.text}`, 74, "    ").replace(/^ {4}/, "  - ")), "");
  if (d.sources.length) out.push("Sources", ...d.sources.map((s, i) => wrap(s, 72, "      ").replace(/^ {6}/, `  [${i + 1}] `.padEnd(6))), "");
  return out.join("\n");
}

/** A derivation, or a whole design's derivations, as terminal text. */
export function renderText(data: DerivationLike | readonly DerivationLike[], opts: RenderOptions = {}): string {
  const body = asList(data).map((d) => one(d, opts)).join("\n");
  return opts.omitCautions ? body : `${body}\n${wrap(`Caution: ${cautions}`, 78, "")}\n`;
}
