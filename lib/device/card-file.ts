/**
 * Card files: a fitted device card, or a card set by L, as JSON (plain SI
 * numbers, the shape `pinchoff fit --card` writes and design files hold under
 * `device.card`). Written through the atomic writer, exclusively unless the
 * caller says to replace; read back validated once (`checkCard`,
 * `checkCardSet`), every error naming the file.
 */
import { dirname, join } from "node:path";
import { InputError, PinchoffError } from "../errors.js";
import { writeAtomically, type FileSystemSeam } from "../io/atomic-write.js";
import { readJsonFile } from "../io/read-json.js";
import { checkCardSet, type CardSet } from "./card-set.js";
import { checkCard, type DeviceCard } from "./card.js";
import { nodeFs, nodeOs } from "../io/lazy-builtins.js";

const { existsSync, lstatSync, mkdirSync } = nodeFs;

/** A card or a card set, as a card file holds it. */
export type CardFileContent = DeviceCard | CardSet;

const isSet = (c: unknown): c is CardSet => typeof c === "object" && c !== null && (c as { kind?: unknown }).kind === "card-set";

/** The file's text for a card or card set (validated first). */
export function cardFileText(content: CardFileContent, origin = "card"): string {
  if (isSet(content)) checkCardSet(content, origin);
  else checkCard(content, origin);
  return `${JSON.stringify(content, null, 2)}\n`;
}

export interface CardWriteOptions {
  /** Replace an existing file at the path (an explicit choice; default false). */
  readonly replace?: boolean;
  /** When the path exists and `replace` is not set: "fail" (default) or "new-name" (write `name-2.json`, `name-3.json`, … instead). */
  readonly ifExists?: "fail" | "new-name";
  readonly fs?: FileSystemSeam;
}

/**
 * Write a card file atomically and return the path written. Without `replace` an
 * existing file (or link) is never replaced: PinchoffError("io") names it, or with
 * `ifExists: "new-name"` the card goes to the first free numbered name beside it.
 */
export function writeCardFile(path: string, content: CardFileContent, opts: CardWriteOptions = {}): string {
  const text = cardFileText(content, path);
  try {
    mkdirSync(dirname(path), { recursive: true });
  } catch (e) {
    throw new PinchoffError("io", `cannot create the card's folder (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`, path);
  }
  const write = (p: string) => writeAtomically([{ path: p, content: text }], { exclusive: opts.replace !== true, ...(opts.fs ? { fs: opts.fs } : {}) });
  if (opts.replace === true || opts.ifExists !== "new-name") {
    write(path);
    return path;
  }
  const dot = path.toLowerCase().endsWith(".json") ? path.length - 5 : path.length;
  for (let n = 1; n <= 999; n++) {
    const p = n === 1 ? path : `${path.slice(0, dot)}-${n}${path.slice(dot)}`;
    if (existsSync(p) || isLink(p)) continue;
    write(p);
    return p;
  }
  throw new PinchoffError("io", "no free name from -2 to -999 beside the card file; remove old cards or choose another path", path);
}

const isLink = (p: string): boolean => {
  try {
    return lstatSync(p).isSymbolicLink();
  } catch {
    return false;
  }
};

/** A path for a card in the system's temporary folder (`pinchoff-cards/`), for a run that names no folder of its own. */
export const scratchCardPath = (name: string): string => join(nodeOs().tmpdir(), "pinchoff-cards", name.replace(/[^\w.-]+/g, "_"));

/** Read and validate a card file: a device card or a card set. */
export function readCardFile(path: string): CardFileContent {
  const json = readJsonFile(path, "card file");
  if (typeof json !== "object" || json === null || Array.isArray(json)) throw new InputError(json, "a card object or a card set object", path, "invalid-design");
  return isSet(json) ? checkCardSet(json, path) : checkCard(json as DeviceCard, path);
}
