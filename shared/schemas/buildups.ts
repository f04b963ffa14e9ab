/**
 * Buildups on a section (the interpretation canvas): stored geometry in image
 * pixels, saved with optimistic locking, and the section's velocity model.
 */
import { z } from 'zod';
import { NAME_MAX } from './limits';
import { buildupGeometrySchema, storedCycleId, storedTerminationId } from '../editor/model';
import { velocityModelSchema } from './interpretation';
import { safeText } from './text';
import type { ReviewState } from './review';

export { buildupGeometrySchema };

/** Most vertices one polyline may carry (a traced surface on a 20000-px section with room to spare). */
export const MAX_VERTICES = 20_000;
export const MAX_CYCLES = 60;

const name = safeText().trim().min(1, 'is required').max(NAME_MAX, `must be at most ${NAME_MAX} characters`);

export const createBuildupSchema = z.object({ name });

export const saveBuildupSchema = z.object({
  version: z.number({ error: 'is required (the version you last loaded)' }).int().min(0),
  name: name.optional(),
  geometry: buildupGeometrySchema.superRefine((g, ctx) => {
    const big = (pts: unknown[] | null | undefined, path: (string | number)[]) => {
      if (pts && pts.length > MAX_VERTICES) ctx.addIssue({ code: 'custom', path, message: `has more than ${MAX_VERTICES} vertices` });
    };
    big(g.base, ['base']);
    if (g.cycles.length > MAX_CYCLES) ctx.addIssue({ code: 'custom', path: ['cycles'], message: `has more than ${MAX_CYCLES} cycles` });
    g.cycles.forEach((c, i) => {
      big(c.top, ['cycles', i, 'top']);
      big(c.flankLeft, ['cycles', i, 'flankLeft']);
      big(c.flankRight, ['cycles', i, 'flankRight']);
      if (c.index !== i + 1) ctx.addIssue({ code: 'custom', path: ['cycles', i, 'index'], message: `must be ${i + 1} (cycles are numbered 1 = oldest, in order)` });
    });
    // stable ids (Note pins anchor to them): unique among cycles and among stamps, defaults included
    const unique = (ids: string[], list: 'cycles' | 'terminations') => {
      const seen = new Set<string>();
      ids.forEach((id, i) => {
        if (seen.has(id)) ctx.addIssue({ code: 'custom', path: [list, i, 'id'], message: `duplicate id "${id}"` });
        seen.add(id);
      });
    };
    unique(g.cycles.map(storedCycleId), 'cycles');
    unique(g.terminations.map(storedTerminationId), 'terminations');
  }),
});
export type SaveBuildupInput = z.infer<typeof saveBuildupSchema>;

/**
 * `PUT /api/sections/:id/velocity`: a velocity model of measurement-spec §3 (ranges allowed), and the
 * `updatedAt` of the stored model it replaces (null: none stored yet); a stale one answers 409 `version_conflict`.
 */
export const putVelocitySchema = z.object({ velocity: velocityModelSchema, baseUpdatedAt: z.iso.datetime().nullable().optional() });

/**
 * Default velocity model for a section in TWT: the buildup-aware vertical ray
 * (spec §3) with
 * - seawater 1500 m/s (standard textbook value, e.g. Milsom, Field Geophysics);
 * - shale or marl overburden 2000–2500 m/s, mode 2250 (from memory, common practice);
 * - reef or platform limestone 4000–5500 m/s, mode 4700 (from memory, common practice,
 *   within the 1700–6500 m/s of carbonate rocks in Anselmetti & Eberli 1993).
 * The seafloor TWT is the interpreter's to set; until then 0 ms (no water).
 */
export const DEFAULT_VELOCITY = {
  kind: 'buildup' as const,
  water: { v: 1500, seafloorMs: 0 },
  overburden: { v: { min: 2000, mode: 2250, max: 2500 } },
  carbonate: { v: { min: 4000, mode: 4700, max: 5500 } },
};

export const DEFAULT_VELOCITY_SOURCES = [
  'Seawater 1500 m/s: standard textbook value (e.g. Milsom, Field Geophysics).',
  'Carbonate rocks 1700–6500 m/s depending on porosity and pore type: Anselmetti & Eberli (1993), Pure and Applied Geophysics 141.',
  'Overburden 2000–2500 m/s and reef limestone 4000–5500 m/s: from memory (common practice); replace with local well or velocity-analysis data.',
];

export interface BuildupSummary {
  id: number;
  sectionId: number;
  name: string;
  version: number;
  cycleCount: number;
  updatedAt: string;
  updatedBy: { id: number; name: string } | null;
  /** Review state (shared/schemas/review.ts); a signed-off buildup refuses edits until reopened. */
  reviewState: ReviewState;
}
