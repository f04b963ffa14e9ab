/**
 * Auto-extend: from one picked point, follow the event column by column to
 * the left and to the right until its continuity breaks, and propose a
 * Termination stamp type at each stop from the geometry.
 *
 * Step (one column in the travel direction): predict the event's row from
 * its recent dip, try shifts of ±`maxStepPx` around the prediction, keep the
 * one whose window (±`windowPx` rows) correlates best with the previous
 * column's window (normalised cross-correlation, NCC), then move to the best
 * phase score within ±1 px and to its sub-pixel position.
 *
 * A column fails when
 * - the NCC is under `nccMin` (continuity), or
 * - the phase score is under `ampFraction` of the seed's (amplitude), or
 * - the dip over the last 4 columns differs from the dip over the 24 before
 *   by more than `maxBendPxPerCol` (the tracker is sliding onto another,
 *   differently dipping surface: a termination against it).
 * `patience` failing columns in a row stop the side; the failing columns are
 * dropped, so the stop is the last good column.
 *
 * Defaults (Cayline's own, tuned on synthetic 30 Hz sections sampled at about
 * 1 ms per pixel): window ±8 px, NCC ≥ 0.6, amplitude ≥ 25 % of the seed's,
 * bend ≤ 1.2 px/column, patience 4.
 *
 * Termination proposal (stratal terminations after Mitchum, Vail & Sangree
 * 1977; the rule below is Cayline's own reading of them). With dips measured
 * in the travel direction (px of v per column, positive = deepening), `e` the
 * event's dip over its last 16 columns and `s` the dip of the surface it
 * stops against:
 * - the surface is steeper than the event (|s| > |e| + 0.25):
 *   rising ahead (s < 0) → onlap, falling ahead (s > 0, cutting down through the event) → truncation;
 * - otherwise the event is the steeper one: deepening into the stop (e > 0) → downlap,
 *   rising into it (e < 0) → toplap.
 * Without a surface found the type is guessed from the event dip alone and
 * marked `confident: false`. Nothing is placed: the caller offers the stops.
 */
import { crestPosition, patchReference, phaseScoreAt } from './cost';
import type { AmplitudeSource, Phase } from './source';

import type { Pt } from './path';
export type { Pt };
export type LapType = 'onlap' | 'downlap' | 'toplap' | 'truncation';
export type StopReason = 'continuity' | 'amplitude' | 'bend' | 'edge' | 'limit';

export interface ExtendOptions {
  phase?: Phase;
  windowPx?: number;
  nccMin?: number;
  ampFraction?: number;
  maxStepPx?: number;
  maxBendPxPerCol?: number;
  patience?: number;
  /** Most columns followed on each side (default 20,000). */
  maxColumns?: number;
  /** The seed moves vertically onto the phase within ±snapPx first (default 4). */
  snapPx?: number;
}

export interface ExtendStop {
  side: 'left' | 'right';
  /** The last good point. */
  at: Pt;
  reason: StopReason;
  /** Dips in the travel direction, px per column. */
  eventDip: number;
  surfaceDip: number | null;
  proposal: LapType | null;
  confident: boolean;
}

export interface ExtendResult {
  /** Left to right, one point per column. */
  points: Pt[];
  seed: Pt;
  stops: { left: ExtendStop; right: ExtendStop };
}

export const EXTEND_DEFAULTS = {
  phase: 'peak' as Phase,
  windowPx: 8,
  nccMin: 0.6,
  ampFraction: 0.25,
  maxStepPx: 2,
  maxBendPxPerCol: 1.2,
  patience: 4,
  maxColumns: 20000,
  snapPx: 4,
};

const SHORT = 4;
const LONG = 24;

function ncc(a: Float32Array, ai: number, b: Float32Array, bi: number, n: number): number {
  let sa = 0, sb = 0;
  for (let i = 0; i < n; i++) {
    const x = a[ai + i];
    const y = b[bi + i];
    if (x !== x || y !== y) return -1;
    sa += x;
    sb += y;
  }
  const ma = sa / n;
  const mb = sb / n;
  let sab = 0, saa = 0, sbb = 0;
  for (let i = 0; i < n; i++) {
    const x = a[ai + i] - ma;
    const y = b[bi + i] - mb;
    sab += x * y;
    saa += x * x;
    sbb += y * y;
  }
  const d = Math.sqrt(saa * sbb);
  return d > 1e-12 ? sab / d : -1;
}

/** Classify a stop from the dips (see the module comment). */
export function proposeTermination(eventDip: number, surfaceDip: number | null): { type: LapType; confident: boolean } {
  if (surfaceDip === null) {
    if (eventDip > 0.25) return { type: 'downlap', confident: false };
    if (eventDip < -0.25) return { type: 'toplap', confident: false };
    return { type: 'onlap', confident: false };
  }
  if (Math.abs(surfaceDip) > Math.abs(eventDip) + 0.25) return { type: surfaceDip < 0 ? 'onlap' : 'truncation', confident: true };
  return { type: eventDip >= 0 ? 'downlap' : 'toplap', confident: true };
}

/**
 * Dip (px per column, travel direction) of the strongest coherent reflector
 * just beyond `at`, other than the event's own continuation (dips within 0.35
 * of `eventDip` are skipped): straight lines over 10 columns through rows
 * within ±12 px, scored by |mean amplitude| along the line. Null when nothing
 * reaches a quarter of `ref`.
 */
export function surfaceDipAhead(src: AmplitudeSource, at: Pt, dir: 1 | -1, eventDip: number, ref: number): number | null {
  const L = 10;
  const R = 12;
  const PMAX = 3;
  const u0 = Math.floor(at[0]);
  const v0 = Math.floor(at[1]);
  const span = R + Math.ceil(PMAX * L) + 1;
  const x0 = dir > 0 ? u0 + 1 : u0 - L;
  const y0 = v0 - span;
  const h = 2 * span + 1;
  const patch = src.readPatch(x0, y0, L, h);
  let best = 0.25 * ref;
  let bestP: number | null = null;
  for (let p = -PMAX; p <= PMAX + 1e-9; p += 0.25) {
    if (Math.abs(p - eventDip) < 0.35) continue;
    for (let r = -R; r <= R; r++) {
      let sum = 0;
      let n = 0;
      for (let k = 1; k <= L; k++) {
        const x = dir > 0 ? k - 1 : L - k;
        const y = span + r + Math.round(p * k);
        if (y < 0 || y >= h) continue;
        const a = patch[y * L + x];
        if (a !== a) continue;
        sum += a;
        n++;
      }
      if (n < L - 1) continue;
      const s = Math.abs(sum / n);
      if (s > best) {
        best = s;
        bestP = p;
      }
    }
  }
  return bestP;
}

interface SideResult {
  points: Pt[];
  stop: ExtendStop;
}

function followSide(src: AmplitudeSource, seed: Pt, dir: 1 | -1, o: Required<ExtendOptions>, ref: number, seedScore: number): SideResult {
  const W = o.windowPx;
  const S = o.maxStepPx;
  const n = 2 * W + 1;
  const span = W + S + 2;
  const colH = 2 * span + 1;
  const side = dir > 0 ? 'right' : 'left';
  const read = (u: number, centreRow: number) => src.readPatch(u, centreRow - span, 1, colH);

  let u = Math.floor(seed[0]);
  let y = seed[1] - 0.5; // event position in row-index units
  let row = Math.round(y);
  let prevCol = read(u, row);
  let prevRow = row;
  let ema = 0;
  const ys: number[] = [y]; // accepted + tentative, travel order (index 0 = seed)
  const pts: Pt[] = [];
  let good = 0; // number of points in `pts` that are accepted
  let fails = 0;
  let reason: StopReason = 'limit';
  let lastFailReason: StopReason = 'continuity';
  let bendDip: number | null = null;

  for (let step = 1; step <= o.maxColumns; step++) {
    const nu = u + dir;
    if (nu < 0 || nu >= src.width) {
      reason = 'edge';
      break;
    }
    const pred = Math.round(y + ema);
    const col = read(nu, pred);
    // best shift by NCC against the previous column's window
    let bestC = -2;
    let bestS = 0;
    for (let s = -S; s <= S; s++) {
      const c = ncc(prevCol, prevRow - (prevRow - span) - W, col, pred + s - (pred - span) - W, n);
      if (c > bestC + 1e-9 || (Math.abs(c - bestC) <= 1e-9 && Math.abs(s) < Math.abs(bestS))) {
        bestC = c;
        bestS = s;
      }
    }
    let r = pred + bestS;
    // onto the phase within ±1 px
    let bestScore = -1;
    let bestR = r;
    for (let d = -1; d <= 1; d++) {
      const yy = r + d - (pred - span);
      if (yy < 1 || yy >= colH - 1) continue;
      const sc = phaseScoreAt(col, 1, colH, 0, yy, o.phase, ref);
      if (sc > bestScore + 1e-9 || (Math.abs(sc - bestScore) <= 1e-9 && Math.abs(d) < Math.abs(bestR - r))) {
        bestScore = sc;
        bestR = r + d;
      }
    }
    r = bestR;
    if (r - (pred - span) < 1 || r - (pred - span) >= colH - 1 || r < 0 || r >= src.height) {
      reason = 'edge';
      break;
    }
    const ny = crestPosition((yy) => col[yy - (pred - span)] ?? NaN, r, o.phase);
    const stepDip = ny - y;
    ema = 0.7 * ema + 0.3 * stepDip;
    ys.push(ny);
    pts.push([nu + 0.5, ny + 0.5]);

    let fail: StopReason | null = null;
    if (!(bestC >= o.nccMin)) fail = 'continuity';
    else if (!(bestScore >= o.ampFraction * seedScore)) fail = 'amplitude';
    else if (ys.length > SHORT + LONG) {
      const k = ys.length - 1;
      const short = (ys[k] - ys[k - SHORT]) / SHORT;
      const long = (ys[k - SHORT] - ys[k - SHORT - LONG]) / LONG;
      if (Math.abs(short - long) > o.maxBendPxPerCol) {
        fail = 'bend';
        bendDip = short;
      }
    }
    if (fail) {
      fails++;
      lastFailReason = fail;
      if (fails >= o.patience) {
        reason = lastFailReason;
        break;
      }
    } else {
      fails = 0;
      good = pts.length;
    }
    u = nu;
    y = ny;
    prevCol = col;
    prevRow = r;
    // keep the window centred on the event: re-read when the column was read around another row
    if (r !== pred) {
      prevCol = read(nu, r);
      prevRow = r;
    }
  }
  if (reason === 'limit' || reason === 'edge') good = fails > 0 ? good : pts.length;
  pts.length = good;
  ys.length = good + 1;
  // A bend stop: drop the last points that already turned onto the other surface.
  if (reason === 'bend' && ys.length > SHORT + LONG) {
    const k0 = ys.length - 1;
    const long = (ys[k0 - SHORT] - ys[Math.max(0, k0 - SHORT - LONG)]) / Math.min(LONG, k0 - SHORT);
    while (pts.length > 1 && Math.abs(ys[pts.length] - ys[pts.length - 1] - long) > o.maxBendPxPerCol / 2) {
      pts.pop();
      ys.pop();
    }
  }
  const at: Pt = pts.length ? pts[pts.length - 1] : [seed[0], seed[1]];
  const m = Math.min(16, ys.length - 1);
  const eventDip = m > 0 ? (ys[ys.length - 1] - ys[ys.length - 1 - m]) / m : 0;
  let surfaceDip: number | null = null;
  let proposal: LapType | null = null;
  let confident = false;
  if (reason !== 'edge' && reason !== 'limit') {
    surfaceDip = reason === 'bend' && bendDip !== null ? bendDip : surfaceDipAhead(src, at, dir, eventDip, ref);
    const p = proposeTermination(eventDip, surfaceDip);
    proposal = p.type;
    confident = p.confident;
  }
  return { points: pts, stop: { side, at, reason, eventDip, surfaceDip, proposal, confident } };
}

/** Follow the event through `seed` to both sides. */
export function autoExtend(src: AmplitudeSource, seed: Pt, opts: ExtendOptions = {}): ExtendResult {
  const o: Required<ExtendOptions> = { ...EXTEND_DEFAULTS, ...opts } as Required<ExtendOptions>;
  for (const k of ['windowPx', 'maxStepPx', 'patience', 'maxColumns', 'snapPx'] as const) {
    if (!Number.isInteger(o[k]) || o[k] < (k === 'snapPx' ? 0 : 1)) throw new Error(`autoExtend: options.${k} must be a positive integer`);
  }
  for (const k of ['nccMin', 'ampFraction'] as const) {
    if (!(o[k] >= -1 && o[k] <= 1)) throw new Error(`autoExtend: options.${k} must be a number from -1 to 1`);
  }
  if (!(o.maxBendPxPerCol > 0)) throw new Error('autoExtend: options.maxBendPxPerCol must be > 0');
  if (!(seed[0] >= 0 && seed[0] < src.width && seed[1] >= 0 && seed[1] < src.height)) throw new Error('autoExtend: seed must lie inside the image');
  const u = Math.floor(seed[0]);
  const v = Math.floor(seed[1]);
  const ref = patchReference(src.readPatch(u - 64, v - 32, 129, 65));
  // snap the seed onto the phase
  const h = 2 * o.snapPx + 3;
  const col = src.readPatch(u, v - o.snapPx - 1, 1, h);
  let bestY = o.snapPx + 1;
  let best = -1;
  for (let y = 1; y < h - 1; y++) {
    const s = phaseScoreAt(col, 1, h, 0, y, o.phase, ref);
    if (s > best + 1e-9 || (Math.abs(s - best) <= 1e-9 && Math.abs(y - o.snapPx - 1) < Math.abs(bestY - o.snapPx - 1))) {
      best = s;
      bestY = y;
    }
  }
  const yc = crestPosition((y) => col[y] ?? NaN, bestY, o.phase);
  const s0: Pt = [u + 0.5, v - o.snapPx - 1 + yc + 0.5];
  const seedScore = Math.max(1e-6, best);
  const right = followSide(src, s0, 1, o, ref, seedScore);
  const left = followSide(src, s0, -1, o, ref, seedScore);
  return {
    points: [...left.points.slice().reverse(), s0, ...right.points],
    seed: s0,
    stops: { left: left.stop, right: right.stop },
  };
}
