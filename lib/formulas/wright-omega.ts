/**
 * The Wright ω function, ω(y) + ln ω(y) = y for real y (ω(y) = W₀(eʸ), the principal Lambert W of eʸ),
 * for catalog expressions (`wrightOmega(…)`; the generator imports it into generated code). It solves the
 * EKV charge–voltage relation 2q + ln q = v as q = ω(v + ln 2)/2 without forming eᵛ, which would overflow.
 *
 * Method (Lawrence, Corless & Jeffrey, "Algorithm 917: Complex double-precision evaluation of the Wright ω
 * function", ACM Trans. Math. Software 38(3), 2012, from memory; real line only): a start from the series
 * in x = eʸ below y = −2 (W(x) = Σ (−k)^(k−1)/k!·x^k), the Taylor series about y = 1 up to y = 4.5, the
 * asymptotic series in ln y above; then the Fritsch–Shafer–Crowley step (Comm. ACM 16(2), 123–124, 1973),
 * of fourth order, once (twice on the Taylor stretch, whose start is coarser at its ends).
 * Tolerance: relative error ≤ 2·10⁻¹³ for −745 < y < 10⁶ (checked against bisection in
 * test/formula-catalog.test.ts). Failure mode: 0 where eʸ underflows (y < −745), NaN for NaN.
 * Two transcendental calls, no allocation.
 */
export function wrightOmega(y: number): number {
  let w: number;
  let steps = 1;
  if (y < -2) {
    const x = Math.exp(y);
    if (x === 0) return 0;
    w = x * (1 + x * (-1 + x * (3 / 2 + x * (-8 / 3 + x * (125 / 24 + x * (-54 / 5))))));
  } else if (y < 4.5) {
    const t = y - 1;
    w = 1 + t * (1 / 2 + t * (1 / 16 + t * (-1 / 192 + t * (-1 / 3072 + t * (13 / 61440)))));
    steps = 2;
  } else {
    // y − ln y is exact to double precision long before the step's products overflow
    if (y > 1e150) return y - Math.log(y);
    const l = Math.log(y);
    const r = 1 / y;
    w = y - l + l * r * (1 + r * ((l - 2) / 2 + (r * (6 - 9 * l + 2 * l * l)) / 6));
  }
  for (let k = 0; k < steps; k++) {
    const z = y - w - Math.log(w);
    const a = 1 + w;
    const q = 2 * a * (a + (2 / 3) * z);
    w *= 1 + ((z / a) * (q - z)) / (q - 2 * z);
  }
  return w;
}
