/**
 * Snap to event: move every vertex of a traced polyline vertically (within
 * ±radius px) onto the chosen phase. Vertices with nothing in reach stay
 * where they are.
 */
import { patchReference } from './cost';
import { snapToPhase, type Pt } from './path';
import type { AmplitudeSource, Phase } from './source';

export interface SnapLineOptions {
  phase?: Phase;
  /** ± px searched above and below each vertex (default 4). */
  radiusPx?: number;
}

export interface SnapLineResult {
  points: Pt[];
  /** How many vertices moved. */
  moved: number;
  /** Largest vertical move, px. */
  maxMovePx: number;
}

export function snapPolyline(src: AmplitudeSource, pts: readonly Pt[], opts: SnapLineOptions = {}): SnapLineResult {
  const radiusPx = opts.radiusPx ?? 4;
  if (!Number.isFinite(radiusPx) || radiusPx < 1 || radiusPx > 64) throw new Error('snapPolyline: radiusPx must be a number from 1 to 64');
  let moved = 0;
  let maxMovePx = 0;
  const points = pts.map((p) => {
    const u = Math.floor(p[0]);
    const v = Math.floor(p[1]);
    const ref = patchReference(src.readPatch(u - 16, v - 32, 33, 65));
    const q = snapToPhase(src, p, { phase: opts.phase ?? 'peak', radiusPx, ref });
    const dv = Math.round(q[1] * 100) / 100 - p[1];
    if (Math.abs(dv) < 0.005) return [p[0], p[1]] as Pt;
    moved++;
    maxMovePx = Math.max(maxMovePx, Math.abs(dv));
    return [p[0], Math.round(q[1] * 100) / 100] as Pt;
  });
  return { points, moved, maxMovePx };
}
