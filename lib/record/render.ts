/**
 * The "pinchoff/render" entry: derivation records as HTML (KaTeX, offline),
 * Markdown, plain text and JSON. Loads KaTeX and mathjs; the numeric core
 * ("pinchoff") loads neither.
 */
import type { Derivation, DerivationData } from "./derivation.js";
import { derivationSchemaVersion } from "./derivation.js";
import { fingerprint } from "./fingerprint.js";
import { InputError } from "../errors.js";

export { renderHtml, renderHtmlFragment, htmlStyles, katexCss, typeset, cautionsHtml, type HtmlOptions, type MathOutput } from "./render-html.js";
export { renderMarkdown, escapeMarkdown } from "./render-markdown.js";
export { renderText, textTable } from "./render-text.js";
export { cautions, verdict, boundText, marginText, type RenderOptions, type DerivationLike } from "./render-parts.js";
export { stepTex, substitutedTex, substitutedText } from "./substitute.js";
export { fingerprint, fingerprintText, canonicalJson, shortFingerprint, fingerprintScheme } from "./fingerprint.js";
export { pinchoffCss } from "./styles.js";
export { derivationSchemaVersion } from "./derivation.js";
export { reviveDerivation } from "./revive.js";

/** The JSON form: `toJSON()` for a live record; hand-made data gains the schema version and fingerprint. */
export function toData(d: Derivation | DerivationData): DerivationData {
  const data = typeof (d as Derivation).toJSON === "function" ? (d as Derivation).toJSON() : (d as DerivationData);
  return { ...data, schemaVersion: data.schemaVersion ?? derivationSchemaVersion, fingerprint: data.fingerprint ?? fingerprint(data) };
}

/** JSON text of one derivation or a list (a whole design). */
export function renderJson(data: Derivation | DerivationData | ReadonlyArray<Derivation | DerivationData>, indent = 2): string {
  // JSON has no Infinity: write it as a string (an open bound, an infinite ro); a NaN is a defect upstream.
  return JSON.stringify(
    Array.isArray(data) ? data.map(toData) : toData(data as Derivation | DerivationData),
    (k, v) => {
      if (typeof v !== "number" || Number.isFinite(v)) return v;
      if (Number.isNaN(v)) throw new InputError(v, "a number in the derivation record", `field ${JSON.stringify(k)}`);
      return v > 0 ? "Infinity" : "-Infinity";
    },
    indent,
  );
}
