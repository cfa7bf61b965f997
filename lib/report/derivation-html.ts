/**
 * A derivation as HTML for the report. The markup comes from the renderer of
 * "pinchoff/render"; this adapter is the one place the report touches it.
 */
import escapeHtml from "escape-html";
import type { DerivationData } from "../record/derivation.js";
import { katexCss } from "./assets.js";

export function renderDerivationHtml(d: DerivationData): string {
  // Placeholder until lib/record/render.ts lands; replaced by its HTML renderer.
  return `<h3>${escapeHtml(d.title)}</h3>`;
}

export const formulaCss = (): string => katexCss();
