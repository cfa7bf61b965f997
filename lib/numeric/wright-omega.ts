/**
 * The Wright ω function, ω(y) + ln ω(y) = y for real y (ω(y) = W₀(eʸ), the principal Lambert W of eʸ),
 * for catalog expressions (`wrightOmega(…)`; the generator imports it into generated code). It solves the
 * EKV charge–voltage relation 2q + ln q = v as q = ω(v + ln 2)/2 without forming eᵛ, which would overflow.
 *
 * Method, by range of y (no iteration anywhere on −745 < y < 297):
 * - y < −7: the series in x = eʸ, W(x) = Σ (−k)^(k−1)/k!·x^k to x⁶ (x < 10⁻³; the x⁷ term is below
 *   3·10⁻²⁰ relative), x from the table-driven `exp` of lib/numeric/elementary.ts. Where eʸ underflows
 *   (y < −745) the result is 0; −Infinity gives 0; between −745 and −708 ω is subnormal (fewer digits).
 * - −7 ≤ y < 297: piecewise polynomials of degree 8 in the segment's centred variable, one Horner chain.
 *   Segments 0.25 wide on [−7, 9), 1 wide on [9, 41), 4 wide on [41, 297) (plus one spare after 297 so a
 *   rounded index at the top edge stays in the table): ω's nearest singularities are at y = −1 ± iπ, so the
 *   width may grow with the distance from them. Each polynomial interpolates ω at the 9 Chebyshev nodes of
 *   its segment, in the power basis of v ∈ [−½, ½] (161 segments in one Float64Array, built on first use
 *   from an accurate reference, Newton's method and a Fritsch–Shafer–Crowley step: 5–30 ms before the JIT
 *   warms up, so not at import). The index is a zone compare, a multiply and a truncation; where a rounded
 *   index lands one past a zone's last segment it reads the next zone's first segment at its left edge,
 *   which is the same point.
 * - y ≥ 297 (and for building the tables): the asymptotic series in ln y as a start (within 2·10⁻⁴), then
 *   one Fritsch–Shafer–Crowley step (Comm. ACM 16(2), 123–124, 1973; fourth order), after Lawrence,
 *   Corless & Jeffrey, "Algorithm 917: Complex double-precision evaluation of the Wright ω function",
 *   ACM Trans. Math. Software 38(3), 2012 (from memory; real line only). Above y = 10¹⁵⁰, y − ln y is exact
 *   to rounding; +Infinity gives +Infinity. NaN gives NaN.
 * Tolerance (test/wright-omega.test.ts, against bisection on ln ω): relative error measured 3.3·10⁻¹⁵
 * on −7…297 (dense grid and every segment edge ± 1 ulp), 2·10⁻¹⁵ on 297…10⁶; below −7 within the
 * reference's own error (about one ulp of |y|: 1·10⁻¹⁴ at y = −40, 1·10⁻¹³ at −708). The test holds
 * it to 10⁻¹⁴ on the polynomial range and to 2·10⁻¹³ everywhere. Values either side of a segment edge
 * differ by ≤ 2.5·10⁻¹⁵.
 * Cost (this machine, one script, a loop over 4096 values in [−30, 50]): 10–17 ns a call against 37–42 ns
 * for the start-plus-step method it replaces on −7 < y < 297; the EKV block evaluator went from 8.9 to
 * 14 M points per second of CPU with it. Evaluating the polynomial by Estrin's scheme instead of Horner's, or
 * picking the zone without branches, measured within the noise, so neither is used.
 * Block form: `wrightOmegaBlock` takes up to 256 values and equals `wrightOmega` value by value. It finds every
 * value's segment first, then runs the Horner chains in a loop with no branch and no call (a 256-value loop on
 * this machine: 8.5–9.3 ns a value against 12.6–14.2 ns one call at a time), then the values below −7 in a pass
 * of their own (mixed −60…40: 15.7 against 19.8 ns with a wasted polynomial for them in the branch-free loop).
 * Generated block evaluators call it between their loops. Before, ω was inlined twice into the EKV evaluator,
 * which left the series' `exp` outside the compiler's inlining budget, so that call boxed its number argument
 * and result; with the block form the EKV block path ran 1.2–1.35× faster (four comparisons, both
 * builds in one process, best of alternating rounds; results bit-identical).
 * Allocation: one 1449-entry table on first use, five 256-entry scratch arrays and a one-entry slot at load,
 * nothing per call.
 */
import { exp } from "./elementary.js";
import { InputError } from "../errors.js";

/** ω(y) for y ≥ 6 from the asymptotic series in ln y and one Fritsch–Shafer–Crowley step. */
function omegaFarOut(y: number): number {
  // y − ln y is exact to double precision long before the step's products overflow
  if (y > 1e150) return y === Infinity ? y : y - Math.log(y);
  const l = Math.log(y);
  const r = 1 / y;
  return fritschStep(y, y - l + l * r * (1 + r * ((l - 2) / 2 + (r * (6 - 9 * l + 2 * l * l)) / 6)));
}

/** One Fritsch–Shafer–Crowley step from w toward ω(y) (fourth order: a start within 2·10⁻⁴ lands at rounding). */
function fritschStep(y: number, w: number): number {
  const z = y - w - Math.log(w);
  const a = 1 + w;
  const q = 2 * a * (a + (2 / 3) * z);
  return w * (1 + ((z / a) * (q - z)) / (q - 2 * z));
}

/** ω(y) by Newton's method from a start w > 0 until a step is below 10⁻¹⁵ relative (table building only; 4–6 steps). */
function omegaByNewton(y: number, w: number): number {
  for (let k = 0; k < 60; k++) {
    const next = w - ((w + Math.log(w) - y) * w) / (w + 1);
    // rounding can leave Newton alternating between neighbours, so stop on a small step, not on equality
    if (Math.abs(next - w) <= 1e-15 * w) return next;
    w = next;
  }
  return w;
}

/**
 * The accurate reference the tables interpolate: below y = 6, Newton from eʸ (ω ≤ eʸ, and Newton on the
 * concave w + ln w − y lands below the root and then climbs to it) and one FSC step to settle rounding; above,
 * the far-out method polished by a second FSC step.
 */
function omegaReference(y: number): number {
  if (y >= 6) return fritschStep(y, omegaFarOut(y));
  return fritschStep(y, omegaByNewton(y, Math.exp(y)));
}

/** Polynomial degree and the zones: [from, to) split into segments of one width. */
const degree = 8;
const stride = degree + 1;
const zone0 = -7;
const zone1 = 9;
const zone2 = 41;
const zone3 = 297;
const width0 = 0.25;
const width1 = 1;
const width2 = 4;
const count0 = (zone1 - zone0) / width0;
const count1 = (zone2 - zone1) / width1;
const count2 = (zone3 - zone2) / width2;
const base1 = count0;
const base2 = count0 + count1;
const inverse0 = 1 / width0;
const inverse1 = 1 / width1;
const inverse2 = 1 / width2;

/** Left edges of every segment and the top of the last, for the edge and continuity tests. */
export function omegaSegmentEdges(): number[] {
  const edges: number[] = [];
  for (let k = 0; k < count0; k++) edges.push(zone0 + k * width0);
  for (let k = 0; k < count1; k++) edges.push(zone1 + k * width1);
  for (let k = 0; k <= count2; k++) edges.push(zone2 + k * width2);
  return edges;
}

/**
 * The segments' polynomial coefficients, segment k's constant term at k·stride (one spare segment at the
 * top), built on the first call that needs them: building costs 5–30 ms on this machine before the JIT warms
 * up, too much for every import.
 */
let table: Float64Array | undefined;

function buildTable(): Float64Array {
  const n = stride;
  // Values at the Chebyshev nodes x_j = cos(π(j + ½)/n) to power coefficients in v = x/2:
  // c_k = (2/n) Σ_j f_j cos(πk(j + ½)/n) (c₀ halved), then T_k expanded in x, then x^i = 2^i v^i.
  const chebyshev: Float64Array[] = [];
  for (let k = 0; k < n; k++) {
    const t = new Float64Array(n);
    if (k === 0) t[0] = 1;
    else if (k === 1) t[1] = 1;
    else for (let i = 0; i < n; i++) t[i] = (i > 0 ? 2 * chebyshev[k - 1]![i - 1]! : 0) - chebyshev[k - 2]![i]!;
    chebyshev.push(t);
  }
  // two stages (values → Chebyshev coefficients → power coefficients): one combined matrix would form the
  // high powers by cancelling large entries against each other and lose about two digits
  const cosines = new Float64Array(n * n); // [k·n + j]
  for (let k = 0; k < n; k++) for (let j = 0; j < n; j++) cosines[k * n + j] = ((k === 0 ? 1 : 2) / n) * Math.cos((Math.PI * k * (j + 0.5)) / n);
  const segments = count0 + count1 + count2 + 1;
  const built = new Float64Array(segments * n);
  const values = new Float64Array(n);
  const coefficients = new Float64Array(n);
  for (let s = 0; s < segments; s++) {
    const width = s < base1 ? width0 : s < base2 ? width1 : width2;
    const from = s < base1 ? zone0 + s * width0 : s < base2 ? zone1 + (s - base1) * width1 : zone2 + (s - base2) * width2;
    const mid = from + width / 2;
    for (let j = 0; j < n; j++) values[j] = omegaReference(mid + (width / 2) * Math.cos((Math.PI * (j + 0.5)) / n));
    for (let k = 0; k < n; k++) {
      let sum = 0;
      for (let j = 0; j < n; j++) sum += cosines[k * n + j]! * values[j]!;
      coefficients[k] = sum;
    }
    for (let i = 0; i < n; i++) {
      let sum = 0;
      for (let k = i; k < n; k++) sum += coefficients[k]! * chebyshev[k]![i]!;
      built[s * n + i] = sum * 2 ** i;
    }
  }
  return built;
}

/** ω below the polynomial range: the series in x = eʸ (exact to rounding there; 0 where eʸ underflows, and for −Infinity). */
function omegaSeries(y: number): number {
  const x = exp(y);
  return x * (1 + x * (-1 + x * (3 / 2 + x * (-8 / 3 + x * (125 / 24 + x * (-54 / 5))))));
}

/** ω outside the polynomial range −7 ≤ y < 297: the series below it, the far-out method above it (and NaN). */
function omegaOutside(y: number): number {
  return y < zone0 ? omegaSeries(y) : omegaFarOut(y);
}

/** The centred variable v ∈ [−½, ½] of the last `segmentOf`, beside its returned offset (a typed slot, no allocation). */
const segmentVariable = new Float64Array(1);

/**
 * The table offset of y's segment, its centred variable in `segmentVariable[0]`; −1 outside −7 ≤ y < 297 (and for
 * NaN, which fails every compare). The scalar and block forms share it, so they compute alike.
 */
function segmentOf(y: number): number {
  let s: number;
  let base: number;
  if (y < zone1) {
    if (y < zone0) return -1;
    s = (y - zone0) * inverse0;
    base = 0;
  } else if (y < zone2) {
    s = (y - zone1) * inverse1;
    base = base1;
  } else if (y < zone3) {
    s = (y - zone2) * inverse2;
    base = base2;
  } else return -1;
  const i = s | 0;
  segmentVariable[0] = s - i - 0.5;
  return (base + i) * stride;
}

/** The segment polynomial at offset o, one Horner chain in v. */
function segmentPolynomial(c: Float64Array, o: number, v: number): number {
  return c[o]! + v * (c[o + 1]! + v * (c[o + 2]! + v * (c[o + 3]! + v * (c[o + 4]! + v * (c[o + 5]! + v * (c[o + 6]! + v * (c[o + 7]! + v * c[o + 8]!)))))));
}

export function wrightOmega(y: number): number {
  const o = segmentOf(y);
  if (o < 0) return omegaOutside(y);
  return segmentPolynomial(table ?? (table = buildTable()), o, segmentVariable[0]!);
}

/** A block's values inside the polynomial range (index, offset, centred variable) and outside it (index, value). */
export const omegaBlockSize = 256;
const insideIndices = new Int32Array(omegaBlockSize);
const insideOffsets = new Int32Array(omegaBlockSize);
const insideVariables = new Float64Array(omegaBlockSize);
const outsideIndices = new Int32Array(omegaBlockSize);
const outsideValues = new Float64Array(omegaBlockSize);

/**
 * ω(y[k]) into w[k] for k < count (count ≤ omegaBlockSize; w may be y): the block evaluators' form, equal to
 * `wrightOmega` value by value. Three passes: each value's segment (or that it lies outside −7 ≤ y < 297),
 * the polynomials of the values inside, in a loop with no branch and no call, so the processor overlaps their
 * independent Horner chains, then the values outside. One call per value, branching by zone, measured about a
 * third slower (a 256-value loop, this machine), and calls the caller's compiler does not inline box their
 * number arguments.
 */
export function wrightOmegaBlock(y: Float64Array, w: Float64Array, count: number): void {
  if (!(Number.isInteger(count) && count >= 0 && count <= omegaBlockSize && count <= y.length && count <= w.length))
    throw new InputError(count, `a value count of at most ${omegaBlockSize} and the arrays' lengths`, "wrightOmegaBlock");
  const c = table ?? (table = buildTable());
  let inside = 0;
  let outside = 0;
  for (let k = 0; k < count; k++) {
    const o = segmentOf(y[k]!);
    if (o < 0) {
      outsideIndices[outside] = k;
      outsideValues[outside++] = y[k]!;
    } else {
      insideIndices[inside] = k;
      insideOffsets[inside] = o;
      insideVariables[inside++] = segmentVariable[0]!;
    }
  }
  for (let j = 0; j < inside; j++) w[insideIndices[j]!] = segmentPolynomial(c, insideOffsets[j]!, insideVariables[j]!);
  for (let j = 0; j < outside; j++) w[outsideIndices[j]!] = omegaOutside(outsideValues[j]!);
}
