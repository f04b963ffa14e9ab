/**
 * Messages between the page and the trace-assist Web Worker
 * (traceAssist.worker.ts), and `answerAssist`, the whole computation as a
 * plain function over an AmplitudeSource (the worker's tiles, or an
 * in-memory image in tests).
 */
import { autoExtend, type ExtendOptions, type ExtendStop } from '../../../shared/trace-assist/extend';
import { defaultCorridor, leastCostPath, type PathOptions, type Pt } from '../../../shared/trace-assist/path';
import { snapPolyline } from '../../../shared/trace-assist/snap';
import type { AmplitudeSource, Phase, Polarity } from '../../../shared/trace-assist/source';
import { THIN_TOLERANCE_PX, thinPath, tidyPath } from '../../../shared/trace-assist/thin';

/** Pixel rectangle `[x0, x1) × [y0, y1)`. */
export interface PxRect {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

export type AssistTask =
  | { kind: 'path'; from: Pt; to: Pt; phase: Phase; options?: PathOptions; tolerancePx?: number }
  | { kind: 'extend'; seed: Pt; phase: Phase; options?: ExtendOptions; tolerancePx?: number }
  | { kind: 'snap'; points: Pt[]; phase: Phase; radiusPx?: number };

export type AssistResult =
  | { kind: 'path'; points: Pt[]; meanScore: number; raw: number }
  | { kind: 'extend'; points: Pt[]; stops: ExtendStop[]; raw: number }
  | { kind: 'snap'; points: Pt[]; moved: number };

export type AssistRequest =
  | { type: 'section'; key: string; width: number; height: number; tileSpan: number; polarity: Polarity }
  | { type: 'tile'; key: string; col: number; row: number; x: number; y: number; width: number; height: number; bitmap: ImageBitmap }
  /** A block of a SEG-Y section's true amplitudes (row-major: rows are samples, columns traces). */
  | { type: 'amplitudes'; key: string; col: number; row: number; x: number; y: number; width: number; height: number; values: Float32Array }
  | { type: 'task'; id: number; task: AssistTask };

export type AssistReply =
  | { type: 'result'; id: number; ok: true; result: AssistResult; missing: PxRect[] }
  | { type: 'result'; id: number; ok: false; message: string };

/** Pixels (inside the image) that read NaN in `rect`: the rectangle's parts whose tiles are missing. */
export function missingIn(src: AmplitudeSource, rect: PxRect): boolean {
  const x0 = Math.max(0, Math.floor(rect.x0));
  const y0 = Math.max(0, Math.floor(rect.y0));
  const x1 = Math.min(src.width, Math.ceil(rect.x1));
  const y1 = Math.min(src.height, Math.ceil(rect.y1));
  if (x1 <= x0 || y1 <= y0) return false;
  const p = src.readPatch(x0, y0, x1 - x0, y1 - y0);
  for (let i = 0; i < (x1 - x0) * (y1 - y0); i++) if (p[i] !== p[i]) return true;
  return false;
}

/** The pixels a task needs at least (the corridor of a path, the seed's neighbourhood, each vertex's reach). */
export function taskRect(task: AssistTask): PxRect {
  if (task.kind === 'path') {
    const c = (task.options?.corridorPx ?? defaultCorridor(Math.hypot(task.to[0] - task.from[0], task.to[1] - task.from[1]))) + 8;
    return {
      x0: Math.min(task.from[0], task.to[0]) - c,
      x1: Math.max(task.from[0], task.to[0]) + c,
      y0: Math.min(task.from[1], task.to[1]) - c,
      y1: Math.max(task.from[1], task.to[1]) + c,
    };
  }
  if (task.kind === 'extend') return { x0: task.seed[0] - 128, x1: task.seed[0] + 128, y0: task.seed[1] - 64, y1: task.seed[1] + 64 };
  let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
  for (const p of task.points) {
    x0 = Math.min(x0, p[0]);
    x1 = Math.max(x1, p[0]);
    y0 = Math.min(y0, p[1]);
    y1 = Math.max(y1, p[1]);
  }
  const r = (task.radiusPx ?? 4) + 34;
  return { x0: x0 - 17, x1: x1 + 17, y0: y0 - r, y1: y1 + r };
}

/**
 * Run one task. `missing` lists rectangles the answer would have liked to
 * see but whose tiles were not loaded (an auto-extend that stopped next to
 * missing tiles): the caller loads them and asks again.
 */
export function answerAssist(src: AmplitudeSource, task: AssistTask): { result: AssistResult; missing: PxRect[] } {
  const tol = task.kind === 'snap' ? 0 : (task.tolerancePx ?? THIN_TOLERANCE_PX);
  if (task.kind === 'path') {
    const r = leastCostPath(src, task.from, task.to, { ...task.options, phase: task.phase });
    const thin = tidyPath(thinPath(r.points, tol));
    return { result: { kind: 'path', points: thin, meanScore: r.meanScore, raw: r.points.length }, missing: [] };
  }
  if (task.kind === 'extend') {
    const r = autoExtend(src, task.seed, { ...task.options, phase: task.phase });
    const missing: PxRect[] = [];
    for (const s of [r.stops.left, r.stops.right]) {
      const dir = s.side === 'right' ? 1 : -1;
      const u = Math.floor(s.at[0]) + dir * 2;
      const rect = { x0: u - 1, x1: u + 2, y0: s.at[1] - 24, y1: s.at[1] + 24 };
      if (u >= 0 && u < src.width && missingIn(src, rect)) missing.push({ x0: u - 256, x1: u + 256, y0: s.at[1] - 256, y1: s.at[1] + 256 });
    }
    const thin = tidyPath(thinPath(r.points, tol));
    return { result: { kind: 'extend', points: thin, stops: [r.stops.left, r.stops.right], raw: r.points.length }, missing };
  }
  const r = snapPolyline(src, task.points, { phase: task.phase, radiusPx: task.radiusPx });
  return { result: { kind: 'snap', points: r.points, moved: r.moved }, missing: [] };
}
