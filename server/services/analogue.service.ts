/**
 * Analogue library records, promotion from a measured buildup,
 * entry by hand, curator decisions, controlled lists, faceted search in
 * PostgreSQL, saved searches and Look-alikes. Everybody signed in reads; the
 * routes let only curators and admins change the library (interpreters may ask
 * for a promotion, which waits as `pending`).
 *
 * Search answers are cached in this process by query and library generation
 * (`analogue_library_state.generation`, bumped by a trigger on every statement
 * that changes analogues or the lists), so a repeated search costs one
 * single-row read; any change anywhere makes every cached answer stale.
 *
 * Split by concern: analogue-rows.ts (columns, row shapes, the write
 * wrapper), analogue-records.service.ts, analogue-lists.service.ts,
 * analogue-search.service.ts, analogue-lookalikes.service.ts. This module
 * gathers them, so callers import one place.
 */
export { type Actor, write, isCurator, METRIC_COLUMN, toSummary, getAnalogue, forgetGeneration, GENERATION_TTL_MS } from './analogue-rows';
export * from './analogue-records.service';
export * from './analogue-lists.service';
export * from './analogue-search.service';
export * from './analogue-lookalikes.service';
export type { EvolutionClass } from '../../shared/schemas/analogues';
