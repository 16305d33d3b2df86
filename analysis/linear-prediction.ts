// Forward and backward linear prediction by least squares over a stretch (the covariance method):
//   forward   x[n] ≈ Σ a[k]·x[n−1−k],  fitted over n = p … N−1,
//   backward  x[n] ≈ Σ b[k]·x[n+1+k],  fitted over n = 0 … N−1−p,  k = 0 … p−1.
// Two separate fits, not one used both ways: a decaying exponential (the tail of a filtered step)
// follows a different recurrence backwards than forwards; only a sinusoid reads the same both ways.
// Normal equations Φ·a = ψ solved by Cholesky, with the diagonal raised by 10⁻⁹ of its mean so a
// noiseless tone (rank 2) still solves. Equations can be dropped after the fit (a robust refit: the
// samples a click or an edge disturbs should not steer the predictor meant to expose them).

export class TwoSidedPredictor {
  /** Forward coefficients of the last solve (zero after a silent stretch). */
  readonly a: Float64Array;
  /** Backward coefficients of the last solve. */
  readonly b: Float64Array;
  /** Normal equations, upper triangles row-major: forward, then backward. */
  private readonly phiF: Float64Array;
  private readonly psiF: Float64Array;
  private readonly phiB: Float64Array;
  private readonly psiB: Float64Array;
  private readonly work: Float64Array;

  constructor(order: number) {
    if (!Number.isInteger(order) || order < 1) throw new RangeError(`predictor order must be a positive integer, got ${order}`);
    this.a = new Float64Array(order);
    this.b = new Float64Array(order);
    this.phiF = new Float64Array(order * order);
    this.phiB = new Float64Array(order * order);
    this.work = new Float64Array(order * order);
    this.psiF = new Float64Array(order);
    this.psiB = new Float64Array(order);
  }

  get order(): number {
    return this.a.length;
  }

  /** Fits both predictors to x[0, n). Returns false, with zero coefficients, when that is silent or short. */
  fit(x: Float64Array, n: number): boolean {
    const p = this.order;
    this.a.fill(0);
    this.b.fill(0);
    if (n < 4 * p) return false;
    const { phiF: f, psiF, phiB: g, psiB } = this;
    // Forward: Φ[i][j] = Σ_{m=p−1}^{N−2} x[m−i]·x[m−j]; ψ[i] = Σ_{n=p}^{N−1} x[n]·x[n−1−i].
    for (let j = 0; j < p; j++) f[j] = dot(x, p - 1, p - 1 - j, n - p);
    for (let i = 0; i < p; i++) psiF[i] = dot(x, p, p - 1 - i, n - p);
    // Φ[i+1][j+1] = Φ[i][j] + x[p−2−i]·x[p−2−j] − x[N−2−i]·x[N−2−j].
    for (let i = 0; i + 1 < p; i++) {
      for (let j = i; j + 1 < p; j++) f[(i + 1) * p + j + 1] = f[i * p + j]! + x[p - 2 - i]! * x[p - 2 - j]! - x[n - 2 - i]! * x[n - 2 - j]!;
    }
    // Backward: Φ[i][j] = Σ_{m=1}^{N−p} x[m+i]·x[m+j]; ψ[i] = Σ_{n=0}^{N−1−p} x[n]·x[n+1+i].
    for (let j = 0; j < p; j++) g[j] = dot(x, 1, 1 + j, n - p);
    for (let i = 0; i < p; i++) psiB[i] = dot(x, 0, 1 + i, n - p);
    // Φ[i+1][j+1] = Φ[i][j] − x[1+i]·x[1+j] + x[N−p+1+i]·x[N−p+1+j].
    for (let i = 0; i + 1 < p; i++) {
      for (let j = i; j + 1 < p; j++) g[(i + 1) * p + j + 1] = g[i * p + j]! - x[1 + i]! * x[1 + j]! + x[n - p + 1 + i]! * x[n - p + 1 + j]!;
    }
    return this.solve();
  }

  /** Takes the forward equation of sample n (x[n] from x[n−p…n−1]) out of the fit; call solve() after. */
  dropForward(x: Float64Array, n: number): void {
    drop(this.phiF, this.psiF, x, n, n - 1, -1);
  }

  /** Takes the backward equation of sample n (x[n] from x[n+1…n+p]) out of the fit; call solve() after. */
  dropBackward(x: Float64Array, n: number): void {
    drop(this.phiB, this.psiB, x, n, n + 1, 1);
  }

  /** Solves the normal equations as they stand; false (zero coefficients) when they are singular. */
  solve(): boolean {
    this.work.set(this.phiF);
    const forward = cholesky(this.work, this.psiF, this.a);
    this.work.set(this.phiB);
    return cholesky(this.work, this.psiB, this.b) && forward;
  }

  /** Forward prediction errors x[n] − Σ a[k]·x[n−1−k] for n in [from, to) into out[n]; needs from ≥ p. */
  forwardErrors(x: Float64Array, from: number, to: number, out: Float64Array): void {
    predictionErrors(x, this.a, from, to, -1, out);
  }

  /** Backward prediction errors x[n] − Σ b[k]·x[n+1+k] for n in [from, to) into out[n]; needs to + p ≤ x.length. */
  backwardErrors(x: Float64Array, from: number, to: number, out: Float64Array): void {
    predictionErrors(x, this.b, from, to, 1, out);
  }
}

/** out[n] = x[n] − Σ c[k]·x[n + step·(k+1)] for n in [from, to). */
function predictionErrors(x: Float64Array, c: Float64Array, from: number, to: number, step: number, out: Float64Array): void {
  const p = c.length;
  for (let n = from; n < to; n++) {
    let s = x[n]!;
    for (let k = 0, at = n + step; k < p; k++, at += step) s -= c[k]! * x[at]!;
    out[n] = s;
  }
}

/** Removes one equation, regressors x[first + step·k] (k = 0…p−1) and target x[n], from Φ and ψ. */
function drop(phi: Float64Array, psi: Float64Array, x: Float64Array, n: number, first: number, step: number): void {
  const p = psi.length;
  for (let i = 0; i < p; i++) {
    const xi = x[first + step * i]!;
    psi[i]! -= x[n]! * xi;
    for (let j = i; j < p; j++) phi[i * p + j]! -= xi * x[first + step * j]!;
  }
}

/** Σ_{t<len} x[i0+t]·x[j0+t]. */
function dot(x: Float64Array, i0: number, j0: number, len: number): number {
  let s = 0;
  for (let t = 0; t < len; t++) s += x[i0 + t]! * x[j0 + t]!;
  return s;
}

/**
 * Solves Φ·c = ψ for symmetric Φ (upper triangle filled, row-major) by Cholesky, in place in Φ.
 * Returns false, with c zeroed, when Φ is zero.
 */
function cholesky(phi: Float64Array, psi: Float64Array, c: Float64Array): boolean {
  const p = c.length;
  let trace = 0;
  for (let i = 0; i < p; i++) trace += phi[i * p + i]!;
  if (!(trace > 0)) {
    c.fill(0);
    return false;
  }
  const load = (1e-9 * trace) / p;
  // Lower factor L stored in the lower triangle: Φ = L·Lᵀ.
  for (let i = 0; i < p; i++) {
    for (let j = 0; j <= i; j++) {
      let s = phi[j * p + i]! + (i === j ? load : 0);
      for (let k = 0; k < j; k++) s -= phi[i * p + k]! * phi[j * p + k]!;
      if (i === j) {
        if (!(s > 0)) {
          c.fill(0);
          return false;
        }
        phi[i * p + i] = Math.sqrt(s);
      } else phi[i * p + j] = s / phi[j * p + j]!;
    }
  }
  // L·y = ψ, then Lᵀ·c = y.
  for (let i = 0; i < p; i++) {
    let s = psi[i]!;
    for (let k = 0; k < i; k++) s -= phi[i * p + k]! * c[k]!;
    c[i] = s / phi[i * p + i]!;
  }
  for (let i = p - 1; i >= 0; i--) {
    let s = c[i]!;
    for (let k = i + 1; k < p; k++) s -= phi[k * p + i]! * c[k]!;
    c[i] = s / phi[i * p + i]!;
  }
  return true;
}
