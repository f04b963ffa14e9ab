/**
 * Zod schema of the growth forward model's parameters (shared/forward-model).
 * Shared by the model itself, the server and the client forms. Every refusal
 * names the path of the bad field (`cycles.productionFactors[2]: must be ≤ 1`).
 *
 * Units: x and z in metres (z positive down, relative to sea level at the
 * start of the run, the frame of the antecedent profile), time in years from
 * the start of the run, growth rates in mm/yr, subsidence in m/Myr, angles in
 * degrees.
 *
 * Limits. "Absurd" rates are refused: Gm above 100 mm/yr (Bosscher & Schlager
 * 1992 give 10–15 mm/yr; Holocene reef accretion of several m/kyr, from
 * memory), subsidence above 50 000 m/Myr (50 mm/yr, beyond any postglacial
 * rise, from memory), exposure lowering above 10 mm/yr (karst denudation is
 * well below 1 mm/yr, from memory). The memory bound is stated in
 * `FORWARD_MODEL_LIMITS`: at most 20 000 columns and 200 cycles, so the column
 * state (kept surfaces + 3 working arrays, 8 bytes each) stays below
 * 20 000 × 204 × 8 B ≈ 33 MB; columns × steps is capped at 2·10⁸ (about
 * 1–2 s of one thread).
 */
import { z } from 'zod';
import { safeText } from './text';

export const FORWARD_MODEL_LIMITS = {
  maxColumns: 20_000,
  maxCycles: 200,
  maxSteps: 2_000_000,
  maxColumnSteps: 2e8,
  maxGmMmPerYr: 100,
  maxSubsidenceMPerMyr: 50_000,
  maxLoweringMmPerYr: 10,
  /** Bytes of column state at most: columns × (cycles + 1 kept surfaces + 3 working arrays) × 8. */
  memoryBoundBytes: 20_000 * (200 + 1 + 3) * 8,
} as const;

const req = (what: string) => (iss: { input?: unknown }) => (iss.input === undefined ? 'is required' : what);
const num = (what = 'must be a finite number') => z.number({ error: req(what) });

const pair = z.tuple([num(), num()], { error: req('must be a pair [a, b] of two finite numbers') });

/** A time table [[tYr, value], …] with strictly ascending times. */
const timeTable = (valueName: string) =>
  z
    .array(pair, { error: req(`must be a list of [tYr, ${valueName}] pairs`) })
    .min(1, 'needs at least one row')
    .superRefine((rows, ctx) => {
      for (let i = 1; i < rows.length; i++)
        if (!(rows[i][0] > rows[i - 1][0]))
          ctx.addIssue({ code: 'custom', path: [i, 0], message: `must be later than the row before (${rows[i - 1][0]} yr): times ascend` });
    });

/** Segments (a,b) and (c,d) cross properly or overlap (shared end points of neighbours excluded by the caller). */
function segmentsCross(a: number[], b: number[], c: number[], d: number[]): boolean {
  const o = (p: number[], q: number[], r: number[]) => Math.sign((q[0] - p[0]) * (r[1] - p[1]) - (q[1] - p[1]) * (r[0] - p[0]));
  const on = (p: number[], q: number[], r: number[]) =>
    Math.min(p[0], q[0]) <= r[0] && r[0] <= Math.max(p[0], q[0]) && Math.min(p[1], q[1]) <= r[1] && r[1] <= Math.max(p[1], q[1]);
  const o1 = o(a, b, c), o2 = o(a, b, d), o3 = o(c, d, a), o4 = o(c, d, b);
  if (o1 !== o2 && o3 !== o4 && o1 !== 0 && o2 !== 0 && o3 !== 0 && o4 !== 0) return true;
  return (o1 === 0 && on(a, b, c)) || (o2 === 0 && on(a, b, d)) || (o3 === 0 && on(c, d, a)) || (o4 === 0 && on(c, d, b));
}

/** Indexes [i, j] of the first pair of non-adjacent segments of a polyline that cross, or null. O(n²): profiles are short traces. */
export function firstSelfCrossing(pts: readonly (readonly number[])[]): [number, number] | null {
  for (let i = 0; i + 1 < pts.length; i++)
    for (let j = i + 2; j + 1 < pts.length; j++)
      if (segmentsCross(pts[i] as number[], pts[i + 1] as number[], pts[j] as number[], pts[j + 1] as number[])) return [i, j];
  return null;
}

/** The antecedent profile: depth (m, positive down) at x (m); traced either way; x must not turn back (a column model has one depth per x). */
export const profileSchema = z
  .array(pair, { error: req('must be a list of points [[x, z], ...]') })
  .min(2, 'needs at least 2 points')
  .max(FORWARD_MODEL_LIMITS.maxColumns, `must have at most ${FORWARD_MODEL_LIMITS.maxColumns} points`)
  .superRefine((pts, ctx) => {
    if (pts.length < 2) return;
    const cross = firstSelfCrossing(pts);
    if (cross) {
      ctx.addIssue({ code: 'custom', path: [cross[1]], message: `the profile crosses itself (segment ${cross[0]}–${cross[0] + 1} and segment ${cross[1]}–${cross[1] + 1})` });
      return;
    }
    const dir = Math.sign(pts[pts.length - 1][0] - pts[0][0]);
    if (dir === 0) return void ctx.addIssue({ code: 'custom', message: 'has no extent in x (first and last x are equal)' });
    for (let i = 1; i < pts.length; i++)
      if (!(Math.sign(pts[i][0] - pts[i - 1][0]) === dir))
        return void ctx.addIssue({ code: 'custom', path: [i, 0], message: 'x must keep going the same way along the profile (one depth per x; no overhangs or vertical steps)' });
  });

export const growthSchema = z.object({
  /** Maximum growth rate Gm (mm/yr). */
  GmMmPerYr: num().positive('must be > 0 mm/yr').max(FORWARD_MODEL_LIMITS.maxGmMmPerYr, `must be ≤ ${FORWARD_MODEL_LIMITS.maxGmMmPerYr} mm/yr`),
  /** Surface light intensity I0 (µE m⁻² s⁻¹). */
  I0: num().positive('must be > 0 µE m⁻² s⁻¹').max(10_000, 'must be ≤ 10000 µE m⁻² s⁻¹'),
  /** Saturating light intensity Ik (µE m⁻² s⁻¹). */
  Ik: num().positive('must be > 0 µE m⁻² s⁻¹').max(10_000, 'must be ≤ 10000 µE m⁻² s⁻¹'),
  /** Extinction coefficient k (1/m). */
  kPerM: num().positive('must be > 0 1/m').max(5, 'must be ≤ 5 1/m'),
});

export const eustasySchema = z.discriminatedUnion(
  'kind',
  [
    z.object({ kind: z.literal('none') }),
    /** Eustatic level (m, up positive) at times (yr from the start), linear in between, end values held outside. */
    z.object({ kind: z.literal('table'), points: timeTable('levelM') }),
    /** Σ A·sin(2π·t/P + φ). */
    z.object({
      kind: z.literal('sinusoids'),
      terms: z
        .array(
          z.object({
            amplitudeM: num().min(0, 'must be ≥ 0 m').max(1000, 'must be ≤ 1000 m'),
            periodYr: num().positive('must be > 0 yr'),
            phaseDeg: num().default(0),
          }),
        )
        .min(1, 'needs at least one term'),
    }),
  ],
  { error: req('unknown eustasy kind (use "none", "table" or "sinusoids")') },
);

export const subsidenceSchema = z.discriminatedUnion(
  'kind',
  [
    z.object({
      kind: z.literal('constant'),
      rateMPerMyr: num().min(0, 'must be ≥ 0 m/Myr (uplift: put it in the eustatic table)').max(FORWARD_MODEL_LIMITS.maxSubsidenceMPerMyr, `must be ≤ ${FORWARD_MODEL_LIMITS.maxSubsidenceMPerMyr} m/Myr`),
    }),
    /** Cumulative subsidence (m) at times (yr), linear in between; counted from its value at t = 0. */
    z.object({ kind: z.literal('table'), points: timeTable('subsidedM') }),
  ],
  { error: req('unknown subsidence kind (use "constant" or "table")') },
);

export const forwardModelParamsSchema = z
  .object({
    name: safeText({ error: req('must be a text') }).trim().max(200).default('Forward model'),
    /** Antecedent profile [[x m, z m]], z down from the sea level at t = 0. */
    profile: profileSchema,
    /** Columns, equally spaced between the profile's ends. */
    columns: z
      .number({ error: req('must be an integer') })
      .int('must be an integer')
      .min(2, 'must be ≥ 2')
      .max(FORWARD_MODEL_LIMITS.maxColumns, `must be ≤ ${FORWARD_MODEL_LIMITS.maxColumns}`)
      .default(201),
    growth: growthSchema,
    /** Lowering of exposed columns (mm/yr, karst); never below the antecedent profile nor below sea level. */
    exposedLoweringMmPerYr: num().min(0, 'must be ≥ 0 mm/yr').max(FORWARD_MODEL_LIMITS.maxLoweringMmPerYr, `must be ≤ ${FORWARD_MODEL_LIMITS.maxLoweringMmPerYr} mm/yr`).default(0),
    eustasy: eustasySchema.default({ kind: 'none' }),
    subsidence: subsidenceSchema.default({ kind: 'constant', rateMPerMyr: 0 }),
    stepYr: num().positive('must be > 0 yr'),
    durationYr: num().positive('must be > 0 yr'),
    cycles: z.object({
      /** Cycle ends (yr from the start, ascending, inside the run), or "lowstands" (local minima of relative sea level). The end of the run always closes the last cycle. */
      boundaries: z.union([z.literal('lowstands'), z.array(num()).max(FORWARD_MODEL_LIMITS.maxCycles - 1)]).default([]),
      /** Production factor per cycle (0–1), oldest first; the last one carries on for further cycles. */
      productionFactors: z.array(num().min(0, 'must be ≥ 0').max(1, 'must be ≤ 1')).min(1, 'needs at least one factor').max(FORWARD_MODEL_LIMITS.maxCycles),
    }),
    /**
     * Angle-of-repose rule: sediment above this slope is moved down-flank.
     * Default 35°: loose sand and rubble stand up to the angle of repose,
     * about 35–45° (Kenter 1990, Sedimentology 37; Schlager 2005, SEPM
     * Concepts 8, fig. 3.14 — ranges from memory, references.md).
     */
    slopeLimitDeg: num().gt(0, 'must be > 0°').max(89, 'must be ≤ 89°').default(35),
    /** Break-of-slope threshold of the margin rule (see `marginsOf` in shared/forward-model/output.ts). */
    marginSlopeDeg: num().gt(0, 'must be > 0°').max(89, 'must be ≤ 89°').default(5),
    /** Age of the start of the run (Ma), for the cycles' ageTopMa. */
    startAgeMa: num().min(0, 'must be ≥ 0 Ma').nullish(),
  })
  .superRefine((p, ctx) => {
    if (p.stepYr > p.durationYr) ctx.addIssue({ code: 'custom', path: ['stepYr'], message: `must not exceed durationYr (${p.durationYr} yr)` });
    const steps = Math.ceil(p.durationYr / p.stepYr - 1e-9);
    if (steps > FORWARD_MODEL_LIMITS.maxSteps)
      ctx.addIssue({ code: 'custom', path: ['stepYr'], message: `gives ${steps} steps, more than ${FORWARD_MODEL_LIMITS.maxSteps}: use a longer step or a shorter duration` });
    else if (steps * p.columns > FORWARD_MODEL_LIMITS.maxColumnSteps)
      ctx.addIssue({ code: 'custom', path: ['columns'], message: `× steps = ${steps * p.columns}, more than ${FORWARD_MODEL_LIMITS.maxColumnSteps}: use fewer columns or a longer step` });
    if (Array.isArray(p.cycles.boundaries)) {
      const b = p.cycles.boundaries;
      for (let i = 0; i < b.length; i++) {
        if (!(b[i] > 0 && b[i] < p.durationYr))
          ctx.addIssue({ code: 'custom', path: ['cycles', 'boundaries', i], message: `must lie inside the run (0 to ${p.durationYr} yr, exclusive)` });
        else if (i > 0 && !(b[i] > b[i - 1]))
          ctx.addIssue({ code: 'custom', path: ['cycles', 'boundaries', i], message: `must be later than the boundary before (${b[i - 1]} yr)` });
      }
    }
  });

export type ForwardModelParamsInput = z.input<typeof forwardModelParamsSchema>;
export type ForwardModelParams = z.output<typeof forwardModelParamsSchema>;
