/**
 * A derivation as HTML for the report, from the "pinchoff/render" renderer;
 * this adapter is the one place the report touches it. The report states the
 * cautions once for the whole run, so each derivation omits its own.
 */
import type { DerivationData } from "../record/derivation.js";
import { htmlStyles, renderHtmlFragment } from "../record/render.js";

export const renderDerivationHtml = (d: DerivationData): string => renderHtmlFragment(d, { omitCautions: true, celsius: true });

/** The <style> elements the derivation markup needs, once per report (KaTeX's with inlined fonts, and the record's). */
export const formulaStyles = (): string => htmlStyles({ katex: true });
