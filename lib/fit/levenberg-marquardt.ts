/**
 * Bounded nonlinear least squares: minimise Σ rᵢ(p)² by Levenberg–Marquardt
 * (Marquardt's diagonal scaling, Nielsen's damping update).
 *
 * Method. Bounds are kept by a change of variable: p = lo + (hi − lo)/(1 + e^−u)
 * with both bounds, p = lo + e^u with a lower bound only, p = hi − e^u with an
 * upper bound only; the iteration runs in u, so every trial point is inside the
 * bounds. The Jacobian is the problem's own (analytic, in p) or a forward
 * difference in p with step 1.5e-8·max(|pⱼ|, scaleⱼ), taken inwards at a bound.
 * Each step solves (JᵀJ + μ·diag JᵀJ) δ = −Jᵀr by Cholesky (n is small), and
 * is shortened to at most 2 in any bounded transformed variable.
 *
 * Stopping rules (any one): relative decrease of Σr² below `ftol` on an accepted
 * step; step ‖δ‖ ≤ xtol·(‖u‖ + xtol); ‖Jᵀr‖∞ ≤ gtol; μ above 1e15 with no
 * decrease (no descent left at machine precision: a stationary point).
 * Failure: `maxIterations` accepted or rejected steps without meeting a rule, or
 * a residual that is not finite, throws ConvergenceError naming the RMS reached.
 *
 * Uncertainty: at the solution, cov = s²·(JᵀJ)⁻¹ in p with s² = Σr²/(m − n);
 * the standard error of a parameter that JᵀJ does not determine (singular, or
 * pinned at a bound) is reported as Infinity, never NaN.
 *
 * Allocation: all work arrays are allocated once per call; the iteration
 * allocates nothing (the residual and Jacobian callbacks write into given arrays).
 */
import { ConvergenceError, InputError } from "../errors.js";

export interface LeastSquaresProblem {
  /** Number of residuals. */
  readonly m: number;
  /** Number of parameters. */
  readonly n: number;
  /** Write the m residuals at p into r. */
  residuals(p: Float64Array, r: Float64Array): void;
  /** Optional analytic Jacobian ∂rᵢ/∂pⱼ, row-major m×n, at p (r holds the residuals at p). */
  jacobian?(p: Float64Array, r: Float64Array, jac: Float64Array): void;
}

export interface LeastSquaresOptions {
  readonly lower?: ArrayLike<number>;
  readonly upper?: ArrayLike<number>;
  /** Typical magnitude of each parameter, for the difference step (default 1). */
  readonly scale?: ArrayLike<number>;
  readonly maxIterations?: number;
  readonly ftol?: number;
  readonly xtol?: number;
  readonly gtol?: number;
  /** Called after each accepted step (for progress bars). */
  readonly onIteration?: (iteration: number, sumSquares: number) => void;
  /** Names the problem in errors. */
  readonly origin?: string;
}

export type StopReason = "ftol" | "xtol" | "gtol" | "stationary";

export interface LeastSquaresResult {
  readonly p: Float64Array;
  readonly sumSquares: number;
  /** sqrt(Σr²/m). */
  readonly rms: number;
  readonly iterations: number;
  readonly evaluations: number;
  readonly stop: StopReason;
  /** Standard error of each parameter (Infinity when the data do not determine it). */
  readonly stdErr: Float64Array;
  /** Row-major n×n covariance s²(JᵀJ)⁻¹ (Infinity on the diagonal where undetermined). */
  readonly covariance: Float64Array;
  /** Residuals at the solution. */
  readonly residuals: Float64Array;
}

const enum Kind {
  Free,
  Both,
  Lower,
  Upper,
}

/** Cholesky factor of the n×n SPD matrix a (row-major) into l; false when not positive definite. */
function cholesky(a: Float64Array, l: Float64Array, n: number): boolean {
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = a[i * n + j]!;
      for (let k = 0; k < j; k++) s -= l[i * n + k]! * l[j * n + k]!;
      if (i === j) {
        if (!(s > 0)) return false;
        l[i * n + i] = Math.sqrt(s);
      } else l[i * n + j] = s / l[j * n + j]!;
    }
    for (let j = i + 1; j < n; j++) l[i * n + j] = 0;
  }
  return true;
}

/** Solve l lᵀ x = b in place of x. */
function choleskySolve(l: Float64Array, b: Float64Array, x: Float64Array, n: number): void {
  for (let i = 0; i < n; i++) {
    let s = b[i]!;
    for (let k = 0; k < i; k++) s -= l[i * n + k]! * x[k]!;
    x[i] = s / l[i * n + i]!;
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = x[i]!;
    for (let k = i + 1; k < n; k++) s -= l[k * n + i]! * x[k]!;
    x[i] = s / l[i * n + i]!;
  }
}

export function leastSquares(problem: LeastSquaresProblem, start: ArrayLike<number>, opts: LeastSquaresOptions = {}): LeastSquaresResult {
  const { m, n } = problem;
  const origin = opts.origin ?? "least-squares fit";
  if (!(n >= 1) || start.length !== n) throw new InputError(start.length, `${n} starting values`, origin);
  if (m < n) throw new InputError(m, `at least ${n} points (one per fitted parameter) in the fit window`, origin);
  const maxIt = opts.maxIterations ?? 200;
  const ftol = opts.ftol ?? 1e-10;
  const xtol = opts.xtol ?? 1e-10;
  const gtol = opts.gtol ?? 1e-12;
  const lo = new Float64Array(n);
  const hi = new Float64Array(n);
  const kind = new Uint8Array(n);
  const scale = new Float64Array(n);
  const u = new Float64Array(n);
  const p = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    lo[j] = opts.lower?.[j] ?? -Infinity;
    hi[j] = opts.upper?.[j] ?? Infinity;
    scale[j] = Math.abs(opts.scale?.[j] ?? 1) || 1;
    const s = start[j]!;
    if (!Number.isFinite(s) || !(lo[j]! < hi[j]!) || s <= lo[j]! || s >= hi[j]!) throw new InputError(s, `a finite start strictly inside (${lo[j]}, ${hi[j]})`, `${origin}: parameter ${j}`);
    const fl = Number.isFinite(lo[j]!);
    const fh = Number.isFinite(hi[j]!);
    kind[j] = fl && fh ? Kind.Both : fl ? Kind.Lower : fh ? Kind.Upper : Kind.Free;
    u[j] = kind[j] === Kind.Both ? Math.log((s - lo[j]!) / (hi[j]! - s)) : kind[j] === Kind.Lower ? Math.log(s - lo[j]!) : kind[j] === Kind.Upper ? Math.log(hi[j]! - s) : s;
  }
  const toP = (uu: Float64Array, pp: Float64Array) => {
    for (let j = 0; j < n; j++) {
      const v = uu[j]!;
      switch (kind[j]) {
        case Kind.Both: pp[j] = lo[j]! + (hi[j]! - lo[j]!) / (1 + Math.exp(-v)); break;
        case Kind.Lower: pp[j] = lo[j]! + Math.exp(v); break;
        case Kind.Upper: pp[j] = hi[j]! - Math.exp(v); break;
        default: pp[j] = v;
      }
    }
  };
  const dpdu = (j: number, pj: number) =>
    kind[j] === Kind.Both ? ((pj - lo[j]!) * (hi[j]! - pj)) / (hi[j]! - lo[j]!) : kind[j] === Kind.Lower ? pj - lo[j]! : kind[j] === Kind.Upper ? -(hi[j]! - pj) : 1;

  const r = new Float64Array(m);
  const rTrial = new Float64Array(m);
  const rStep = new Float64Array(m);
  const jac = new Float64Array(m * n);
  const a = new Float64Array(n * n);
  const aDamped = new Float64Array(n * n);
  const chol = new Float64Array(n * n);
  const g = new Float64Array(n);
  const negG = new Float64Array(n);
  const delta = new Float64Array(n);
  const uTrial = new Float64Array(n);
  const pTrial = new Float64Array(n);
  let evaluations = 0;

  const sumSq = (rr: Float64Array): number => {
    let s = 0;
    for (let i = 0; i < m; i++) s += rr[i]! * rr[i]!;
    return s;
  };
  /** Jacobian in p at p (residuals r at p). */
  const jacobianP = (pp: Float64Array, rr: Float64Array) => {
    if (problem.jacobian) {
      problem.jacobian(pp, rr, jac);
      return;
    }
    for (let j = 0; j < n; j++) {
      const pj = pp[j]!;
      let h = 1.5e-8 * Math.max(Math.abs(pj), scale[j]!);
      if (pj + h >= hi[j]!) h = -h;
      pp[j] = pj + h;
      problem.residuals(pp, rStep);
      evaluations++;
      pp[j] = pj;
      for (let i = 0; i < m; i++) jac[i * n + j] = (rStep[i]! - rr[i]!) / h;
    }
  };
  /** Normal equations in u: a = JuᵀJu, g = Juᵀr. */
  const normal = () => {
    jacobianP(p, r);
    for (let j = 0; j < n; j++) {
      const d = dpdu(j, p[j]!);
      for (let i = 0; i < m; i++) jac[i * n + j]! *= d;
    }
    a.fill(0);
    g.fill(0);
    for (let i = 0; i < m; i++) {
      const row = i * n;
      const ri = r[i]!;
      for (let j = 0; j < n; j++) {
        const jj = jac[row + j]!;
        g[j]! += jj * ri;
        for (let k = 0; k <= j; k++) a[j * n + k]! += jj * jac[row + k]!;
      }
    }
    for (let j = 0; j < n; j++) for (let k = j + 1; k < n; k++) a[j * n + k] = a[k * n + j]!;
  };

  toP(u, p);
  problem.residuals(p, r);
  evaluations++;
  let cost = sumSq(r);
  if (!Number.isFinite(cost)) throw new ConvergenceError("the residuals are not finite at the starting point; check the data and the start values", origin);
  normal();
  let mu = 1e-3;
  let nu = 2;
  let iterations = 0;
  let stop: StopReason | undefined;
  const gInf = () => {
    let s = 0;
    for (let j = 0; j < n; j++) s = Math.max(s, Math.abs(g[j]!));
    return s;
  };
  if (gInf() <= gtol) stop = "gtol";
  while (!stop) {
    if (iterations >= maxIt)
      throw new ConvergenceError(`no convergence after ${maxIt} iterations; RMS residual reached ${Math.sqrt(cost / m).toPrecision(4)} (Σr² = ${cost.toPrecision(4)})`, origin);
    iterations++;
    let dmax = 0;
    for (let j = 0; j < n; j++) dmax = Math.max(dmax, a[j * n + j]!);
    const floor = Math.max(dmax * 1e-12, 1e-300);
    for (let j = 0; j < n * n; j++) aDamped[j] = a[j]!;
    for (let j = 0; j < n; j++) {
      aDamped[j * n + j]! += mu * Math.max(a[j * n + j]!, floor);
      negG[j] = -g[j]!;
    }
    if (!cholesky(aDamped, chol, n)) {
      mu *= nu;
      nu *= 2;
      if (mu > 1e15) stop = "stationary";
      continue;
    }
    choleskySolve(chol, negG, delta, n);
    // At most 2 per step in the transformed variables: a longer step lands on the flat
    // tail of a bound transform, where the gradient vanishes and the fit sticks.
    let big = 0;
    for (let j = 0; j < n; j++) if (kind[j] !== Kind.Free) big = Math.max(big, Math.abs(delta[j]!));
    if (big > 2) for (let j = 0; j < n; j++) delta[j]! *= 2 / big;
    let dn = 0;
    let un = 0;
    for (let j = 0; j < n; j++) {
      uTrial[j] = u[j]! + delta[j]!;
      dn += delta[j]! * delta[j]!;
      un += u[j]! * u[j]!;
    }
    toP(uTrial, pTrial);
    problem.residuals(pTrial, rTrial);
    evaluations++;
    const costTrial = sumSq(rTrial);
    // predicted decrease of the linear model: δᵀ(μ·D·δ − g)
    let pred = 0;
    for (let j = 0; j < n; j++) pred += delta[j]! * (mu * Math.max(a[j * n + j]!, floor) * delta[j]! - g[j]!);
    if (Number.isFinite(costTrial) && costTrial < cost) {
      const rho = pred > 0 ? (cost - costTrial) / pred : 1;
      const rel = (cost - costTrial) / cost;
      u.set(uTrial);
      p.set(pTrial);
      r.set(rTrial);
      cost = costTrial;
      mu *= Math.max(1 / 3, 1 - (2 * rho - 1) ** 3);
      nu = 2;
      opts.onIteration?.(iterations, cost);
      if (rel < ftol) stop = "ftol";
      else if (Math.sqrt(dn) <= xtol * (Math.sqrt(un) + xtol)) stop = "xtol";
      else {
        normal();
        if (gInf() <= gtol) stop = "gtol";
      }
    } else {
      mu *= nu;
      nu *= 2;
      if (mu > 1e15) stop = "stationary";
    }
  }

  // Uncertainty in p at the solution.
  jacobianP(p, r);
  a.fill(0);
  for (let i = 0; i < m; i++) for (let j = 0; j < n; j++) for (let k = 0; k <= j; k++) a[j * n + k]! += jac[i * n + j]! * jac[i * n + k]!;
  for (let j = 0; j < n; j++) for (let k = j + 1; k < n; k++) a[j * n + k] = a[k * n + j]!;
  const covariance = new Float64Array(n * n).fill(Infinity);
  const stdErr = new Float64Array(n).fill(Infinity);
  const s2 = m > n ? cost / (m - n) : Infinity;
  // Scale to unit diagonal before factoring so parameters of very different size do not spoil it.
  const d = new Float64Array(n);
  for (let j = 0; j < n; j++) d[j] = Math.sqrt(a[j * n + j]!);
  const ok = Array.from(d).every((x) => x > 0 && Number.isFinite(x));
  if (ok) {
    for (let j = 0; j < n; j++) for (let k = 0; k < n; k++) aDamped[j * n + k] = a[j * n + k]! / (d[j]! * d[k]!);
    if (cholesky(aDamped, chol, n)) {
      const e = new Float64Array(n);
      const col = new Float64Array(n);
      for (let k = 0; k < n; k++) {
        e.fill(0);
        e[k] = 1;
        choleskySolve(chol, e, col, n);
        for (let j = 0; j < n; j++) covariance[j * n + k] = (s2 * col[j]!) / (d[j]! * d[k]!);
      }
      for (let j = 0; j < n; j++) stdErr[j] = Math.sqrt(Math.max(covariance[j * n + j]!, 0));
    }
  }
  for (let j = 0; j < n; j++) {
    // pinned at a bound: the transform has flattened, the error bar means nothing
    if (kind[j] !== Kind.Free && Math.abs(dpdu(j, p[j]!)) < 1e-9 * Math.max(Math.abs(p[j]!), scale[j]!)) stdErr[j] = Infinity;
  }
  return { p, sumSquares: cost, rms: Math.sqrt(cost / m), iterations, evaluations, stop: stop!, stdErr, covariance, residuals: r };
}
