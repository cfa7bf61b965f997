/**
 * The Wright ω function, ω(y) + ln ω(y) = y for real y (ω(y) = W₀(eʸ), the principal Lambert W of eʸ),
 * for catalog expressions (`wrightOmega(…)`; the generator imports it into generated code). It solves the
 * EKV charge–voltage relation 2q + ln q = v as q = ω(v + ln 2)/2 without forming eᵛ, which would overflow.
 *
 * Method (after Lawrence, Corless & Jeffrey, "Algorithm 917: Complex double-precision evaluation of the
 * Wright ω function", ACM Trans. Math. Software 38(3), 2012, from memory; real line only): a start from the
 * series in x = eʸ below y = −2 (W(x) = Σ (−k)^(k−1)/k!·x^k), from Taylor series about y = −1 and y = 3 up
 * to y = 6 (coefficients from (1 + ω)·ω′ = ω, computed once at load), from the asymptotic series in ln y
 * above; every start is within 2·10⁻⁴, and one Fritsch–Shafer–Crowley step (Comm. ACM 16(2), 123–124,
 * 1973; fourth order) takes it to rounding (below y = −7 the series alone is exact to rounding).
 * Tolerance: relative error ≤ 2·10⁻¹³ for −745 < y < 10⁶ (checked against bisection in
 * test/formula-catalog.test.ts). Failure mode: 0 where eʸ underflows (y < −745), NaN for NaN.
 * One or two transcendental calls, no allocation.
 */

/** ω(y) by Newton's method to convergence from a start w > 0: for the Taylor centres, once, at load. */
function omegaByNewton(y: number, w: number): number {
  for (let k = 0; k < 60; k++) {
    const next = w - ((w + Math.log(w) - y) * w) / (w + 1);
    if (next === w) break;
    w = next;
  }
  return w;
}

/** Taylor coefficients of ω about a centre where ω = w0: (1 + ω)·ω′ = ω matched power by power. */
function taylorCoefficients(w0: number, terms: number): Float64Array {
  const a = new Float64Array(terms + 1);
  a[0] = w0;
  for (let k = 0; k < terms; k++) {
    let s = a[k]!;
    for (let j = 1; j <= k; j++) s -= a[j]! * (k - j + 1) * a[k - j + 1]!;
    a[k + 1] = s / ((k + 1) * (1 + w0));
  }
  return a;
}

const lowCentre = -1;
const highCentre = 3;
const low = taylorCoefficients(omegaByNewton(lowCentre, 0.3), 8);
const high = taylorCoefficients(omegaByNewton(highCentre, 2.2), 8);

const horner = (a: Float64Array, t: number): number => {
  let s = a[a.length - 1]!;
  for (let k = a.length - 2; k >= 0; k--) s = s * t + a[k]!;
  return s;
};

export function wrightOmega(y: number): number {
  let w: number;
  if (y < -2) {
    const x = Math.exp(y);
    w = x * (1 + x * (-1 + x * (3 / 2 + x * (-8 / 3 + x * (125 / 24 + x * (-54 / 5))))));
    // below y = −7 (x < 10⁻³) the series is exact to rounding (the next term is 117649/5040·x⁷): no step needed; 0 where eʸ underflows
    if (y < -7) return w;
  } else if (y < 0.5) w = horner(low, y - lowCentre);
  else if (y < 6) w = horner(high, y - highCentre);
  else {
    // y − ln y is exact to double precision long before the step's products overflow
    if (y > 1e150) return y - Math.log(y);
    const l = Math.log(y);
    const r = 1 / y;
    w = y - l + l * r * (1 + r * ((l - 2) / 2 + (r * (6 - 9 * l + 2 * l * l)) / 6));
  }
  const z = y - w - Math.log(w);
  const a = 1 + w;
  const q = 2 * a * (a + (2 / 3) * z);
  return w * (1 + ((z / a) * (q - z)) / (q - 2 * z));
}
