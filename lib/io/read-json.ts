/**
 * Read a JSON file the user names (a card, a part card): its text, without a
 * leading byte-order mark, parsed; an unreadable file is PinchoffError("io")
 * naming it, bad JSON an InputError("unparseable") quoting its start.
 */
import { InputError, PinchoffError } from "../errors.js";
import { nodeFs } from "./lazy-builtins.js";

const { readFileSync } = nodeFs;

export function readJsonFile(path: string, what: string): unknown {
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (e) {
    throw new PinchoffError("io", `cannot read the ${what} (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`, path);
  }
  // A byte-order mark is how some editors start a UTF-8 file; it is not part of the JSON.
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new InputError(text.length > 60 ? `${text.slice(0, 60)}…` : text, `JSON (${(e as Error).message})`, path, "unparseable");
  }
}
