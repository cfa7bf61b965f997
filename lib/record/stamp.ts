/**
 * The stamp of a record file the tool wrote: which tool and version, when,
 * from which design file (path and SHA-256 of its bytes), the inputs
 * fingerprint, and the SHA-256 of the record's own text outside the stamp.
 *
 * It lets `pinchoff op --record` replace its own earlier record and nothing
 * else: a file counts as the tool's own only when it carries a stamp block
 * whose body hash matches the text around it. A user's note that quotes a
 * marker phrase, copies a stamp, or a record edited by hand after it was
 * written, all fail that test and are left alone unless the user forces it.
 *
 * HTML carries the stamp as `<script type="application/vnd.pinchoff.record+json">`
 * right after `<head>` (inert: browsers do not run that type); Markdown as a
 * front block `---` / `pinchoff-record: {json}` / `---` at the very top.
 */
import { createHash } from "node:crypto";
import { PinchoffError } from "../errors.js";

export const stampMediaType = "application/vnd.pinchoff.record+json";
const frontKey = "pinchoff-record";

export interface RecordStamp {
  readonly tool: "pinchoff";
  readonly version: string;
  /** The command that wrote it, e.g. "op". */
  readonly command: string;
  /** ISO 8601 UTC time of writing. */
  readonly written: string;
  /** The design file as given on the command line and the SHA-256 (hex) of its bytes. */
  readonly design?: { readonly path: string; readonly sha256: string };
  /** The derivation's inputs fingerprint (lib/record/fingerprint.ts). */
  readonly inputs: string;
  /** SHA-256 (hex) of the record text with the stamp block taken out. */
  readonly body: string;
}

export type StampFormat = "html" | "md";

export const sha256 = (data: string | Uint8Array): string => createHash("sha256").update(data).digest("hex");

/** JSON safe inside a script element: no "</script", no "<!--". */
const scriptJson = (v: unknown) => JSON.stringify(v).replace(/</g, "\\u003c");

const htmlBlock = /<script type="application\/vnd\.pinchoff\.record\+json">([^<]*)<\/script>/;
const mdBlock = new RegExp(`^---\\n${frontKey}: (\\{[^\\n]*\\})\\n---\\n\\n`);

/** The record text with its stamp block added; `body` is computed here from the text. */
export function stampRecord(text: string, format: StampFormat, stamp: Omit<RecordStamp, "body" | "tool">): string {
  const full: RecordStamp = { tool: "pinchoff", ...stamp, body: sha256(text) };
  if (format === "md") return `---\n${frontKey}: ${JSON.stringify(full)}\n---\n\n${text}`;
  const at = text.search(/<head>/i);
  if (at < 0) throw new PinchoffError("io", "the HTML record has no <head> to carry its stamp", "record");
  const cut = at + "<head>".length;
  return `${text.slice(0, cut)}<script type="${stampMediaType}">${scriptJson(full)}</script>${text.slice(cut)}`;
}

export type StampCheck = { readonly ok: true; readonly stamp: RecordStamp } | { readonly ok: false; readonly reason: string };

/** Whether `text` is a record the tool wrote and nobody changed since: its stamp parses and its body hash matches. */
export function checkStamp(text: string): StampCheck {
  const html = htmlBlock.exec(text);
  const md = html ? null : mdBlock.exec(text);
  const m = html ?? md;
  if (!m) return { ok: false, reason: "it carries no pinchoff record stamp" };
  let stamp: RecordStamp;
  try {
    stamp = JSON.parse(m[1]!) as RecordStamp;
  } catch {
    return { ok: false, reason: "its pinchoff record stamp is not valid JSON" };
  }
  if (!stamp || typeof stamp !== "object" || stamp.tool !== "pinchoff" || typeof stamp.body !== "string") return { ok: false, reason: "its pinchoff record stamp is incomplete" };
  const body = html ? text.slice(0, m.index) + text.slice(m.index + m[0].length) : text.slice(m[0].length);
  if (sha256(body) !== stamp.body) return { ok: false, reason: "its text differs from what pinchoff wrote (edited since, or a stamp copied into another file)" };
  return { ok: true, stamp };
}
