/**
 * Per-buildup summaries of the measured figures (`buildup_summaries`,
 * migration 0010): the register sorts, filters and pages them in SQL.
 *
 * A summary records what it was measured from (buildup version, calibration
 * row, velocity-model time, vertical domain); `CURRENT_SUMMARY_SQL` tells in
 * SQL whether it still matches. Writes never replace a newer version's
 * summary with an older one (a slow job finishing late).
 */
import type { Transaction } from 'sequelize';
import { ctx } from '../context';
import type { MeasurementOutput } from '../../shared/measure/index';

/** What a measurement of a stored buildup was computed from. */
export interface SummarySources {
  buildupId: number;
  buildupVersion: number;
  calibrationId: number | null;
  velocityAt: Date | null;
  verticalDomain: string;
  /** Section image size (px), to place the crest along the section. */
  width: number;
  height: number;
}

export type StoredStatus = 'ok' | 'not_measurable' | 'not_calibrated' | 'failed';

/**
 * SQL condition (aliases: b = buildups, s = sections, sm = buildup_summaries)
 * true when the summary matches the buildup's current version, the section's
 * latest calibration row, its velocity model and vertical domain.
 */
export const CURRENT_SUMMARY_SQL = `(sm.buildup_id IS NOT NULL
  AND sm.buildup_version = b.version
  AND sm.vertical_domain = s.vertical_domain
  AND sm.calibration_id IS NOT DISTINCT FROM (SELECT c.id FROM section_calibrations c WHERE c.section_id = b.section_id ORDER BY c.version DESC, c.id DESC LIMIT 1)
  AND date_trunc('milliseconds', sm.velocity_at) IS NOT DISTINCT FROM (SELECT date_trunc('milliseconds', v.updated_at) FROM section_velocities v WHERE v.section_id = b.section_id))`;

const finite = (v: number | null | undefined) => (typeof v === 'number' && Number.isFinite(v) ? v : null);

/** The register's figures of one buildup from the engine's output (default options). */
export function figuresOf(output: MeasurementOutput, sources: SummarySources) {
  const b = output.buildups[0];
  if (!b) return null;
  let crestFraction: number | null = null;
  const fit = output.calibration;
  if (fit && sources.width > 0) {
    // world x of the section's left and right edges at mid-height (x = a·u + b·v + c)
    const vm = sources.height / 2;
    const x0 = fit.affine.a * 0 + fit.affine.b * vm + fit.affine.c;
    const x1 = fit.affine.a * sources.width + fit.affine.b * vm + fit.affine.c;
    if (x1 !== x0) crestFraction = finite((b.crest[0] - x0) / (x1 - x0));
  }
  return {
    classification: b.classification,
    height_m: finite(b.heightM),
    base_width_m: finite(b.baseWidthM),
    aspect_ratio: finite(b.aspectRatio),
    trajectory_deg: finite(b.trajectoryDeg),
    area_m2: finite(b.areaM2),
    volume_m3: finite(b.volumeM3),
    volume_p50_m3: finite(b.ranges ? b.ranges.volumeM3.p50 : b.volumeM3),
    crest_x_m: finite(b.crest[0]),
    crest_z_m: finite(b.crest[1]),
    crest_fraction: crestFraction,
  };
}

const EMPTY = {
  classification: null,
  height_m: null,
  base_width_m: null,
  aspect_ratio: null,
  trajectory_deg: null,
  area_m2: null,
  volume_m3: null,
  volume_p50_m3: null,
  crest_x_m: null,
  crest_z_m: null,
  crest_fraction: null,
};

const CAST: Record<string, string> = {
  buildup_id: 'integer',
  buildup_version: 'integer',
  calibration_id: 'integer',
  velocity_at: 'timestamptz',
  vertical_domain: 'text',
  status: 'text',
  problem: 'text',
  classification: 'text',
  computed_at: 'timestamptz',
};

/** Upsert the summary of one buildup: the figures (status ok) or why there are none. */
export async function writeSummary(
  sources: SummarySources,
  result: { output: MeasurementOutput } | { status: Exclude<StoredStatus, 'ok'>; problem: string },
  transaction?: Transaction,
): Promise<void> {
  const figures = 'output' in result ? figuresOf(result.output, sources) : null;
  const status: StoredStatus = 'output' in result ? (figures ? 'ok' : 'not_measurable') : result.status;
  const problem = 'output' in result ? (figures ? null : 'the engine returned no buildup') : result.problem;
  const row = {
    buildup_id: sources.buildupId,
    buildup_version: sources.buildupVersion,
    calibration_id: sources.calibrationId,
    velocity_at: sources.velocityAt,
    vertical_domain: sources.verticalDomain,
    status,
    problem,
    ...(figures ?? EMPTY),
    computed_at: new Date(),
  };
  const cols = Object.keys(row);
  const updates = cols.filter((c) => c !== 'buildup_id').map((c) => `${c} = EXCLUDED.${c}`);
  // the buildup may have been deleted meanwhile: insert only while it exists
  await ctx().sequelize.query(
    `INSERT INTO buildup_summaries (${cols.join(', ')})
     SELECT ${cols.map((c) => `$${c}::${CAST[c] ?? 'double precision'}`).join(', ')} WHERE EXISTS (SELECT 1 FROM buildups WHERE id = $buildup_id)
     ON CONFLICT (buildup_id) DO UPDATE SET ${updates.join(', ')}
     WHERE buildup_summaries.buildup_version <= EXCLUDED.buildup_version`,
    { bind: row, transaction },
  );
}
