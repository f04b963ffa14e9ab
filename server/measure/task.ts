/**
 * The task a measurement worker runs, and the reply it posts back. Errors do
 * not survive the thread boundary as their classes (structured clone keeps
 * only message and stack), so the worker answers with a plain description and
 * `reviveError` rebuilds a `MeasureInputError` with its path and issues on the
 * caller's side.
 */
import { measure, MeasureInputError, type MeasurementOutput } from '../../shared/measure/index';
import { depthProfilesOf } from '../../shared/analogue-shape';
import type { DepthProfile } from '../../shared/schemas/analogues';

export interface MeasureTask {
  input: unknown;
  options?: unknown;
  /** Also return each buildup's depth profile (base, tops, envelope in metres; Analogue library promotion). */
  profiles?: boolean;
}

export type MeasureReply =
  | { ok: true; output: MeasurementOutput; profiles?: DepthProfile[] }
  | { ok: false; error: { kind: 'input'; name: string; path: string; message: string; issues: string[] } | { kind: 'other'; name: string; message: string; stack?: string } };

/** Run the engine on one task; never throws. */
export function runMeasureTask(task: MeasureTask): MeasureReply {
  try {
    const output = measure(task.input, task.options);
    return task.profiles ? { ok: true, output, profiles: depthProfilesOf(task.input) } : { ok: true, output };
  } catch (e) {
    if (e instanceof MeasureInputError) {
      // the message is `path: detail`; keep the detail so the rebuilt error has the same message
      const detail = e.path && e.message.startsWith(`${e.path}: `) ? e.message.slice(e.path.length + 2) : e.message;
      return { ok: false, error: { kind: 'input', name: e.name, path: e.path, message: detail, issues: e.issues } };
    }
    const err = e instanceof Error ? e : new Error(String(e));
    return { ok: false, error: { kind: 'other', name: err.name, message: err.message, stack: err.stack } };
  }
}

/** The error a failed reply stands for: a MeasureInputError (same path, message and issues) or a plain Error. */
export function reviveError(error: Extract<MeasureReply, { ok: false }>['error']): Error {
  if (error.kind === 'input') {
    const e = new MeasureInputError(error.path, error.message, error.issues);
    e.name = error.name;
    return e;
  }
  const e = new Error(error.message);
  e.name = error.name;
  if (error.stack) e.stack = error.stack;
  return e;
}
