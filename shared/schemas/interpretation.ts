/**
 * Zod schemas of the measurement engine's input (measurement-spec §4) and of
 * the options of a measurement call. Shared by the server (request
 * validation), the client (forms) and the engine.
 *
 * Every refusal names the path of the bad field, e.g.
 * `buildups[0].cycles[1].marginLeft: outside the top's x-range (500 to 3500)`;
 * use `describeIssues(error)` to get those `path: message` strings (it also
 * opens up union failures so the message points inside the chosen branch).
 *
 * Choices: `coordinates` defaults to "world"; `calibration` may be a plain
 * list of ties (affine mode) or `{ mode: "affine" | "axes", ties }`;
 * `velocity` is required for `twt_ms` and ignored for `depth_m`; the
 * x-range check of margins is made in section coordinates (contract §4):
 * pixel inputs go through their fitted calibration first, because under a
 * rotated or sheared map pixel columns are not section x (a calibration that
 * cannot be fitted skips the check; the engine refuses it on its own);
 * unknown option names are refused (typos would otherwise pass
 * silently), unknown interpretation fields are ignored.
 */
import { z } from 'zod';
import { DRAWS_DEFAULT, DRAWS_MAX, DRAWS_MIN } from './limits';
import { formatIssuePath } from '../api-errors';
import { fitCalibration, type Tie } from '../measure/calibration';
import { safeText } from './text';

/** An error message that says "is required" when the field is missing. */
const req = (what: string) => (iss: { input?: unknown }) => (iss.input === undefined ? 'is required' : what);
const num = (what = 'must be a finite number') => z.number({ error: req(what) });
const POINT_MSG = 'must be a point [x, y] of two finite numbers';

/** Problem with a point value, as [relative path, message], or null. A hand loop: zod tuples cost too much on 100 000-vertex traces. */
function pointProblem(v: unknown): [(string | number)[], string] | null {
  if (v === undefined) return [[], 'is required'];
  if (!Array.isArray(v) || v.length !== 2) return [[], POINT_MSG];
  for (let k = 0; k < 2; k++) {
    const c = v[k];
    if (typeof c !== 'number' || !Number.isFinite(c)) return [[k], 'must be a finite number'];
  }
  return null;
}

const point = z.custom<[number, number]>(() => true).superRefine((v, ctx) => {
  const bad = pointProblem(v);
  if (bad) ctx.addIssue({ code: 'custom', path: bad[0], message: bad[1], continue: false });
});

/** A polyline of at least 2 finite points (validated in one pass; paths name the bad point and coordinate). */
const polyline = z.custom<[number, number][]>(() => true).superRefine((v, ctx) => {
  if (v === undefined) return void ctx.addIssue({ code: 'custom', message: 'is required', continue: false });
  if (!Array.isArray(v)) return void ctx.addIssue({ code: 'custom', message: 'must be a list of points [[x, y], ...]', continue: false });
  if (v.length < 2) return void ctx.addIssue({ code: 'custom', message: 'needs at least 2 points', continue: false });
  for (let i = 0; i < v.length; i++) {
    const bad = pointProblem(v[i]);
    if (bad) return void ctx.addIssue({ code: 'custom', path: [i, ...bad[0]], message: bad[1], continue: false });
  }
});

/** A velocity range in m/s: min ≤ mode ≤ max, all > 0. */
export const velocityRangeSchema = z
  .object({
    min: num().positive('must be > 0 m/s'),
    mode: num().positive('must be > 0 m/s'),
    max: num().positive('must be > 0 m/s'),
  })
  .superRefine((r, ctx) => {
    if (r.mode < r.min) ctx.addIssue({ code: 'custom', path: ['mode'], message: `must be ≥ min (${r.min})` });
    if (r.max < r.mode) ctx.addIssue({ code: 'custom', path: ['max'], message: `must be ≥ mode (${r.mode})` });
  });

/** A velocity in m/s, or a range `{ min, mode, max }`. */
export const speedSchema = z.union([num().positive('must be > 0 m/s'), velocityRangeSchema], {
  error: req('must be a velocity in m/s or a range { min, mode, max }'),
});

const layerSchema = z.object({ topMs: num(), v: speedSchema });

/** A velocity model alone (measurement-spec §3). */
export const velocityModelSchema = z.discriminatedUnion(
  'kind',
  [
    z.object({ kind: z.literal('constant'), v: speedSchema }),
    z.object({
      kind: z.literal('layers'),
      layers: z
        .array(layerSchema)
        .min(1, 'needs at least one layer')
        .superRefine((ls, ctx) => {
          if (ls[0] && ls[0].topMs !== 0) ctx.addIssue({ code: 'custom', path: [0, 'topMs'], message: 'the first layer must start at 0 ms' });
          for (let i = 1; i < ls.length; i++)
            if (!(ls[i].topMs > ls[i - 1].topMs))
              ctx.addIssue({ code: 'custom', path: [i, 'topMs'], message: `must be greater than the top of the layer above (${ls[i - 1].topMs} ms): tops ascend` });
        }),
    }),
    z.object({ kind: z.literal('linear'), v0: speedSchema, k: num().min(0, 'must be ≥ 0 (1/s)') }),
    z.object({
      kind: z.literal('buildup'),
      water: z.object({ v: speedSchema, seafloorMs: num().min(0, 'must be ≥ 0 ms') }),
      overburden: z.object({ v: speedSchema }),
      carbonate: z.object({ v: speedSchema }),
    }),
  ],
  { error: req('unknown velocity model kind (use "constant", "layers", "linear" or "buildup")') },
);

/** One calibration tie: pixel [u, v] and section coordinates [x, y]. */
export const tieSchema = z.object({ px: point, world: point });
/** A list of calibration ties. */
export const tiesSchema = z.array(tieSchema, { error: req('must be a list of ties { px: [u, v], world: [x, y] }') });

/** A calibration: a list of ties (affine), or `{ mode, ties }`. */
export const calibrationSchema = z.union(
  [tiesSchema, z.object({ mode: z.enum(['affine', 'axes']).default('affine'), ties: tiesSchema })],
  { error: req('must be a list of ties or { mode: "affine" | "axes", ties: [...] }') },
);

export const terminationTypes = ['onlap', 'downlap', 'toplap', 'truncation'] as const;

export const terminationSchema = z.object({
  type: z.enum(terminationTypes, { error: req(`must be one of ${terminationTypes.join(', ')}`) }),
  at: point,
});

export const cycleSchema = z.object({
  index: z.number({ error: req('must be an integer') }).int('must be an integer').min(1, 'must be ≥ 1'),
  top: polyline,
  marginLeft: point,
  marginRight: point,
  flankLeft: polyline.nullish(),
  flankRight: polyline.nullish(),
  ageTopMa: num().min(0, 'must be ≥ 0 Ma').nullish(),
  /** Systems tract: LST, TST, HST or a free label. */
  systemsTract: safeText({ error: req('must be a text label') }).trim().min(1, 'must not be empty').max(60).nullish(),
});

export const buildupSchema = z.object({
  name: safeText({ error: req('must be a text') }).trim().max(200).optional(),
  base: polyline,
  baseAgeMa: num().min(0, 'must be ≥ 0 Ma').nullish(),
  cycles: z.array(cycleSchema, { error: req('must be a list of cycles') }).min(1, 'needs at least one cycle'),
  terminations: z.array(terminationSchema, { error: req('must be a list of terminations') }).default([]),
  topIsDrowningSurface: z.boolean({ error: req('must be true or false') }).default(false),
});

/** Section x of an input point: identity for world coordinates, the fitted calibration for pixels. */
type XOf = (p: readonly number[]) => number;
const ownX: XOf = (p) => p[0];

const span = (pl: readonly (readonly number[])[], xOf: XOf = ownX) => {
  let lo = Infinity;
  let hi = -Infinity;
  for (const p of pl) { const x = xOf(p); if (x < lo) lo = x; if (x > hi) hi = x; }
  return [lo, hi] as const;
};

/** Section x of pixel points through the calibration, or null when it cannot be fitted (refused later with its own message). */
function sectionXOf(calibration: z.output<typeof calibrationSchema>): XOf | null {
  try {
    const ties = (Array.isArray(calibration) ? calibration : calibration.ties) as Tie[];
    const { a, b, c } = fitCalibration(ties, Array.isArray(calibration) ? 'affine' : calibration.mode).affine;
    return (p) => a * p[0] + b * p[1] + c;
  } catch {
    return null;
  }
}

/** Rounding allowance of the margin x-range check: relative to the top's x magnitude (no absolute floor, so tiny and huge geometry behave alike). */
export const marginTolerance = (t0: number, t1: number) => 1e-9 * Math.max(Math.abs(t0), Math.abs(t1));

/** The interpretation (measurement-spec §4). */
export const interpretationSchema = z
  .object({
    format: z.literal('cayline.interpretation/1', { error: req('must be "cayline.interpretation/1"') }).optional(),
    verticalDomain: z.enum(['twt_ms', 'depth_m'], { error: req('must be "twt_ms" or "depth_m"') }),
    coordinates: z.enum(['world', 'pixels'], { error: req('must be "world" or "pixels"') }).default('world'),
    calibration: calibrationSchema.nullish(),
    velocity: velocityModelSchema.nullish(),
    buildups: z.array(buildupSchema, { error: req('must be a list of buildups') }).min(1, 'needs at least one buildup'),
  })
  .superRefine((it, ctx) => {
    if (it.coordinates === 'pixels' && !it.calibration)
      ctx.addIssue({ code: 'custom', path: ['calibration'], message: 'is required when coordinates are "pixels"' });
    if (it.verticalDomain === 'twt_ms' && !it.velocity)
      ctx.addIssue({ code: 'custom', path: ['velocity'], message: 'is required when verticalDomain is "twt_ms"' });
    const xOf = it.coordinates === 'pixels' ? (it.calibration ? sectionXOf(it.calibration) : null) : ownX;
    it.buildups.forEach((b, bi) => {
      const at = (...p: (string | number)[]) => ['buildups', bi, ...p];
      const [b0, b1] = span(b.base);
      if (!(b1 > b0)) ctx.addIssue({ code: 'custom', path: at('base'), message: 'needs an x-extent (all its points share one x)' });
      let olderAge: { age: number; where: string } | null = b.baseAgeMa != null ? { age: b.baseAgeMa, where: 'the base' } : null;
      b.cycles.forEach((c, ci) => {
        if (c.index !== ci + 1)
          ctx.addIssue({ code: 'custom', path: at('cycles', ci, 'index'), message: `must be ${ci + 1}: cycles are numbered 1 = oldest, in order` });
        // in section x (pixels through the calibration), never in pixel columns
        if (xOf) {
          const [t0, t1] = span(c.top, xOf);
          const tol = marginTolerance(t0, t1);
          for (const side of ['marginLeft', 'marginRight'] as const) {
            const x = xOf(c[side]);
            if (x < t0 - tol || x > t1 + tol)
              ctx.addIssue({ code: 'custom', path: at('cycles', ci, side), message: `outside the top's x-range (${t0} to ${t1})` });
          }
        }
        for (const side of ['flankLeft', 'flankRight'] as const) {
          const f = c[side];
          if (f && f.every((p) => p[0] === f[0][0] && p[1] === f[0][1]))
            ctx.addIssue({ code: 'custom', path: at('cycles', ci, side), message: 'has no length (all its points coincide)' });
        }
        if (c.ageTopMa != null) {
          if (olderAge && !(c.ageTopMa < olderAge.age))
            ctx.addIssue({
              code: 'custom',
              path: at('cycles', ci, 'ageTopMa'),
              message: `must be younger (a smaller Ma) than ${olderAge.where} (${olderAge.age} Ma)`,
            });
          olderAge = { age: c.ageTopMa, where: `the top of cycle ${ci + 1}` };
        }
      });
    });
  });

/**
 * What is needed to convert single points to depth (the Ruler and cursor
 * readouts): the interpretation without the need for buildups (they matter
 * only to the `buildup` velocity model, whose envelope they give).
 */
export const depthContextSchema = z
  .object({
    verticalDomain: z.enum(['twt_ms', 'depth_m'], { error: req('must be "twt_ms" or "depth_m"') }),
    coordinates: z.enum(['world', 'pixels'], { error: req('must be "world" or "pixels"') }).default('world'),
    calibration: calibrationSchema.nullish(),
    velocity: velocityModelSchema.nullish(),
    buildups: z.array(buildupSchema, { error: req('must be a list of buildups') }).default([]),
  })
  .superRefine((it, ctx) => {
    if (it.coordinates === 'pixels' && !it.calibration)
      ctx.addIssue({ code: 'custom', path: ['calibration'], message: 'is required when coordinates are "pixels"' });
    if (it.verticalDomain === 'twt_ms' && !it.velocity)
      ctx.addIssue({ code: 'custom', path: ['velocity'], message: 'is required when verticalDomain is "twt_ms"' });
  });
export type DepthContext = z.output<typeof depthContextSchema>;

/** Options of a measurement call (measurement-spec §5, §6, §8); the output prints the ones used. */
export const measureOptionsSchema = z.strictObject(
  {
    /** Half-width (degrees) of the band around 90° classed as aggrading. */
    aggradingToleranceDeg: num().min(0, 'must be ≥ 0°').max(89, 'must be < 90°').default(10),
    /** Onlap/downlap terminations on the youngest top that make a buildup drowned. */
    drownedMinTerminations: z.number({ error: req('must be an integer') }).int('must be an integer').min(1, 'must be ≥ 1').default(2),
    /** Greatest vertical distance (m, depth domain) of a termination from the youngest top to count as lying on it. */
    terminationToleranceM: num().positive('must be > 0 m').default(25),
    /** Smallest left–right flank-angle difference (degrees) that earns a windward/leeward hint. */
    asymmetryMinDeg: num().min(0, 'must be ≥ 0°').default(2),
    /** Monte Carlo draws when any velocity is a range. */
    draws: z.number({ error: req('must be an integer') }).int('must be an integer').min(DRAWS_MIN, `must be ≥ ${DRAWS_MIN}`).max(DRAWS_MAX, `must be ≤ ${DRAWS_MAX}`).default(DRAWS_DEFAULT),
    /** Seed of the Monte Carlo draws (same seed, same ranges). */
    seed: z.union([safeText().max(200, 'must be at most 200 characters'), num()], { error: req('must be a text or a number') }).default('cayline'),
  },
  { error: req('must be an object') },
);

export type InterpretationInput = z.input<typeof interpretationSchema>;
export type Interpretation = z.output<typeof interpretationSchema>;
export type BuildupInput = z.output<typeof buildupSchema>;
export type CycleInput = z.output<typeof cycleSchema>;
export type VelocityModelInput = z.output<typeof velocityModelSchema>;
export type TieInput = z.output<typeof tieSchema>;
export type MeasureOptionsInput = z.input<typeof measureOptionsSchema>;
export type MeasureOptions = z.output<typeof measureOptionsSchema>;

interface IssueLike {
  code?: string;
  path: PropertyKey[];
  message: string;
  errors?: IssueLike[][];
  keys?: string[];
}

function flatten(issue: IssueLike, prefix: PropertyKey[]): { path: PropertyKey[]; message: string }[] {
  const path = [...prefix, ...issue.path];
  if (issue.code === 'invalid_union' && issue.errors && issue.errors.length) {
    // pick the branch that got past the type check (the one the author meant)
    const meant = issue.errors.filter((branch) => !branch.some((i) => i.path.length === 0 && i.code === 'invalid_type'));
    if (meant.length === 1) return meant[0].flatMap((i) => flatten(i, path));
  }
  if (issue.code === 'unrecognized_keys' && issue.keys?.length) return [{ path, message: `unknown field ${issue.keys.map((k) => `"${k}"`).join(', ')}` }];
  return [{ path, message: issue.message }];
}

/** `path: message` strings for every issue of a zod error, under an optional path prefix (e.g. `options`). */
export function describeIssues(error: { issues: readonly unknown[] }, prefix: PropertyKey[] = []): { path: string; message: string; text: string }[] {
  return (error.issues as IssueLike[]).flatMap((i) => flatten(i, prefix)).map((i) => {
    const p = formatIssuePath(i.path);
    return { path: p, message: i.message, text: p ? `${p}: ${i.message}` : i.message };
  });
}
