// Over 500 lines: the editor records, their zod schemas and the conversion to the engine input belong together (the browser and the server build identical input from this one file).
/**
 * Plain, serialisable editor records for the interpretation canvas.
 *
 * All geometry is kept in IMAGE PIXELS (`[u, v]`, `u` right, `v` down). The
 * records are immutable by convention: actions build new objects and share
 * every untouched part with the previous state (see actions.ts), so reference
 * equality means "unchanged".
 */
import { z } from 'zod';
import { safeText } from '../schemas/text';
import { formatIssuePath } from '../api-errors';
import { applyCalibration, fitCalibration, type Affine } from '../measure/calibration';
import { isPt, uRange, type Pt } from './geometry';
import type { speedSchema, TieInput, VelocityModelInput } from '../schemas/interpretation';

export type { Pt } from './geometry';

export const TERMINATION_TYPES = ['onlap', 'downlap', 'toplap', 'truncation'] as const;
export type TerminationType = (typeof TERMINATION_TYPES)[number];

export type Side = 'left' | 'right';

/** One growth cycle while editing; any part may still be missing. */
export interface EditorCycle {
  id: string;
  top: Pt[];
  marginLeft: Pt | null;
  marginRight: Pt | null;
  flankLeft: Pt[] | null;
  flankRight: Pt[] | null;
  ageTopMa: number | null;
  systemsTract: string | null;
}

/** A Termination stamp. */
export interface EditorTermination {
  id: string;
  type: TerminationType;
  at: Pt;
}

export interface EditorBuildup {
  /** Local id: a uuid for new buildups, `String(serverId)` for loaded ones. */
  id: string;
  /** Id of the saved record; absent until the first save. */
  serverId?: number;
  name: string;
  /** Optimistic-locking version of the saved record (0 before the first save). */
  version: number;
  base: Pt[];
  /** Oldest first. */
  cycles: EditorCycle[];
  terminations: EditorTermination[];
  topIsDrowningSurface: boolean;
}

/** Everything that undo/redo covers. Selection and tools live elsewhere. */
export interface EditorState {
  buildups: EditorBuildup[];
}

// ---------------------------------------------------------------------------
// Server shape (spec §4, in pixels)

export interface CycleGeometry {
  /**
   * Stable id of the cycle (Note pins anchor to it). Left out when it equals
   * the positional default `c<index>`; see `storedCycleId`.
   */
  id?: string;
  /** 1 = oldest. */
  index: number;
  top: Pt[];
  marginLeft: Pt | null;
  marginRight: Pt | null;
  flankLeft?: Pt[];
  flankRight?: Pt[];
  ageTopMa?: number | null;
  systemsTract?: string | null;
}

export interface TerminationGeometry {
  /** Stable id of the stamp; left out when it equals the positional default `t<n>` (see `storedTerminationId`). */
  id?: string;
  type: TerminationType;
  at: Pt;
}

export interface BuildupGeometry {
  base: Pt[];
  cycles: CycleGeometry[];
  terminations: TerminationGeometry[];
  topIsDrowningSurface: boolean;
}

/** A buildup as the server stores it. */
export interface BuildupRecord {
  id: number;
  name: string;
  version: number;
  geometry: BuildupGeometry;
}

/** Error with the path of the offending field, e.g. `geometry.cycles[1].top[3]`. */
export class ModelError extends Error {
  constructor(
    readonly path: string,
    message: string,
  ) {
    super(path ? `${path}: ${message}` : message);
    this.name = 'ModelError';
  }
}

// ---------------------------------------------------------------------------
// ids

/** A random id (uuid v4 where available; works outside secure contexts too). */
export function newId(): string {
  const c = (globalThis as { crypto?: Crypto }).crypto;
  if (c && typeof c.randomUUID === 'function') return c.randomUUID();
  const bytes = new Uint8Array(16);
  if (c && typeof c.getRandomValues === 'function') c.getRandomValues(bytes);
  else for (let i = 0; i < 16; i++) bytes[i] = Math.floor(Math.random() * 256);
  bytes[6] = (bytes[6] & 0x0f) | 0x40;
  bytes[8] = (bytes[8] & 0x3f) | 0x80;
  const h = Array.from(bytes, (b) => b.toString(16).padStart(2, '0')).join('');
  return `${h.slice(0, 8)}-${h.slice(8, 12)}-${h.slice(12, 16)}-${h.slice(16, 20)}-${h.slice(20)}`;
}

// ---------------------------------------------------------------------------
// factories

export function emptyCycle(init: Partial<EditorCycle> = {}): EditorCycle {
  return {
    id: init.id ?? newId(),
    top: init.top ?? [],
    marginLeft: init.marginLeft ?? null,
    marginRight: init.marginRight ?? null,
    flankLeft: init.flankLeft ?? null,
    flankRight: init.flankRight ?? null,
    ageTopMa: init.ageTopMa ?? null,
    systemsTract: init.systemsTract ?? null,
  };
}

export function emptyBuildup(init: Partial<EditorBuildup> & { name: string }): EditorBuildup {
  const b: EditorBuildup = {
    id: init.id ?? newId(),
    name: init.name,
    version: init.version ?? 0,
    base: init.base ?? [],
    cycles: init.cycles ?? [],
    terminations: init.terminations ?? [],
    topIsDrowningSurface: init.topIsDrowningSurface ?? false,
  };
  if (init.serverId !== undefined) b.serverId = init.serverId;
  return b;
}

// ---------------------------------------------------------------------------
// server record ⇄ editor

const ptSchema = z.tuple([z.number(), z.number()]);
/** Ids of stored cycles and stamps: short, printable. */
const objectIdSchema = safeText().min(1).max(64);
const cycleGeometrySchema = z.object({
  id: objectIdSchema.optional(),
  index: z.number().int().min(1),
  top: z.array(ptSchema),
  marginLeft: ptSchema.nullable().optional(),
  marginRight: ptSchema.nullable().optional(),
  flankLeft: z.array(ptSchema).nullable().optional(),
  flankRight: z.array(ptSchema).nullable().optional(),
  ageTopMa: z.number().nullable().optional(),
  systemsTract: safeText().nullable().optional(),
});
/** A buildup's stored geometry (spec §4 shape in image pixels; incomplete cycles allowed while editing). */
export const buildupGeometrySchema = z.object({
  base: z.array(ptSchema),
  cycles: z.array(cycleGeometrySchema),
  terminations: z.array(z.object({ id: objectIdSchema.optional(), type: z.enum(TERMINATION_TYPES), at: ptSchema })),
  topIsDrowningSurface: z.boolean(),
});

/** The stable id of a stored cycle: its own `id`, else the positional default `c<index>`. */
export function storedCycleId(c: { id?: string; index: number }): string {
  return c.id ?? `c${c.index}`;
}

/** The stable id of the `i`-th (0-based) stored Termination stamp: its own `id`, else `t<i + 1>`. */
export function storedTerminationId(t: { id?: string }, i: number): string {
  return t.id ?? `t${i + 1}`;
}
const buildupRecordSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  version: z.number().int().min(0),
  geometry: buildupGeometrySchema,
});

const copyPt = (p: Pt): Pt => [p[0], p[1]];
const copyLine = (pts: readonly Pt[]): Pt[] => pts.map(copyPt);

/**
 * Editor buildup → the geometry the server stores (spec §4 shape in pixels).
 * Cycles are re-indexed 1..n oldest first; optional fields that are unset
 * (null flanks, age, systems tract) are left out. Returns fresh arrays.
 */
export function toGeometry(b: EditorBuildup): BuildupGeometry {
  return {
    base: copyLine(b.base),
    cycles: b.cycles.map((c, i) => {
      const g: CycleGeometry = {
        index: i + 1,
        top: copyLine(c.top),
        marginLeft: c.marginLeft ? copyPt(c.marginLeft) : null,
        marginRight: c.marginRight ? copyPt(c.marginRight) : null,
      };
      if (c.id !== `c${i + 1}`) g.id = c.id;
      if (c.flankLeft) g.flankLeft = copyLine(c.flankLeft);
      if (c.flankRight) g.flankRight = copyLine(c.flankRight);
      if (c.ageTopMa !== null) g.ageTopMa = c.ageTopMa;
      if (c.systemsTract !== null) g.systemsTract = c.systemsTract;
      return g;
    }),
    terminations: b.terminations.map((t, i) => (t.id !== `t${i + 1}` ? { id: t.id, type: t.type, at: copyPt(t.at) } : { type: t.type, at: copyPt(t.at) })),
    topIsDrowningSurface: b.topIsDrowningSurface,
  };
}

/** Body for saving a buildup: `{ name, version, geometry }`. */
export function toSavePayload(b: EditorBuildup): { name: string; version: number; geometry: BuildupGeometry } {
  return { name: b.name, version: b.version, geometry: toGeometry(b) };
}

/**
 * Server record → editor buildup. Validates the record (throws ModelError
 * naming the field path), orders cycles by `index` (oldest first) and gives
 * every cycle and termination its stored id or, when it has none, a stable
 * id derived from its position (`c<index>`, `t<n>`), so loading the same
 * record twice yields equal objects. `toGeometry` writes an id only where it
 * differs from that default, so ids survive deletes and re-indexing.
 */
export function fromGeometry(record: unknown): EditorBuildup {
  const parsed = buildupRecordSchema.safeParse(record);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw new ModelError(formatIssuePath(issue.path), issue.message);
  }
  const r = parsed.data;
  const seen = new Set<number>();
  r.geometry.cycles.forEach((c, i) => {
    if (seen.has(c.index)) throw new ModelError(`geometry.cycles[${i}].index`, `duplicate cycle index ${c.index}`);
    seen.add(c.index);
  });
  const cycles = [...r.geometry.cycles]
    .sort((a, b) => a.index - b.index)
    .map(
      (c): EditorCycle => ({
        id: storedCycleId(c),
        top: copyLine(c.top as Pt[]),
        marginLeft: c.marginLeft ? copyPt(c.marginLeft as Pt) : null,
        marginRight: c.marginRight ? copyPt(c.marginRight as Pt) : null,
        flankLeft: c.flankLeft ? copyLine(c.flankLeft as Pt[]) : null,
        flankRight: c.flankRight ? copyLine(c.flankRight as Pt[]) : null,
        ageTopMa: c.ageTopMa ?? null,
        systemsTract: c.systemsTract ?? null,
      }),
    );
  return {
    id: String(r.id),
    serverId: r.id,
    name: r.name,
    version: r.version,
    base: copyLine(r.geometry.base as Pt[]),
    cycles,
    terminations: r.geometry.terminations.map((t, i) => ({ id: storedTerminationId(t, i), type: t.type, at: copyPt(t.at as Pt) })),
    topIsDrowningSurface: r.geometry.topIsDrowningSurface,
  };
}

// ---------------------------------------------------------------------------
// measurement input (spec §4)

export type VerticalDomain = 'twt_ms' | 'depth_m';

/** A Tie: image pixel ↔ section coordinates (spec §2); the schema's type (shared/schemas/interpretation.ts). */
export type CalibrationTie = TieInput;

/** A velocity or a `{ min, mode, max }` range (spec §3), as the schema gives it. */
export type VelocityValue = z.output<typeof speedSchema>;

/** Velocity model (spec §3), as the schema gives it; passed through to the engine unchanged. */
export type VelocityModel = VelocityModelInput;

export interface InterpretationCycleInput {
  index: number;
  top: Pt[];
  marginLeft: Pt;
  marginRight: Pt;
  flankLeft?: Pt[];
  flankRight?: Pt[];
  ageTopMa?: number;
  systemsTract?: string;
}

export interface InterpretationBuildupInput {
  name: string;
  base: Pt[];
  cycles: InterpretationCycleInput[];
  terminations: TerminationGeometry[];
  topIsDrowningSurface: boolean;
}

export interface InterpretationInput {
  format: 'cayline.interpretation/1';
  verticalDomain: VerticalDomain;
  coordinates: 'pixels';
  calibration: CalibrationTie[];
  velocity: VelocityModel;
  buildups: InterpretationBuildupInput[];
}

export interface MeasureContext {
  calibrationTies: CalibrationTie[];
  verticalDomain: VerticalDomain;
  velocity: VelocityModel;
}

/** A cycle the engine can measure: a top of ≥ 2 points and both Margin pins. */
export function isCycleComplete(c: EditorCycle): boolean {
  return c.top.length >= 2 && c.marginLeft !== null && c.marginRight !== null;
}

/** The cycles that go to the engine (complete ones, oldest first). */
export function measurableCycles(b: EditorBuildup): EditorCycle[] {
  return b.cycles.filter(isCycleComplete);
}

/** The pixel → section map of a list of Ties (affine least squares, as the engine fits it), or null when it cannot be fitted. */
function sectionMapOf(ties: readonly CalibrationTie[]): Affine | null {
  try {
    return fitCalibration(ties as CalibrationTie[], 'affine').affine;
  } catch {
    return null;
  }
}

/** `12.3` style number for messages. */
const fmtX = (v: number) => String(Math.round(v * 10) / 10);

/**
 * Why a buildup cannot be measured yet, as `path: reason` strings (empty when
 * it can). Paths are relative to the buildup, with editor positions.
 *
 * With the section's Ties (`calibration`), the Margin pins are checked against
 * their top's x-range in SECTION x, as the engine does (contract §4): under a
 * rotated or sheared calibration pixel columns are not section x. Ties that
 * cannot be fitted yet skip that check (the calibration issue is reported on
 * its own). Without `calibration` (no section context) the check falls back
 * to pixel columns, exact only for a calibration without rotation or shear.
 */
export function measurabilityIssues(b: EditorBuildup, calibration?: readonly CalibrationTie[] | null): string[] {
  const issues: string[] = [];
  const map = calibration ? sectionMapOf(calibration) : null;
  if (b.base.length < 2) issues.push('base: needs at least 2 points');
  else if (b.base.every((p) => p[0] === b.base[0][0])) issues.push('base: needs a u-extent (all its points share one u)');
  const complete = b.cycles.map(isCycleComplete);
  if (!complete.some(Boolean)) issues.push('cycles: needs at least one cycle with a top of 2+ points and both margins');
  b.cycles.forEach((c, i) => {
    if (!complete[i]) return;
    if (calibration) {
      if (!map) return;
      let x0 = Infinity;
      let x1 = -Infinity;
      for (const p of c.top) {
        const x = applyCalibration(map, p)[0];
        if (x < x0) x0 = x;
        if (x > x1) x1 = x;
      }
      const tol = 1e-9 * Math.max(Math.abs(x0), Math.abs(x1));
      for (const side of ['marginLeft', 'marginRight'] as const) {
        const x = applyCalibration(map, c[side]!)[0];
        if (x < x0 - tol || x > x1 + tol) issues.push(`cycles[${i}].${side}: outside the top's x-range (${fmtX(x0)} to ${fmtX(x1)} m along the section; the pin is at ${fmtX(x)})`);
      }
      return;
    }
    const r = uRange(c.top)!;
    for (const side of ['marginLeft', 'marginRight'] as const) {
      const m = c[side]!;
      if (m[0] < r[0] || m[0] > r[1]) issues.push(`cycles[${i}].${side}: outside the top's u-range [${r[0]}, ${r[1]}]`);
    }
  });
  let older: { age: number; where: string } | null = null;
  b.cycles.forEach((c, i) => {
    if (!complete[i] || c.ageTopMa === null) return;
    if (older && !(c.ageTopMa < older.age))
      issues.push(`cycles[${i}].ageTopMa: must be younger (a smaller Ma) than ${older.where} (${older.age} Ma)`);
    older = { age: c.ageTopMa, where: `the top of cycle ${i + 1}` };
  });
  const check = (pts: readonly Pt[] | null, path: string) =>
    pts?.forEach((p, j) => {
      if (!isPt(p)) issues.push(`${path}[${j}]: not a finite [u, v] point`);
    });
  check(b.base, 'base');
  b.cycles.forEach((c, i) => {
    check(c.top, `cycles[${i}].top`);
    check(c.flankLeft, `cycles[${i}].flankLeft`);
    check(c.flankRight, `cycles[${i}].flankRight`);
  });
  return issues;
}

/** Whether `measurabilityIssues(b, calibration)` is empty. */
export function isMeasurable(b: EditorBuildup, calibration?: readonly CalibrationTie[] | null): boolean {
  return measurabilityIssues(b, calibration).length === 0;
}

/** A flank worth sending: 2+ points that do not all coincide. */
function hasLength(pts: readonly Pt[] | null): boolean {
  return !!pts && pts.length >= 2 && pts.some((p) => p[0] !== pts[0][0] || p[1] !== pts[0][1]);
}

/**
 * Build the engine input (spec §4) with `coordinates: "pixels"`. Only
 * complete cycles are sent, re-indexed 1..n oldest first; flanks with fewer
 * than 2 distinct points and unknown ages are left out. Throws ModelError naming
 * `buildups[i].…` when a buildup is not measurable.
 */
export function toInterpretationInput(
  buildups: EditorBuildup | readonly EditorBuildup[],
  ctx: MeasureContext,
): InterpretationInput {
  const list: readonly EditorBuildup[] = Array.isArray(buildups) ? buildups : [buildups as EditorBuildup];
  if (!Array.isArray(ctx.calibrationTies)) throw new ModelError('calibration', 'ties must be a list');
  if (ctx.verticalDomain !== 'twt_ms' && ctx.verticalDomain !== 'depth_m')
    throw new ModelError('verticalDomain', `must be "twt_ms" or "depth_m"`);
  const out: InterpretationBuildupInput[] = list.map((b, bi) => {
    const issues = measurabilityIssues(b, ctx.calibrationTies);
    if (issues.length) {
      const [path, ...rest] = issues[0].split(': ');
      throw new ModelError(`buildups[${bi}].${path}`, rest.join(': '));
    }
    return {
      name: b.name,
      base: copyLine(b.base),
      cycles: measurableCycles(b).map((c, i) => {
        const ci: InterpretationCycleInput = {
          index: i + 1,
          top: copyLine(c.top),
          marginLeft: copyPt(c.marginLeft!),
          marginRight: copyPt(c.marginRight!),
        };
        if (hasLength(c.flankLeft)) ci.flankLeft = copyLine(c.flankLeft!);
        if (hasLength(c.flankRight)) ci.flankRight = copyLine(c.flankRight!);
        if (c.ageTopMa !== null) ci.ageTopMa = c.ageTopMa;
        if (c.systemsTract) ci.systemsTract = c.systemsTract; // labels the cycle in the Ledger and the exports
        return ci;
      }),
      terminations: b.terminations.map((t) => ({ type: t.type, at: copyPt(t.at) })),
      topIsDrowningSurface: b.topIsDrowningSurface,
    };
  });
  return {
    format: 'cayline.interpretation/1',
    verticalDomain: ctx.verticalDomain,
    coordinates: 'pixels',
    calibration: ctx.calibrationTies.map((t) => ({ px: copyPt(t.px), world: [t.world[0], t.world[1]] })),
    velocity: ctx.velocity,
    buildups: out,
  };
}

// ---------------------------------------------------------------------------
// selection (UI state: never part of history)

/** What is selected inside a buildup/cycle. */
export type SelectedElement =
  | { kind: 'base' | 'top' | 'flankLeft' | 'flankRight'; vertex?: number }
  | { kind: 'marginLeft' | 'marginRight' }
  | { kind: 'termination'; terminationId: string };

export interface Selection {
  buildupId: string | null;
  cycleId: string | null;
  element: SelectedElement | null;
}

export const EMPTY_SELECTION: Selection = Object.freeze({ buildupId: null, cycleId: null, element: null }) as Selection;

/**
 * Drop the parts of a selection that no longer exist in `state` (after an
 * undo, a delete or a load). Returns the same object when all of it exists.
 */
export function reconcileSelection(sel: Selection, state: EditorState): Selection {
  if (sel.buildupId === null) return sel.cycleId === null && sel.element === null ? sel : EMPTY_SELECTION;
  const b = state.buildups.find((x) => x.id === sel.buildupId);
  if (!b) return EMPTY_SELECTION;
  let cycle: EditorCycle | undefined;
  if (sel.cycleId !== null) {
    cycle = b.cycles.find((c) => c.id === sel.cycleId);
    if (!cycle) return { buildupId: b.id, cycleId: null, element: null };
  }
  const el = sel.element;
  if (!el) return sel;
  const drop = (): Selection => ({ ...sel, element: null });
  switch (el.kind) {
    case 'base':
      return el.vertex !== undefined && el.vertex >= b.base.length ? { ...sel, element: { kind: 'base' } } : sel;
    case 'termination':
      return b.terminations.some((t) => t.id === el.terminationId) ? sel : drop();
    case 'top':
    case 'flankLeft':
    case 'flankRight': {
      if (!cycle) return drop();
      const line = cycle[el.kind];
      if (!line) return drop();
      return el.vertex !== undefined && el.vertex >= line.length ? { ...sel, element: { kind: el.kind } } : sel;
    }
    case 'marginLeft':
    case 'marginRight':
      return cycle && cycle[el.kind] ? sel : drop();
  }
}
