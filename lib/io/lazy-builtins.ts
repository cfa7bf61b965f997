/**
 * Node built-ins the numeric core uses only for its edges (hashing, temporary
 * names, starting ngspice), loaded on first use rather than on import.
 *
 * Why: `node:crypto` pulls in Node's stream machinery and `node:child_process`
 * its networking layer; neither is in Node's start-up snapshot, and together they
 * cost several milliseconds of every `import "pinchoff"` (measured on Node 20 with
 * `--cpu-prof`) even in a program that never hashes or simulates. A synchronous
 * `require` through `createRequire` keeps the callers synchronous; Node caches
 * the module, and the getter caches it once more so later calls cost one check.
 */
import { createRequire } from "node:module";

type Crypto = typeof import("node:crypto");
type ChildProcess = typeof import("node:child_process");

const requireBuiltin = createRequire(import.meta.url);
let crypto: Crypto | undefined;
let childProcess: ChildProcess | undefined;

/** `node:crypto`, loaded on the first call. */
export const nodeCrypto = (): Crypto => (crypto ??= requireBuiltin("node:crypto") as Crypto);
/** `node:child_process`, loaded on the first call. */
export const nodeChildProcess = (): ChildProcess => (childProcess ??= requireBuiltin("node:child_process") as ChildProcess);
