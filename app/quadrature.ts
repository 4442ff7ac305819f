// Elementary numerics shared by the reduction modules: composite trapezoid rule, piecewise-linear
// interpolation and the inverse of a small symmetric positive-definite matrix by Cholesky
// (standard numerical analysis, e.g. Press et al., Numerical Recipes, 3rd ed., §4.1, §3.1 and
// §2.9). Pure; no dependencies.

/** Composite trapezoid ∫ y dx over points given in increasing x (caller sorts). */
export function trapezoid(x: ArrayLike<number>, y: ArrayLike<number>): number {
  if (x.length !== y.length) {
    throw new Error(`trapezoid: x has ${x.length} points but y has ${y.length}`);
  }
  // Typed arrays (the Monte Carlo's, every draw) through a loop that only ever sees them, so its
  // element loads stay monomorphic; the same sum in the same order.
  if (x instanceof Float64Array && y instanceof Float64Array) return trapezoid64(x, y);
  let s = 0;
  for (let i = 1; i < x.length; i++) {
    s += 0.5 * (x[i] - x[i - 1]) * (y[i] + y[i - 1]);
  }
  return s;
}

function trapezoid64(x: Float64Array, y: Float64Array): number {
  let s = 0;
  for (let i = 1; i < x.length; i++) {
    s += 0.5 * (x[i] - x[i - 1]) * (y[i] + y[i - 1]);
  }
  return s;
}

/** Index lo of the interval xs[lo] <= x < xs[lo + 1] of a table sorted by increasing x, by
 *  binary search (clamped to the first and last intervals). */
export function bracket(xs: ArrayLike<number>, x: number): number {
  let lo = 0;
  let hi = xs.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid] <= x) lo = mid;
    else hi = mid;
  }
  return lo;
}

/** Linear interpolation in a table sorted by increasing x; constant beyond the ends. */
export function interpLinear(xs: ArrayLike<number>, ys: ArrayLike<number>, x: number): number {
  const n = xs.length;
  if (n === 0 || n !== ys.length) {
    throw new Error(`interpLinear: need a non-empty table with equal lengths (x ${n}, y ${ys.length})`);
  }
  if (x <= xs[0]) return ys[0];
  if (x >= xs[n - 1]) return ys[n - 1];
  const lo = bracket(xs, x);
  const hi = lo + 1;
  const dx = xs[hi] - xs[lo];
  if (dx === 0) return ys[lo];
  const t = (x - xs[lo]) / dx;
  return ys[lo] + t * (ys[hi] - ys[lo]);
}

/** The weights interpLinear(xs, ys, x) applies to a table's values at one x, for evaluating many
 *  tables that share xs at the same x (Monte Carlo draws): the value is ys[lo] when hi < 0, else
 *  ys[lo] + t·(ys[hi] − ys[lo]) — the same cases and the same arithmetic as interpLinear, so
 *  applyStencil gives bit-identical results. */
export interface LinearStencil {
  lo: number;
  hi: number;
  t: number;
}

/** Stencil of interpLinear(xs, ·, x) (see LinearStencil). */
export function linearStencil(xs: ArrayLike<number>, x: number): LinearStencil {
  const n = xs.length;
  if (n === 0) throw new Error('linearStencil: need a non-empty table');
  if (x <= xs[0]) return { lo: 0, hi: -1, t: 0 };
  if (x >= xs[n - 1]) return { lo: n - 1, hi: -1, t: 0 };
  const lo = bracket(xs, x);
  const hi = lo + 1;
  const dx = xs[hi] - xs[lo];
  if (dx === 0) return { lo, hi: -1, t: 0 };
  return { lo, hi, t: (x - xs[lo]) / dx };
}

/** Value of a table at a stencil's x (see LinearStencil). */
export function applyStencil(lo: number, hi: number, t: number, ys: ArrayLike<number>): number {
  return hi < 0 ? ys[lo] : ys[lo] + t * (ys[hi] - ys[lo]);
}

/** Throws a clear error when a value is not a finite number. Hot callers test Number.isFinite
 *  first and call this only on failure, so the message is built only when it is thrown. */
export function requireFinite(value: number, what: string): void {
  if (!Number.isFinite(value)) throw new Error(`${what} must be a finite number (got ${value})`);
}

/** Inverse of a symmetric positive-definite k × k matrix by Cholesky; null if not positive. */
export function spdInverse(M: Float64Array, k: number): Float64Array | null {
  const L = new Float64Array(k * k);
  for (let i = 0; i < k; i++) {
    for (let j = 0; j <= i; j++) {
      let s = M[i * k + j];
      for (let p = 0; p < j; p++) s -= L[i * k + p] * L[j * k + p];
      if (i === j) {
        if (!(s > 0)) return null;
        L[i * k + i] = Math.sqrt(s);
      } else {
        L[i * k + j] = s / L[j * k + j];
      }
    }
  }
  const inv = new Float64Array(k * k);
  const col = new Float64Array(k);
  for (let c = 0; c < k; c++) {
    // Solve L y = e_c, then Lᵀ x = y.
    for (let i = 0; i < k; i++) {
      let s = i === c ? 1 : 0;
      for (let p = 0; p < i; p++) s -= L[i * k + p] * col[p];
      col[i] = s / L[i * k + i];
    }
    for (let i = k - 1; i >= 0; i--) {
      let s = col[i];
      for (let p = i + 1; p < k; p++) s -= L[p * k + i] * col[p];
      col[i] = s / L[i * k + i];
    }
    for (let i = 0; i < k; i++) inv[i * k + c] = col[i];
  }
  return inv;
}
