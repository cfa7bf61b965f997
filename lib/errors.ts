/**
 * Typed errors. Every error names the offending value, what was expected and
 * where the value came from, so a bad input never turns into a silent NaN.
 */

export type ErrorCode =
  | "invalid-value" // a number out of range, NaN, infinite
  | "wrong-dimension" // "3 V" where a current was expected
  | "unparseable" // text that is not a quantity
  | "infeasible" // a specification no circuit can meet
  | "no-convergence" // a numeric method failed to meet its tolerance
  | "invalid-design" // a design file with unknown or missing fields
  | "io"; // files, processes, external tools

export class PinchoffError extends Error {
  override readonly name: string = "PinchoffError";
  constructor(
    readonly code: ErrorCode,
    message: string,
    /** Where the value came from: a parameter, a field path, a file. */
    readonly origin?: string,
  ) {
    super(origin ? `${origin}: ${message}` : message);
  }
}

/** A value that is out of range, of the wrong kind or not finite. */
export class InputError extends PinchoffError {
  override readonly name = "InputError";
  constructor(
    readonly value: unknown,
    readonly expected: string,
    origin?: string,
    code: ErrorCode = "invalid-value",
  ) {
    super(code, `got ${describe(value)}, expected ${expected}`, origin);
  }
}

/** A specification that cannot be met, explained in numbers. */
export class InfeasibleError extends PinchoffError {
  override readonly name = "InfeasibleError";
  constructor(message: string, origin?: string) {
    super("infeasible", message, origin);
  }
}

export class ConvergenceError extends PinchoffError {
  override readonly name = "ConvergenceError";
  constructor(message: string, origin?: string) {
    super("no-convergence", message, origin);
  }
}

function describe(value: unknown): string {
  if (typeof value === "string") return JSON.stringify(value);
  if (typeof value === "number") return String(value);
  if (value === undefined) return "nothing";
  try {
    return JSON.stringify(value) ?? String(value);
  } catch {
    return String(value);
  }
}

/** Guard a finite number; returns it unchanged. Cheap enough for the hot path's edges. */
export function requireFinite<T extends number>(value: T, origin: string, expected = "a finite number"): T {
  if (typeof value !== "number" || !Number.isFinite(value)) throw new InputError(value, expected, origin);
  return value;
}

/** Guard a finite number > 0. */
export function requirePositive<T extends number>(value: T, origin: string, expected = "a finite number > 0"): T {
  if (typeof value !== "number" || !Number.isFinite(value) || value <= 0) throw new InputError(value, expected, origin);
  return value;
}

/** Guard a finite number ≥ 0. */
export function requireNonNegative<T extends number>(value: T, origin: string, expected = "a finite number ≥ 0"): T {
  if (typeof value !== "number" || !Number.isFinite(value) || value < 0) throw new InputError(value, expected, origin);
  return value;
}
