/**
 * Least-cost path from the last vertex to the cursor along an event.
 *
 * The path is monotone along the segment's major axis (u for segments
 * flatter than 45°, v for steeper ones) and stays inside a corridor of
 * ±`corridorPx` around the straight segment. Dynamic programming step by
 * step along the major axis (one image column, or row, per step): the state
 * is the offset from the straight segment, a step may change it by at most
 * `maxStepPx`, and the cost of a path is Σ (1 − phase score) + λ·|Δoffset|.
 * The start is the last vertex (fixed); the end is free within
 * ±`endSnapPx` of the cursor. For flat segments every point is then moved
 * to the sub-pixel position of the phase (parabola / zero interpolation).
 *
 * Work: steps × (2·corridor + 1) × (2·maxStep + 1) — about 0.2 M operations
 * for a 1,000-pixel segment with the defaults.
 */
import { crestPosition, patchReference, phaseScoreAt } from './cost';
import type { AmplitudeSource, Phase } from './source';

export type Pt = [number, number];

export interface PathOptions {
  phase?: Phase;
  /** Half-width of the corridor around the straight segment, px. Default: max(20, 20 % of the segment length), at most 96. */
  corridorPx?: number;
  /** Largest change of the offset from one step to the next, px (default 2). */
  maxStepPx?: number;
  /** The end may move this far across the segment from the cursor, px (default 6). */
  endSnapPx?: number;
  /** Penalty per pixel of offset change (default 0.3). */
  smoothness?: number;
  /** Longest segment handled, px along the major axis (default 6000). */
  maxLengthPx?: number;
}

export interface PathResult {
  /** One point per step, the first one `from` itself. */
  points: Pt[];
  /** Mean phase score along the path (0…1): how well the path sits on an event. */
  meanScore: number;
  corridorPx: number;
}

export const DEFAULT_PATH = { phase: 'peak' as Phase, maxStepPx: 2, endSnapPx: 6, smoothness: 0.3, maxLengthPx: 6000 };

/** Largest move of a path point to its local phase crest after the dynamic programming, px. */
const REFINE_PX = 2;
/** Columns on each side stacked for the crest refinement. */
const LATERAL = 3;
/** Half-width of the running mean that gives the stacking shape. */
const SMOOTH = 6;

export function defaultCorridor(lengthPx: number): number {
  // A curved event sags away from the chord between two clicks on it: a dome
  // clicked on its flank and past its crest is ~15 % of the span off the chord.
  return Math.min(96, Math.max(20, Math.round(0.2 * lengthPx)));
}

function check(name: string, v: number, lo: number, hi: number): number {
  if (!Number.isFinite(v) || v < lo || v > hi) throw new Error(`leastCostPath: options.${name} must be a number from ${lo} to ${hi}`);
  return v;
}

export function leastCostPath(src: AmplitudeSource, from: Pt, to: Pt, opts: PathOptions = {}): PathResult {
  const phase = opts.phase ?? DEFAULT_PATH.phase;
  const du = to[0] - from[0];
  const dv = to[1] - from[1];
  const horizontal = Math.abs(du) >= Math.abs(dv);
  // major / cross coordinates (pixel indices)
  const m0 = Math.floor(horizontal ? from[0] : from[1]);
  const m1 = Math.floor(horizontal ? to[0] : to[1]);
  const c0 = Math.floor(horizontal ? from[1] : from[0]);
  const c1 = Math.floor(horizontal ? to[1] : to[0]);
  const n = Math.abs(m1 - m0);
  const maxLen = check('maxLengthPx', opts.maxLengthPx ?? DEFAULT_PATH.maxLengthPx, 1, 100000);
  if (n > maxLen) throw new Error(`leastCostPath: the segment is ${n} px long, more than options.maxLengthPx (${maxLen})`);
  const C = Math.round(check('corridorPx', opts.corridorPx ?? defaultCorridor(Math.hypot(du, dv)), 1, 512));
  const S = Math.round(check('maxStepPx', opts.maxStepPx ?? DEFAULT_PATH.maxStepPx, 1, 16));
  const E = Math.round(check('endSnapPx', opts.endSnapPx ?? DEFAULT_PATH.endSnapPx, 0, 512));
  const lambda = check('smoothness', opts.smoothness ?? DEFAULT_PATH.smoothness, 0, 10);
  if (n === 0) return { points: [[from[0], from[1]]], meanScore: 0, corridorPx: C };
  const dir = m1 > m0 ? 1 : -1;
  const centre = (k: number) => Math.round(c0 + ((c1 - c0) * k) / n);

  // The patch covering the corridor (+1 across for the zero phase's slope).
  let cLo = Infinity;
  let cHi = -Infinity;
  for (let k = 0; k <= n; k++) {
    const c = centre(k);
    if (c - C < cLo) cLo = c - C;
    if (c + C > cHi) cHi = c + C;
  }
  cLo -= 1;
  cHi += 1;
  const mLo = Math.min(m0, m1);
  const W = n + 1; // along the major axis
  const H = cHi - cLo + 1; // across
  // patch in image orientation
  const px0 = horizontal ? mLo : cLo;
  const py0 = horizontal ? cLo : mLo;
  const pw = horizontal ? W : H;
  const ph = horizontal ? H : W;
  const patch = src.readPatch(px0, py0, pw, ph);
  const ref = patchReference(patch);
  const scoreAt = (m: number, c: number): number => {
    const x = horizontal ? m - px0 : c - px0;
    const y = horizontal ? c - py0 : m - py0;
    if (x < 0 || y < 0 || x >= pw || y >= ph) return 0;
    return phaseScoreAt(patch, pw, ph, x, y, phase, ref);
  };

  const K = 2 * C + 1;
  const cost = new Float64Array((n + 1) * K).fill(Infinity);
  const back = new Int16Array((n + 1) * K);
  // start: offset of the start pixel from the rounded centre (0 unless rounding differs)
  const startOff = c0 - centre(0);
  if (Math.abs(startOff) > C) throw new Error('leastCostPath: start outside the corridor');
  cost[startOff + C] = 0;
  const scores = new Float32Array((n + 1) * K);
  for (let k = 1; k <= n; k++) {
    const m = m0 + dir * k;
    const c = centre(k);
    const row = k * K;
    const prev = (k - 1) * K;
    for (let o = -C; o <= C; o++) {
      const s = scoreAt(m, c + o);
      scores[row + o + C] = s;
      let best = Infinity;
      let arg = 0;
      // previous offset p such that the pixel step relative to the chord is within S
      for (let d = -S; d <= S; d++) {
        const p = o + d; // the offset changes by d relative to the chord
        if (p < -C || p > C) continue;
        const v = cost[prev + p + C] + lambda * Math.abs(d);
        if (v < best) {
          best = v;
          arg = p;
        }
      }
      cost[row + o + C] = best + (1 - s);
      back[row + o + C] = arg;
    }
  }
  // end: free within ±E of the cursor's pixel
  const endOff = c1 - centre(n);
  let bestO = endOff;
  let bestCost = Infinity;
  for (let o = Math.max(-C, endOff - E); o <= Math.min(C, endOff + E); o++) {
    const v = cost[n * K + o + C];
    if (v < bestCost) {
      bestCost = v;
      bestO = o;
    }
  }
  const offs = new Int32Array(n + 1);
  offs[n] = bestO;
  for (let k = n; k > 0; k--) offs[k - 1] = back[k * K + offs[k] + C];

  const rows = new Int32Array(n + 1);
  for (let k = 0; k <= n; k++) rows[k] = centre(k) + offs[k];
  let sum = 0;
  for (let k = 1; k <= n; k++) sum += scores[k * K + offs[k] + C];
  const points: Pt[] = [[from[0], from[1]]];
  if (!horizontal) {
    for (let k = 1; k <= n; k++) points.push([rows[k] + 0.5, m0 + dir * k + 0.5]);
    return { points, meanScore: sum / n, corridorPx: C };
  }
  const raw = (m: number, y: number): number => {
    const yy = y - py0;
    const xx = m - px0;
    return yy < 0 || yy >= ph || xx < 0 || xx >= pw ? NaN : patch[yy * pw + xx];
  };
  const phaseValue = (col: (y: number) => number, y: number): number => {
    const a = col(y);
    if (a !== a) return -Infinity;
    if (phase === 'peak') return a;
    if (phase === 'trough') return -a;
    const d = (col(y + 1) - col(y - 1)) / 2;
    return d < 0 ? -Math.abs(a) / -d : -Infinity;
  };
  // The smoothness term lets the path lag a pixel behind a crest that is
  // nearly flat there: climb to the local crest within ±REFINE_PX.
  const crest = (col: (y: number) => number, c: number): number => {
    let best = phaseValue(col, c);
    for (let step = 0; step < REFINE_PX; step++) {
      const up = phaseValue(col, c - 1);
      const dn = phaseValue(col, c + 1);
      if (up > best && up >= dn) {
        best = up;
        c -= 1;
      } else if (dn > best) {
        best = dn;
        c += 1;
      } else break;
    }
    return crestPosition(col, c, phase);
  };
  // Pass 1: the crest of each column on its own.
  const first = new Float64Array(n + 1);
  first[0] = from[1] - 0.5;
  for (let k = 1; k <= n; k++) {
    const m = m0 + dir * k;
    first[k] = crest((y) => raw(m, y), rows[k]);
  }
  // Pass 1 smoothed (running mean over 2·SMOOTH + 1 columns): the shape along which columns are stacked.
  const smooth = new Float64Array(n + 1);
  for (let k = 1; k <= n; k++) {
    let a = 0;
    let cnt = 0;
    for (let j = Math.max(1, k - SMOOTH); j <= Math.min(n, k + SMOOTH); j++) {
      a += first[j];
      cnt++;
    }
    smooth[k] = a / cnt;
  }
  // Pass 2: the crest of the mean of 2·LATERAL + 1 columns shifted along the
  // smoothed pass 1 (lateral stacking: band-limited noise drops by about
  // √(2·LATERAL + 1), a crossing event of another dip is smeared out).
  for (let k = 1; k <= n; k++) {
    const m = m0 + dir * k;
    const col = (y: number) => {
      let a = 0;
      let cnt = 0;
      for (let j = -LATERAL; j <= LATERAL; j++) {
        const kk = k + j;
        if (kk < 1 || kk > n) continue;
        const yy = y + smooth[kk] - smooth[k];
        const y0 = Math.floor(yy);
        const t = yy - y0;
        const v0 = raw(m + dir * j, y0);
        const v1 = raw(m + dir * j, y0 + 1);
        const v = v0 + (v1 - v0) * t;
        if (v !== v) continue;
        a += v;
        cnt++;
      }
      return cnt ? a / cnt : NaN;
    };
    const y = crest(col, Math.round(first[k]));
    points.push([m + 0.5, y + 0.5]);
  }
  return { points, meanScore: sum / n, corridorPx: C };
}

/**
 * Move a point across (vertically) onto the chosen phase within ±`radiusPx`:
 * the best phase score, nearest first on ties, then sub-pixel. Returns the
 * point unchanged when nothing in reach scores above `minScore`.
 */
export function snapToPhase(src: AmplitudeSource, p: Pt, opts: { phase?: Phase; radiusPx?: number; minScore?: number; ref?: number } = {}): Pt {
  const phase = opts.phase ?? 'peak';
  const R = Math.round(opts.radiusPx ?? 4);
  const u = Math.floor(p[0]);
  const v = Math.floor(p[1]);
  const h = 2 * R + 3;
  const y0 = v - R - 1;
  const patch = src.readPatch(u, y0, 1, h);
  const ref = opts.ref ?? patchReference(src.readPatch(u - 8, v - 32, 17, 65));
  let best = -1;
  let bestY = -1;
  for (let y = 1; y < h - 1; y++) {
    const s = phaseScoreAt(patch, 1, h, 0, y, phase, ref);
    const dist = Math.abs(y - (R + 1));
    if (s > best + 1e-9 || (Math.abs(s - best) <= 1e-9 && dist < Math.abs(bestY - (R + 1)))) {
      best = s;
      bestY = y;
    }
  }
  if (best <= (opts.minScore ?? 0.05)) return [p[0], p[1]];
  const y = crestPosition((yy) => (yy < 0 || yy >= h ? NaN : patch[yy]), bestY, phase);
  return [p[0], y0 + y + 0.5];
}
