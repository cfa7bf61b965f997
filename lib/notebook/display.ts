/**
 * Rich notebook output from inside the tslab kernel.
 *
 * tslab 1.0.22's public `display` API (`display.html(...)`, `display.raw(type, data)`)
 * sends one MIME type per display_data message, so a cell showing html, markdown
 * and plain text that way gets three separate outputs. Its kernel, however,
 * keeps the writer of the running cell in `tslab/dist/jupyter.js` as
 * `lastWriteDisplayData(content, update)`, which takes a whole display_data
 * content ({ data, metadata, transient }) with any number of MIME types. We find
 * that module in Node's module cache (whichever tslab installation runs the
 * kernel) and send one bundle per output, as a front end expects: it picks the
 * richest type it can draw, and tools read our JSON type back from the saved
 * notebook. Outside a kernel `emit` reports false and callers fall back to text.
 */
import { createRequire } from "node:module";

/** MIME type → payload: strings for text types, plain JSON values for `+json` types. */
export type MimeBundle = Readonly<Record<string, unknown>>;

type Writer = (content: { data: MimeBundle; metadata: Record<string, unknown>; transient: Record<string, unknown> }, update: boolean) => void;

interface TslabJupyterModule {
  lastWriteDisplayData?: Writer | null;
}

const requireHere = createRequire(import.meta.url);
const kernelModule = /[\\/]tslab[\\/]dist[\\/]jupyter\.js$/;

/** The display writer of the cell now running, or undefined outside a tslab kernel. */
export function kernelWriter(): Writer | undefined {
  const cache = requireHere.cache as Record<string, { exports?: TslabJupyterModule } | undefined>;
  for (const [file, mod] of Object.entries(cache)) {
    if (!kernelModule.test(file)) continue;
    const w = mod?.exports?.lastWriteDisplayData;
    if (typeof w === "function") return w;
  }
  return undefined;
}

/** True when running inside a tslab kernel cell. */
export const inKernel = (): boolean => kernelWriter() !== undefined;

/**
 * Send one display_data message carrying every MIME type of `bundle`.
 * Returns false (and sends nothing) outside a tslab kernel.
 */
export function emit(bundle: MimeBundle, metadata: Record<string, unknown> = {}): boolean {
  const write = kernelWriter();
  if (!write) return false;
  write({ data: bundle, metadata, transient: {} }, false);
  return true;
}
