/**
 * Limits on the work one measurement request may ask of the server.
 *
 * The engine's cost grows with the Monte Carlo draws times the geometry each
 * draw converts: every vertex of every polyline, plus `FLANK_SAMPLES` (257)
 * points per flank, which each draw resamples at equal arc length. On this
 * project's 2-core machine one such unit costs ≈ 10 ns (measured with
 * tests/bench/measure.bench.ts and the Kestrel Knoll fixture: 1,590 units ×
 * 10,000 draws ≈ 0.17 s), so `MEASURE_WORK_BUDGET` (2·10⁸ units) keeps one
 * request to about 2 s of one worker thread. Without velocity ranges no draws
 * are made and the work is the geometry alone.
 *
 * The demo buildups (TB-11, TB-14) at the default 1,000 draws use about
 * 1.4 % of the budget; twenty Kestrel Knoll copies at 100,000 draws ask for
 * 16 times the budget.
 */
import { z } from 'zod';
import { DRAWS_DEFAULT, DRAWS_MIN } from './limits';
import { FLANK_SAMPLES } from '../measure/flank';

/** Largest work (draws × (vertices + 257 per flank)) one request may ask for. */
export const MEASURE_WORK_BUDGET = 200_000_000;
/** Most buildups one `POST /api/measure` may carry. */
export const MEASURE_MAX_BUILDUPS = 50;

const isObj = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
const len = (v: unknown) => (Array.isArray(v) ? v.length : 0);

/** True when a raw velocity model holds any `{ min, mode, max }` range (then the engine draws). */
function hasRangeIn(v: unknown, depth = 0): boolean {
  if (depth > 6 || typeof v !== 'object' || v === null) return false;
  if (isObj(v) && 'min' in v && 'max' in v) return true;
  return Object.values(v).some((x) => hasRangeIn(x, depth + 1));
}

export interface MeasureWork {
  /** Vertices of all polylines (base, tops, flanks). */
  vertices: number;
  /** Flanks (each resampled at 257 points per draw). */
  flanks: number;
  /** Geometry one draw converts: vertices + 257 × flanks. */
  perDraw: number;
  /** Whether the input has velocity ranges (Monte Carlo draws are made). */
  ranged: boolean;
}

/**
 * Count the geometry of a raw (not yet validated) interpretation: linear and
 * cheap, so the server can refuse before any worker starts. Malformed parts
 * count as empty; the engine refuses them on its own.
 */
export function measureWorkOf(input: unknown): MeasureWork {
  let vertices = 0;
  let flanks = 0;
  const buildups = isObj(input) && Array.isArray(input.buildups) ? input.buildups : [];
  for (const b of buildups) {
    if (!isObj(b)) continue;
    vertices += len(b.base);
    for (const c of Array.isArray(b.cycles) ? b.cycles : []) {
      if (!isObj(c)) continue;
      vertices += len(c.top) + len(c.flankLeft) + len(c.flankRight);
      if (len(c.flankLeft) >= 2) flanks++;
      if (len(c.flankRight) >= 2) flanks++;
    }
  }
  const ranged = isObj(input) && input.verticalDomain !== 'depth_m' && hasRangeIn(input.velocity);
  return { vertices, flanks, perDraw: vertices + FLANK_SAMPLES * flanks, ranged };
}

export interface WorkProblem {
  /** Path of the field to change (`options.draws` or `draws`). */
  path: string;
  message: string;
  /** Largest draws allowed for this input (below 10 when no draws fit). */
  maxDraws: number;
}

/**
 * Check the work of `input` at `draws` (undefined = the default 1,000)
 * against the budget; null when it fits. `drawsPath` names the field in the
 * caller's request: `options.draws` for a posted interpretation, `draws` for
 * the query of a stored buildup. A draws value that is not a number is left
 * to the engine's own validation.
 */
export function measureWorkProblem(input: unknown, draws: unknown, drawsPath: string, budget = MEASURE_WORK_BUDGET): WorkProblem | null {
  const w = measureWorkOf(input);
  const d = draws === undefined ? DRAWS_DEFAULT : draws;
  if (typeof d !== 'number' || !Number.isFinite(d)) return null;
  const work = w.perDraw * (w.ranged ? Math.max(1, d) : 1);
  if (work <= budget) return null;
  const maxDraws = Math.floor(budget / Math.max(1, w.perDraw));
  const size = `${w.vertices.toLocaleString('en')} vertices + ${w.flanks} flanks × ${FLANK_SAMPLES} samples`;
  const message = !w.ranged
    ? `the input is too large to measure: ${size} exceeds the work budget of ${budget.toLocaleString('en')}`
    : maxDraws < DRAWS_MIN
      ? `the input is too large for velocity ranges (${size} per draw): even ${DRAWS_MIN} draws exceed the work budget of ${budget.toLocaleString('en')}; measure fewer or simpler buildups`
      : `${d.toLocaleString('en')} draws ask for too much work for this input (${size} per draw); at most ${maxDraws.toLocaleString('en')} draws are allowed for it`;
  return { path: w.ranged ? drawsPath : 'interpretation', message, maxDraws };
}

/** Body of `POST /api/measure` (measurement-spec §9): `{ interpretation, options }`, at most MEASURE_MAX_BUILDUPS buildups. */
export const measureRequestSchema = z.object(
  {
    interpretation: z
      .record(z.string(), z.unknown(), { error: 'is required: an interpretation object (measurement-spec §4)' })
      .superRefine((it, ctx) => {
        if (Array.isArray(it.buildups) && it.buildups.length > MEASURE_MAX_BUILDUPS)
          ctx.addIssue({ code: 'custom', path: ['buildups'], message: `at most ${MEASURE_MAX_BUILDUPS} buildups per request (got ${it.buildups.length})` });
      }),
    options: z.unknown().optional(),
  },
  { error: 'must be { interpretation, options }' },
);
