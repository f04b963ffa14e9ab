/**
 * What the overlays draw, computed from the plain editor records: line specs,
 * Margin pins, Termination stamps, margin trajectories and flank-angle
 * labels. Pure functions (no Konva), unit-tested.
 */
import type { BuildupMeasurement, MeasurementOutput } from '../../../shared/measure/index';
import type { PolylineTarget } from '../actions';
import { targetKey } from '../actions';
import { isCycleComplete, type EditorBuildup, type Pt, type Selection, type Side, type TerminationType } from '../model';
import { BASE_COLOUR, CANVAS_LIGHT_GREY, cycleColour } from '../palette';
import { flatPoints, lodPoints } from './draw';

export interface LineSpec {
  key: string;
  target: PolylineTarget;
  points: number[];
  stroke: string;
  strokeWidth: number;
  dash?: number[];
  /** A coral band under the line: the youngest top marked as a drowning unconformity. */
  drowning?: boolean;
}

export interface PinSpec {
  key: string;
  at: Pt;
  side: Side;
  colour: string;
  selected: boolean;
}

export interface StampSpec {
  key: string;
  at: Pt;
  type: TerminationType;
  from: Side;
  selected: boolean;
}

export interface LabelSpec {
  key: string;
  at: Pt;
  text: string;
  colour: string;
  /** Which side of the anchor the text goes. */
  side: Side;
}

/** Shared (not re-created) so Konva sees an unchanged dash. */
export const FLANK_DASH: number[] = [9, 5];

export const cycleCanvasColour = (index0: number) => cycleColour(index0, 'canvas');

/** The polyline the selection points at, if any. */
export function selectedTarget(sel: Selection): PolylineTarget | null {
  const el = sel.element;
  if (!sel.buildupId || !el) return null;
  if (el.kind === 'base') return { buildupId: sel.buildupId, kind: 'base' };
  if ((el.kind === 'top' || el.kind === 'flankLeft' || el.kind === 'flankRight') && sel.cycleId)
    return { buildupId: sel.buildupId, cycleId: sel.cycleId, kind: el.kind };
  return null;
}

/**
 * Line spec of one polyline (any, selected or not). `bucket` > 1 draws a
 * level of detail for zoomed-out views (see lodPoints); the selected line
 * keeps every vertex.
 */
export function lineSpec(b: EditorBuildup, target: PolylineTarget, bucket = 1): LineSpec | null {
  const flat = (pts: readonly Pt[]) => (bucket > 1 ? lodPoints(pts, bucket) : flatPoints(pts));
  if (target.kind === 'base') {
    if (b.base.length < 2) return null;
    return { key: targetKey(target), target, points: flat(b.base), stroke: BASE_COLOUR.canvas, strokeWidth: 2 };
  }
  const i = b.cycles.findIndex((c) => c.id === target.cycleId);
  if (i < 0) return null;
  const c = b.cycles[i];
  const pts = c[target.kind];
  if (!pts || pts.length < 2) return null;
  const colour = cycleCanvasColour(i);
  if (target.kind === 'top') {
    const spec: LineSpec = { key: targetKey(target), target, points: flat(pts), stroke: colour, strokeWidth: 2 };
    if (b.topIsDrowningSurface && i === b.cycles.length - 1) spec.drowning = true;
    return spec;
  }
  return { key: targetKey(target), target, points: flat(pts), stroke: colour, strokeWidth: 1.6, dash: FLANK_DASH };
}

/** Every line except `skip` (the selected one, drawn on the selection layer). */
export function staticLines(buildups: readonly EditorBuildup[], skip: PolylineTarget | null, bucket = 1): LineSpec[] {
  const skipKey = skip ? targetKey(skip) : null;
  const out: LineSpec[] = [];
  const push = (b: EditorBuildup, t: PolylineTarget) => {
    if (skipKey !== null && targetKey(t) === skipKey) return;
    const s = lineSpec(b, t, bucket);
    if (s) out.push(s);
  };
  for (const b of buildups) {
    push(b, { buildupId: b.id, kind: 'base' });
    for (const c of b.cycles) {
      push(b, { buildupId: b.id, cycleId: c.id, kind: 'flankLeft' });
      push(b, { buildupId: b.id, cycleId: c.id, kind: 'flankRight' });
      push(b, { buildupId: b.id, cycleId: c.id, kind: 'top' });
    }
  }
  return out;
}

/**
 * Margin trajectories: per buildup and side, a line through the successive
 * Margin pins from the oldest cycle to the youngest (cycles without that pin
 * are skipped); only where 2+ pins exist.
 */
export function trajectoryLines(buildups: readonly EditorBuildup[]): { key: string; points: number[]; side: Side }[] {
  const out: { key: string; points: number[]; side: Side }[] = [];
  for (const b of buildups)
    for (const side of ['left', 'right'] as const) {
      const pins = b.cycles.map((c) => (side === 'left' ? c.marginLeft : c.marginRight)).filter((p): p is Pt => p !== null);
      if (pins.length >= 2) out.push({ key: `${b.id}/${side}`, points: pins.flat(), side });
    }
  return out;
}

export const TRAJECTORY_COLOUR = CANVAS_LIGHT_GREY;

/** u of a buildup's middle (base extent, else tops); NaN when nothing is traced. */
export function buildupCentreU(b: EditorBuildup): number {
  const pts = b.base.length ? b.base : b.cycles.flatMap((c) => c.top);
  if (!pts.length) return NaN;
  let lo = Infinity, hi = -Infinity;
  for (const p of pts) {
    if (p[0] < lo) lo = p[0];
    if (p[0] > hi) hi = p[0];
  }
  return (lo + hi) / 2;
}

export function pinsOf(buildups: readonly EditorBuildup[], sel: Selection): PinSpec[] {
  const out: PinSpec[] = [];
  for (const b of buildups)
    b.cycles.forEach((c, i) => {
      for (const side of ['left', 'right'] as const) {
        const at = side === 'left' ? c.marginLeft : c.marginRight;
        if (!at) continue;
        const selected = sel.buildupId === b.id && sel.cycleId === c.id && sel.element?.kind === (side === 'left' ? 'marginLeft' : 'marginRight');
        out.push({ key: `${b.id}/${c.id}/${side}`, at, side, colour: cycleCanvasColour(i), selected });
      }
    });
  return out;
}

/**
 * Termination stamps. A stamp on the left of its buildup's middle comes in
 * from the left (the basin side) and points right at the termination, and
 * the other way round.
 */
export function stampsOf(buildups: readonly EditorBuildup[], sel: Selection): StampSpec[] {
  const out: StampSpec[] = [];
  for (const b of buildups) {
    const mid = buildupCentreU(b);
    for (const t of b.terminations) {
      const selected = sel.buildupId === b.id && sel.element?.kind === 'termination' && sel.element.terminationId === t.id;
      out.push({ key: `${b.id}/${t.id}`, at: t.at, type: t.type, from: Number.isFinite(mid) && t.at[0] > mid ? 'right' : 'left', selected });
    }
  }
  return out;
}

/** The middle point of a polyline by length. */
export function midpointOf(pts: readonly Pt[]): Pt {
  if (pts.length === 1) return [pts[0][0], pts[0][1]];
  let total = 0;
  for (let i = 1; i < pts.length; i++) total += Math.hypot(pts[i][0] - pts[i - 1][0], pts[i][1] - pts[i - 1][1]);
  let half = total / 2;
  for (let i = 1; i < pts.length; i++) {
    const seg = Math.hypot(pts[i][0] - pts[i - 1][0], pts[i][1] - pts[i - 1][1]);
    if (half <= seg && seg > 0) {
      const t = half / seg;
      return [pts[i - 1][0] + t * (pts[i][0] - pts[i - 1][0]), pts[i - 1][1] + t * (pts[i][1] - pts[i - 1][1])];
    }
    half -= seg;
  }
  const last = pts[pts.length - 1];
  return [last[0], last[1]];
}

/** The engine's result for an editor buildup: matched by name (the engine reports names), else by position. */
export function measurementFor(m: MeasurementOutput | null | undefined, b: EditorBuildup, position: number): BuildupMeasurement | null {
  if (!m) return null;
  return m.buildups.find((x) => x.name === b.name) ?? (m.buildups.length === 1 && position === 0 ? m.buildups[0] : null);
}

/**
 * Flank-angle labels (TRUE angles in degrees, from the engine's latest
 * output) at the middle of each traced flank. The engine numbers only the
 * complete cycles, so they are matched to the editor's cycles in that order.
 */
export function flankLabels(buildups: readonly EditorBuildup[], m: MeasurementOutput | null | undefined, fmt = (deg: number) => `${deg.toFixed(1)}°`): LabelSpec[] {
  const out: LabelSpec[] = [];
  buildups.forEach((b, bi) => {
    const bm = measurementFor(m, b, bi);
    if (!bm) return;
    let k = 0;
    b.cycles.forEach((c, i) => {
      if (!isCycleComplete(c)) return;
      const cm = bm.cycles[k++];
      if (!cm) return;
      for (const side of ['left', 'right'] as const) {
        const pts = side === 'left' ? c.flankLeft : c.flankRight;
        const deg = cm[side].flankAngleDeg;
        if (!pts || pts.length < 2 || deg === null || !Number.isFinite(deg)) continue;
        out.push({ key: `${b.id}/${c.id}/${side}`, at: midpointOf(pts), text: fmt(deg), colour: cycleCanvasColour(i), side });
      }
    });
  });
  return out;
}
