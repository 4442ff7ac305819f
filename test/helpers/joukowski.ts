// Exact potential flow about Joukowski and Kármán–Trefftz airfoils, for tests (Milne-Thomson,
// Theoretical Hydrodynamics, ch. 7; Katz & Plotkin, Low-Speed Aerodynamics, 2nd ed., §6.5–6.6
// (memory)).
//
// Circle in the ζ-plane: centre ζ0 = −m + i n, radius a = |1 − ζ0|, so it passes through ζ = 1
// (units of the mapping constant b = 1). Mapping (Kármán–Trefftz, trailing-edge angle τ,
// λ = 2 − τ/π):  z = λ (1 + w)/(1 − w),  w = ((ζ − 1)/(ζ + 1))^λ,
//   dz/dζ = 4λ² w / ((1 − w)² (ζ² − 1));  λ = 2 (τ = 0) is the Joukowski map z = ζ + 1/ζ.
// Far field: z = ζ + c1/ζ + …, c1 = (λ² − 1)/3 (= 1 for Joukowski). The trailing edge is z = λ.
// Complex potential (V = 1, clockwise circulation Γ positive, lift up = ρVΓ):
//   w(ζ) = (ζ − ζ0) e^{−iα} + a² e^{iα}/(ζ − ζ0) + (iΓ/2π) ln(ζ − ζ0).
// On the circle ζ = ζ0 + a e^{iθ}: dW/dζ = i e^{−iθ} [2 sin(θ − α) + Γ/(2πa)].
// Kutta condition (dW/dζ = 0 at ζ = 1, θ_TE = −β, β = atan(n/(1 + m))): Γ = 4πa sin(α + β).
// Surface speed |dW/dz| = |dW/dζ| / |dz/dζ|, Cp = 1 − |dW/dz|².
// Moment about z = 0 (counter-clockwise +, ρ = 1), from the Blasius theorem
//   M0 = Re[−½ ∮ z (dW/dz)² dz] with the far-field expansion dW/dz = e^{−iα} + iΓ/(2πz) + A/z² + …,
//   A = c1 e^{−iα} − a² e^{iα} + iΓζ0/(2π)  ⇒  M0 = 2π Im(A e^{−iα}) = −2π c1 sin 2α + Γ Re(ζ0 e^{−iα}).
// (Derived here; check: the flat plate m = n = 0, λ = 2 puts the centre of pressure at the quarter
// chord; surface.test.ts also checks it against the exact Cp integrated at 20 000 points.)
// The airfoil is normalised to x/c = (x − x_LE)/c, y/c = y/c with c = λ − x_LE, the leading edge
// being the point of minimum x; α is measured from the x axis.
import type { Surface } from '../../app/types';

export interface ExactPoint {
  /** Circle angle θ. */
  theta: number;
  x: number;
  y: number;
  cp: number;
  surface: Surface;
}

export interface ExactAirfoil {
  /** Chord in units of b. */
  chord: number;
  /** Γ/(V b). */
  gamma: number;
  /** Exact cl = 2Γ/(V c). */
  cl: number;
  /** Exact cm about (x/c, y/c) = (0.25, 0), nose-up positive (Blasius). */
  cmc4: number;
  thetaTE: number;
  thetaLE: number;
  at(theta: number): ExactPoint;
  /** count points at θ = θ_TE + 2π(k + ½)/count (never on the trailing edge). */
  taps(count: number): ExactPoint[];
  /** nPanels + 1 nodes uniform in θ, TE → upper → LE → lower → TE (first = last = the TE). */
  nodes(nPanels: number): { x: number[]; y: number[] };
}

type C = [number, number];
const mul = (p: C, q: C): C => [p[0] * q[0] - p[1] * q[1], p[0] * q[1] + p[1] * q[0]];
const div = (p: C, q: C): C => {
  const d = q[0] * q[0] + q[1] * q[1];
  return [(p[0] * q[0] + p[1] * q[1]) / d, (p[1] * q[0] - p[0] * q[1]) / d];
};
const pow = (p: C, e: number): C => {
  const r = Math.hypot(p[0], p[1]) ** e;
  const t = Math.atan2(p[1], p[0]) * e;
  return [r * Math.cos(t), r * Math.sin(t)];
};

export function karmanTrefftz(m: number, n: number, alphaDeg: number, teAngleDeg: number): ExactAirfoil {
  const lambda = 2 - teAngleDeg / 180;
  const alpha = (alphaDeg * Math.PI) / 180;
  const a = Math.hypot(1 + m, n);
  const beta = Math.atan2(n, 1 + m);
  const thetaTE = -beta;
  const gamma = 4 * Math.PI * a * Math.sin(alpha + beta);
  const zeta = (theta: number): C => [-m + a * Math.cos(theta), n + a * Math.sin(theta)];
  const wOf = (z: C): C => pow(div([z[0] - 1, z[1]], [z[0] + 1, z[1]]), lambda);
  const zOf = (theta: number): C => {
    const w = wOf(zeta(theta));
    const q = div([1 + w[0], w[1]], [1 - w[0], -w[1]]);
    return [lambda * q[0], lambda * q[1]];
  };
  const dzdzeta = (theta: number): C => {
    const s = zeta(theta);
    const w = wOf(s);
    const omw: C = [1 - w[0], -w[1]];
    const den = mul(mul(omw, omw), [s[0] * s[0] - s[1] * s[1] - 1, 2 * s[0] * s[1]]);
    const num: C = [4 * lambda * lambda * w[0], 4 * lambda * lambda * w[1]];
    return div(num, den);
  };
  // Leading edge: minimum x over the circle, dense search then golden section.
  const N0 = 4000;
  let best = thetaTE + Math.PI;
  for (let k = 1; k < N0; k++) {
    const th = thetaTE + (2 * Math.PI * k) / N0;
    if (zOf(th)[0] < zOf(best)[0]) best = th;
  }
  let lo = best - (2 * Math.PI) / N0;
  let hi = best + (2 * Math.PI) / N0;
  const g = (Math.sqrt(5) - 1) / 2;
  for (let it = 0; it < 100; it++) {
    const c1 = hi - g * (hi - lo);
    const c2 = lo + g * (hi - lo);
    if (zOf(c1)[0] < zOf(c2)[0]) hi = c2;
    else lo = c1;
  }
  const thetaLE = 0.5 * (lo + hi);
  const xLE = zOf(thetaLE)[0];
  const chord = lambda - xLE;

  const at = (theta: number): ExactPoint => {
    let th = theta;
    while (th <= thetaTE) th += 2 * Math.PI;
    while (th > thetaTE + 2 * Math.PI) th -= 2 * Math.PI;
    const [zx, zy] = zOf(th);
    const d = dzdzeta(th);
    const q = (2 * Math.sin(th - alpha) + gamma / (2 * Math.PI * a)) / Math.hypot(d[0], d[1]);
    return {
      theta: th,
      x: (zx - xLE) / chord,
      y: zy / chord,
      cp: 1 - q * q,
      surface: th <= thetaLE ? 'upper' : 'lower',
    };
  };

  const c1 = (lambda * lambda - 1) / 3;
  const m0 = -2 * Math.PI * c1 * Math.sin(2 * alpha) + gamma * (-m * Math.cos(alpha) + n * Math.sin(alpha));
  const pQuarter = xLE + chord / 4;
  const mQuarter = m0 - pQuarter * gamma * Math.cos(alpha);
  return {
    chord,
    gamma,
    cl: (2 * gamma) / chord,
    cmc4: -mQuarter / (0.5 * chord * chord),
    thetaTE,
    thetaLE,
    at,
    taps(count) {
      return Array.from({ length: count }, (_, k) => at(thetaTE + (2 * Math.PI * (k + 0.5)) / count));
    },
    nodes(nPanels) {
      const x: number[] = [];
      const y: number[] = [];
      for (let k = 0; k <= nPanels; k++) {
        if (k === 0 || k === nPanels) {
          x.push(1);
          y.push(0);
          continue;
        }
        const p = at(thetaTE + (2 * Math.PI * k) / nPanels);
        x.push(p.x);
        y.push(p.y);
      }
      return { x, y };
    },
  };
}

/** The Joukowski airfoil: Kármán–Trefftz with a cusped trailing edge (τ = 0). */
export function joukowski(m: number, n: number, alphaDeg: number): ExactAirfoil {
  return karmanTrefftz(m, n, alphaDeg, 0);
}

/** A realistic row of `count` taps on an exact section: one tap at the leading edge (upper
 *  surface), the rest split between the surfaces, spaced by the cosine rule in arc length from the
 *  leading edge, each surface stopping short of the trailing edge by `gap` of its arc length (taps
 *  cannot be drilled into a thin trailing edge; common practice, no source). Contour order
 *  (upper trailing edge → leading edge → lower trailing edge) is not implied: callers sort. */
export function arcTaps(J: ExactAirfoil, count: number, gap = 0.03, prefix = 'C'): (ExactPoint & { id: string })[] {
  const N = 20000;
  const th = new Float64Array(N + 1);
  const s = new Float64Array(N + 1);
  let prev = J.at(J.thetaTE + 1e-9);
  let iLE = 0;
  for (let k = 0; k <= N; k++) {
    th[k] = J.thetaTE + 1e-9 + ((2 * Math.PI - 2e-9) * k) / N;
    const p = J.at(th[k]);
    if (k) s[k] = s[k - 1] + Math.hypot(p.x - prev.x, p.y - prev.y);
    if (p.x < J.at(th[iLE]).x) iLE = k;
    prev = p;
  }
  const S = s[N];
  const sLE = s[iLE];
  const thetaAt = (sv: number): number => {
    let lo = 0;
    let hi = N;
    while (hi - lo > 1) {
      const m = (lo + hi) >> 1;
      if (s[m] <= sv) lo = m;
      else hi = m;
    }
    const f = (sv - s[lo]) / (s[hi] - s[lo] || 1);
    return th[lo] + f * (th[hi] - th[lo]);
  };
  const nU = Math.ceil(count / 2);
  const nL = count - nU;
  const out: (ExactPoint & { id: string })[] = [];
  for (let k = 0; k < nU; k++) {
    const f = (1 - Math.cos((Math.PI * k) / (nU - 1))) / 2;
    out.push({ ...J.at(thetaAt(sLE - f * sLE * (1 - gap))), id: `${prefix}U${String(k + 1).padStart(2, '0')}` });
  }
  for (let k = 1; k <= nL; k++) {
    const f = (1 - Math.cos((Math.PI * k) / nL)) / 2;
    out.push({ ...J.at(thetaAt(sLE + f * (S - sLE) * (1 - gap))), id: `${prefix}L${String(k).padStart(2, '0')}` });
  }
  // The leading-edge tap is on the upper surface by construction.
  out[0] = { ...out[0], surface: 'upper' };
  return out;
}
