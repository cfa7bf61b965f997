/**
 * Node built-ins of the numeric core, taken through `require` rather than `import`.
 *
 * Why: `node:crypto` pulls in Node's stream machinery and `node:child_process`
 * its networking layer, and `node:os` is not in Node's start-up set either; the
 * core needs them only at its edges (hashing, temporary names, starting ngspice),
 * so each loads on its first use. `node:fs` is loaded at start-up, but Node's
 * ES module view of a built-in reads every export, and `fs`'s stream classes
 * then load the stream machinery anyway: `import … from "node:fs"` cost the
 * core's import about 4 ms (Node 20, measured with `process.moduleLoadList` and
 * interleaved runs) for streams it never uses; `require` returns the module object
 * as it is. A synchronous `require` through `createRequire` keeps the callers
 * synchronous; Node caches each module, and the getters cache it once more so
 * later calls cost one check.
 */
import { createRequire } from "node:module";

type Crypto = typeof import("node:crypto");
type ChildProcess = typeof import("node:child_process");
type FileSystem = typeof import("node:fs");
type Os = typeof import("node:os");

const requireBuiltin = createRequire(import.meta.url);
let crypto: Crypto | undefined;
let childProcess: ChildProcess | undefined;
let os: Os | undefined;

/** `node:fs`, the module object itself (no ES module view, so no stream machinery). */
export const nodeFs: FileSystem = requireBuiltin("node:fs") as FileSystem;
/** `node:crypto`, loaded on the first call. */
export const nodeCrypto = (): Crypto => (crypto ??= requireBuiltin("node:crypto") as Crypto);
/** `node:child_process`, loaded on the first call. */
export const nodeChildProcess = (): ChildProcess => (childProcess ??= requireBuiltin("node:child_process") as ChildProcess);
/** `node:os`, loaded on the first call. */
export const nodeOs = (): Os => (os ??= requireBuiltin("node:os") as Os);
