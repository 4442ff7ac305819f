// Elementary numerics shared by the reduction modules: composite trapezoid rule and piecewise-linear
// interpolation (standard numerical analysis, e.g. Press et al., Numerical Recipes, 3rd ed., §4.1
// and §3.1). Pure; no dependencies.

/** Composite trapezoid ∫ y dx over points given in increasing x (caller sorts). */
export function trapezoid(x: ArrayLike<number>, y: ArrayLike<number>): number {
  if (x.length !== y.length) {
    throw new Error(`trapezoid: x has ${x.length} points but y has ${y.length}`);
  }
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

/** Throws a clear error when a value is not a finite number. */
export function requireFinite(value: number, what: string): void {
  if (!Number.isFinite(value)) throw new Error(`${what} must be a finite number (got ${value})`);
}
