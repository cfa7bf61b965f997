/**
 * Reading a derivation back from its JSON form (a saved notebook's
 * `application/vnd.pinchoff.derivation+json` output, a `.json` file): checks the
 * shape, turns the strings "Infinity" / "-Infinity" (JSON has no infinities)
 * back into numbers, and names the first bad field.
 */
import { InputError, PinchoffError } from "../errors.js";
import { dimensions, type Dimension } from "../quantity.js";
import { derivationSchemaVersion, type DerivationData } from "./derivation.js";

type Obj = Record<string, unknown>;

const isObj = (x: unknown): x is Obj => !!x && typeof x === "object" && !Array.isArray(x);

function num(x: unknown, at: string): number {
  if (x === "Infinity") return Infinity;
  if (x === "-Infinity") return -Infinity;
  if (typeof x !== "number" || Number.isNaN(x)) throw new InputError(x, 'a number (or "Infinity")', at, "invalid-design");
  return x;
}
function str(x: unknown, at: string): string {
  if (typeof x !== "string") throw new InputError(x, "text", at, "invalid-design");
  return x;
}
function dim(x: unknown, at: string): Dimension {
  if (typeof x !== "string" || !(x in dimensions)) throw new InputError(x, `a dimension (${Object.keys(dimensions).join(", ")})`, at, "invalid-design");
  return x as Dimension;
}
function arr(x: unknown, at: string): unknown[] {
  if (!Array.isArray(x)) throw new InputError(x, "a list", at, "invalid-design");
  return x;
}
function obj(x: unknown, at: string): Obj {
  if (!isObj(x)) throw new InputError(x, "an object", at, "invalid-design");
  return x;
}
const opt = <T>(x: unknown, f: (v: unknown) => T): T | undefined => (x === undefined ? undefined : f(x));
/** Copy only the keys that are present, so optional fields stay absent. */
const pick = (o: Record<string, unknown>) => Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined));

function value(x: unknown, at: string) {
  const o = obj(x, at);
  return { name: str(o.name, `${at}.name`), value: num(o.value, `${at}.value`), dim: dim(o.dim, `${at}.dim`) };
}

/** Validate and revive one derivation from parsed JSON; `origin` names where it came from (a file, a notebook cell). */
export function reviveDerivation(json: unknown, origin = "derivation JSON"): DerivationData {
  const o = obj(json, origin);
  const version = opt(o.schemaVersion, (v) => num(v, `${origin}.schemaVersion`));
  if (version !== undefined && version > derivationSchemaVersion)
    throw new PinchoffError("invalid-design", `schemaVersion ${version} is newer than this pinchoff reads (${derivationSchemaVersion}); update pinchoff`, origin);
  const sev = ["note", "caution", "warning"];
  return pick({
    schemaVersion: version,
    fingerprint: opt(o.fingerprint, (v) => str(v, `${origin}.fingerprint`)),
    title: str(o.title, `${origin}.title`),
    subtitle: opt(o.subtitle, (v) => str(v, `${origin}.subtitle`)),
    inputs: arr(o.inputs, `${origin}.inputs`).map((x, i) => {
      const at = `${origin}.inputs[${i}]`;
      const e = obj(x, at);
      return pick({ ...value(e, at), origin: opt(e.origin, (v) => str(v, `${at}.origin`)), text: opt(e.text, (v) => str(v, `${at}.text`)) });
    }),
    steps: arr(o.steps, `${origin}.steps`).map((x, i) => {
      const at = `${origin}.steps[${i}]`;
      const s = obj(x, at);
      if (s.kind === "note") return { kind: "note", title: str(s.title, `${at}.title`), text: str(s.text, `${at}.text`) };
      if (s.kind !== "formula") throw new InputError(s.kind, '"formula" or "note"', `${at}.kind`, "invalid-design");
      return pick({
        kind: "formula",
        title: str(s.title, `${at}.title`),
        formula: str(s.formula, `${at}.formula`),
        expr: str(s.expr, `${at}.expr`),
        tex: str(s.tex, `${at}.tex`),
        inputs: arr(s.inputs, `${at}.inputs`).map((v, j) => value(v, `${at}.inputs[${j}]`)),
        result: value(s.result, `${at}.result`),
        source: opt(s.source, (v) => str(v, `${at}.source`)),
        because: opt(s.because, (v) => str(v, `${at}.because`)),
      });
    }),
    checks: arr(o.checks, `${origin}.checks`).map((x, i) => {
      const at = `${origin}.checks[${i}]`;
      const c = obj(x, at);
      if (typeof c.passed !== "boolean") throw new InputError(c.passed, "true or false", `${at}.passed`, "invalid-design");
      return pick({
        title: str(c.title, `${at}.title`),
        passed: c.passed,
        value: num(c.value, `${at}.value`),
        dim: dim(c.dim, `${at}.dim`),
        min: opt(c.min, (v) => num(v, `${at}.min`)),
        max: opt(c.max, (v) => num(v, `${at}.max`)),
        margin: num(c.margin, `${at}.margin`),
        detail: opt(c.detail, (v) => str(v, `${at}.detail`)),
      });
    }),
    assumptions: arr(o.assumptions, `${origin}.assumptions`).map((x, i) => str(x, `${origin}.assumptions[${i}]`)),
    sources: arr(o.sources, `${origin}.sources`).map((x, i) => str(x, `${origin}.sources[${i}]`)),
    findings: arr(o.findings, `${origin}.findings`).map((x, i) => {
      const at = `${origin}.findings[${i}]`;
      const f = obj(x, at);
      if (!sev.includes(f.severity as string)) throw new InputError(f.severity, "note, caution or warning", `${at}.severity`, "invalid-design");
      return { severity: f.severity, text: str(f.text, `${at}.text`) };
    }),
  }) as unknown as DerivationData;
}
