// Sweep direction of each polar point: the sign of the α step from the previous point in time
// order (common practice, no source). Shared by the screens' charts and the printed day sheet.
import type { PolarPoint } from './types';

export type Sweep = 'up' | 'down';

/** Sweep direction of each point (time order): the sign of the α step from the previous point;
 *  a repeat at the same α keeps the previous direction; the first point takes the next step's. */
export function sweepDirections(pts: readonly Pick<PolarPoint, 'alphaDeg'>[]): Sweep[] {
  const dirs: (Sweep | null)[] = pts.map((p, i) => {
    if (i === 0) return null;
    const d = p.alphaDeg - pts[i - 1].alphaDeg;
    return Math.abs(d) < 1e-9 ? null : d > 0 ? 'up' : 'down';
  });
  const firstKnown = dirs.find((d) => d !== null) ?? 'up';
  let prev: Sweep = firstKnown;
  return dirs.map((d) => (prev = d ?? prev));
}
