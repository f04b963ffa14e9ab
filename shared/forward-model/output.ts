/**
 * The forward model's surfaces as the engine's input (`cayline.interpretation/1`,
 * depth domain, world coordinates, the profile's frame), measured by the same
 * engine (`shared/measure/index.ts` `measure()`), and converted to TWT for an
 * overlay with the inverse of the engine's time→depth conversion.
 */
import { createDepthConverter, measure, parseInterpretation, type MeasurementOutput } from '../measure';
import { MeasureInputError } from '../measure/errors';
import { upperEnvelope, envelopeAt, type Envelope } from '../measure/envelope';
import { makeDepthToTwt, modeOf, type VelocityModel } from '../measure/velocity';
import type { Point } from '../measure/geometry';
import type { ModelRun } from './model';

/** Smallest thickness (m) a cycle must have deposited at a column for that column to belong to the cycle's flank. */
export const FLANK_MIN_THICKNESS_M = 0.01;

/**
 * Margins by break of slope on the top (Cayline's own rule and default, not a
 * published value): start at the crest (the shallowest column; the middle one
 * of equally shallow columns) and walk outward while the slope between
 * neighbouring columns stays at or below `marginSlopeDeg` (default 5°); each
 * margin is the last column before the first steeper segment (or the end of
 * the profile). A top of one column is widened by one column so the engine
 * gets a polyline.
 */
export function marginsOf(xs: Float64Array, top: Float64Array, marginSlopeDeg: number): { left: number; right: number; crest: number } {
  const n = top.length;
  let lo = 0;
  let hi = 0;
  for (let i = 1; i < n; i++) {
    if (top[i] < top[lo] - 1e-9) { lo = i; hi = i; }
    else if (Math.abs(top[i] - top[lo]) <= 1e-9) hi = i;
  }
  const crest = Math.round((lo + hi) / 2);
  const tanMax = Math.tan((marginSlopeDeg * Math.PI) / 180);
  let left = crest;
  while (left > 0 && Math.abs(top[left] - top[left - 1]) <= tanMax * (xs[left] - xs[left - 1])) left--;
  let right = crest;
  while (right < n - 1 && Math.abs(top[right + 1] - top[right]) <= tanMax * (xs[right + 1] - xs[right])) right++;
  if (left === right) {
    if (right < n - 1) right++;
    else left--;
  }
  return { left, right, crest };
}

const pt = (xs: Float64Array, zs: Float64Array, i: number): [number, number] => [xs[i], zs[i]];

/**
 * The run as an engine input: the antecedent profile as the base, one cycle
 * per boundary with its top between the margins (see `marginsOf`), flanks
 * from each margin outward over the columns where the cycle deposited at
 * least FLANK_MIN_THICKNESS_M, ages from `startAgeMa` when given, and the
 * youngest top flagged as a drowning surface when the crest ended below the
 * drowning depth (G < 1 % of Gm).
 */
export function runToInterpretation(run: ModelRun) {
  const { xs, base, surfaces, params: p } = run;
  const cycles = surfaces.map((top, c) => {
    const prev = c === 0 ? base : surfaces[c - 1];
    const { left, right } = marginsOf(xs, top, p.marginSlopeDeg);
    const topPl: [number, number][] = [];
    for (let i = left; i <= right; i++) topPl.push(pt(xs, top, i));
    const flankLeft: [number, number][] = [pt(xs, top, left)];
    for (let i = left - 1; i >= 0 && prev[i] - top[i] >= FLANK_MIN_THICKNESS_M; i--) flankLeft.push(pt(xs, top, i));
    const flankRight: [number, number][] = [pt(xs, top, right)];
    for (let i = right + 1; i < xs.length && prev[i] - top[i] >= FLANK_MIN_THICKNESS_M; i++) flankRight.push(pt(xs, top, i));
    return {
      index: c + 1,
      top: topPl,
      marginLeft: pt(xs, top, left),
      marginRight: pt(xs, top, right),
      ...(flankLeft.length >= 2 ? { flankLeft } : {}),
      ...(flankRight.length >= 2 ? { flankRight } : {}),
      ...(p.startAgeMa != null ? { ageTopMa: Math.max(0, p.startAgeMa - run.boundaryTimesYr[c] / 1e6) } : {}),
    };
  });
  const basePl: [number, number][] = [];
  for (let i = 0; i < xs.length; i++) basePl.push(pt(xs, base, i));
  return {
    format: 'cayline.interpretation/1' as const,
    verticalDomain: 'depth_m' as const,
    coordinates: 'world' as const,
    calibration: null,
    velocity: null,
    buildups: [
      {
        name: p.name,
        base: basePl,
        ...(p.startAgeMa != null ? { baseAgeMa: p.startAgeMa } : {}),
        cycles,
        terminations: [] as { type: 'onlap'; at: [number, number] }[],
        topIsDrowningSurface: run.drowned,
      },
    ],
  };
}

export type ModelInterpretation = ReturnType<typeof runToInterpretation>;

/** Measure a run with the engine (same numbers as an interpretation of the same surfaces). */
export function measureRun(run: ModelRun, options?: unknown): MeasurementOutput {
  return measure(runToInterpretation(run), options);
}

/**
 * Convert a depth-domain interpretation (such as `runToInterpretation`'s) to
 * TWT (ms) with a velocity model: the inverse of the engine's conversion
 * (`makeDepthToTwt` of shared/measure/velocity.ts, ranges at their modes), so
 * the engine converting the result back returns the same depths. For the
 * `buildup` model each point's ray crosses carbonate below the upper envelope
 * of all tops and flanks in depth, which maps onto the envelope the engine
 * builds in time (the conversion is monotone and affine in the overburden).
 */
export function interpretationToTwt(it: ModelInterpretation, velocity: VelocityModel) {
  const resolved = modeOf(velocity);
  const conv = makeDepthToTwt(resolved);
  let env: Envelope | null = null;
  if (resolved.kind === 'buildup') {
    const sources: Point[][] = [];
    for (const b of it.buildups) for (const c of b.cycles) sources.push(c.top, ...(c.flankLeft ? [c.flankLeft] : []), ...(c.flankRight ? [c.flankRight] : []));
    env = sources.length ? upperEnvelope(sources) : null;
  }
  const toT = (p: readonly number[]): [number, number] => [p[0], conv(p[1], env ? envelopeAt(env, p[0]) : NaN)];
  const line = (pl: readonly (readonly number[])[]) => pl.map(toT);
  return {
    ...it,
    verticalDomain: 'twt_ms' as const,
    velocity,
    buildups: it.buildups.map((b) => ({
      ...b,
      base: line(b.base),
      cycles: b.cycles.map((c) => ({
        ...c,
        top: line(c.top),
        marginLeft: toT(c.marginLeft),
        marginRight: toT(c.marginRight),
        ...(c.flankLeft ? { flankLeft: line(c.flankLeft) } : {}),
        ...(c.flankRight ? { flankRight: line(c.flankRight) } : {}),
      })),
    })),
  };
}

/**
 * The antecedent profile and the traced tops of one buildup of an engine
 * input (any vertical domain, world or pixel coordinates), in depth, for
 * `runForwardModel({ profile, … })` and `fitProductionFactors(…, tops)`.
 * Points go through the engine's own converter (`createDepthConverter`, mode
 * velocities, this buildup's envelope for the `buildup` model).
 */
export function profileAndTopsOf(input: unknown, buildup = 0): { profile: [number, number][]; tops: [number, number][][] } {
  const it = parseInterpretation(input);
  const b = it.buildups[buildup];
  if (!b) throw new MeasureInputError('buildups', `no buildup number ${buildup}`);
  const conv = createDepthConverter(it, { buildup });
  const line = (pl: readonly (readonly number[])[]) => pl.map((p) => conv.toDepth(p));
  return { profile: line(b.base), tops: b.cycles.map((c) => line(c.top)) };
}
