/**
 * Saved runs of the growth forward model, per buildup (`model_runs`,
 * migration 0013): the run's name, its parameters (checked by
 * `forwardModelParamsSchema` — a bad parameter answers 422 naming
 * `params.<field>`), how the antecedent profile was placed, and a summary of
 * the result computed in the browser (the same shared model and engine).
 *
 * Routes (mounted at /api):
 * - `GET    /buildups/:id/model-runs`  — every project member and admins;
 * - `POST   /buildups/:id/model-runs`  — interpreter members and admins;
 * - `GET    /model-runs/:id`           — every project member and admins;
 * - `DELETE /model-runs/:id`           — interpreter members and admins.
 */
import { z } from 'zod';
import { FORWARD_MODEL_LIMITS } from './forward-model';
import { safeText } from './text';

const finite = z.number().finite();
const numOrNull = finite.nullable();

export const PROFILE_SOURCES = ['traced', 'drawn', 'typed'] as const;
export type ProfileSource = (typeof PROFILE_SOURCES)[number];

export const MODEL_CLASSES = ['aggrading', 'prograding', 'backstepping', 'downstepping', 'drowned'] as const;

/** Figures of one modelled cycle, as the engine measured them. */
export const modelRunCycleSummarySchema = z.object({
  index: z.number().int().min(1),
  topWidthM: numOrNull,
  thicknessM: numOrNull,
  meanBackstepM: numOrNull,
  meanAggradationM: numOrNull,
  factor: numOrNull,
});

export const sweepPointSchema = z.object({ value: finite, crestWaterDepthM: finite, drowned: z.boolean() });

export const modelRunSummarySchema = z.object({
  /** Final water depth of the crest (m; ≤ 0 at or above sea level). */
  crestWaterDepthM: finite,
  /** Depth where G = 1 % of Gm (m). */
  drowningDepthM: finite,
  drowned: z.boolean(),
  steps: z.number().int().min(1),
  classification: z.enum(MODEL_CLASSES).nullable(),
  heightM: numOrNull,
  baseWidthM: numOrNull,
  netBackstepM: numOrNull,
  netAggradationM: numOrNull,
  cycles: z.array(modelRunCycleSummarySchema).max(FORWARD_MODEL_LIMITS.maxCycles),
  threshold: z
    .object({
      parameter: z.enum(['productionFactor', 'riseRate']),
      value: numOrNull,
      drowningDepthM: finite,
      points: z.array(sweepPointSchema).max(200),
    })
    .nullable()
    .default(null),
  fit: z
    .object({
      factors: z.array(finite.min(0).max(1)).max(FORWARD_MODEL_LIMITS.maxCycles),
      subsidenceMPerMyr: numOrNull,
      rmsM: finite,
      warnings: z.array(safeText().max(500)).max(50),
    })
    .nullable()
    .default(null),
});
export type ModelRunSummary = z.output<typeof modelRunSummarySchema>;

/**
 * Body of `POST /buildups/:id/model-runs`. `params` is checked separately by
 * the service with the model's own schema (422 `invalid_model_params`, paths
 * `params.<field>`), so the route's envelope check (400) stays apart from the
 * model's physics limits.
 */
export const modelRunCreateSchema = z.object({
  name: safeText().trim().min(1, 'must not be empty').max(200, 'must be at most 200 characters'),
  params: z.record(safeText(), z.unknown(), { error: 'must be an object of model parameters' }),
  profileSource: z.enum(PROFILE_SOURCES).default('traced'),
  /**
   * Present-day depth (m) of the model frame's zero (sea level at the start):
   * model z + depthOffsetM = the section's depth. Used to overlay the modelled
   * surfaces on the section.
   */
  depthOffsetM: finite.min(-20_000).max(20_000).default(0),
  summary: modelRunSummarySchema,
});
export type ModelRunCreateInput = z.input<typeof modelRunCreateSchema>;

export interface ModelRunListItem {
  id: number;
  buildupId: number;
  name: string;
  profileSource: ProfileSource;
  summary: ModelRunSummary;
  createdBy: { id: number; name: string } | null;
  createdAt: string;
}

export interface ModelRunDetail extends ModelRunListItem {
  params: unknown;
  depthOffsetM: number;
}
