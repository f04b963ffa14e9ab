/**
 * Web Worker of the live Readings: runs the shared measurement engine off the
 * page's main thread (client/composables/useLiveReadings.ts starts it with
 * `new Worker(new URL('./readings.worker.ts', import.meta.url), { type: 'module' })`).
 *
 * Protocol: one request `{ id, input, options }` in, one reply
 * `{ id, ok: true, output }` or `{ id, ok: false, message }` out, in order.
 * `answerReadingsRequest` is the whole protocol as a plain function, so it can
 * be tested without a Worker.
 */
import { measure, type MeasurementOutput } from '../../shared/measure/index';

export interface ReadingsRequest {
  id: number;
  input: unknown;
  options?: unknown;
}

export type ReadingsReply = { id: number; ok: true; output: MeasurementOutput } | { id: number; ok: false; message: string };

/** Measure one request; never throws (a refusal is `{ ok: false, message }` with the engine's `path: reason` text). */
export function answerReadingsRequest(req: ReadingsRequest): ReadingsReply {
  try {
    return { id: req.id, ok: true, output: measure(req.input, req.options) };
  } catch (e) {
    return { id: req.id, ok: false, message: e instanceof Error ? e.message : String(e) };
  }
}

interface WorkerScope {
  onmessage: ((e: MessageEvent<ReadingsRequest>) => void) | null;
  postMessage(message: ReadingsReply): void;
}

// Inside a worker only (module workers have WorkerGlobalScope; the page and node do not run this).
const g = globalThis as unknown as { WorkerGlobalScope?: abstract new () => unknown };
if (typeof g.WorkerGlobalScope === 'function' && globalThis instanceof g.WorkerGlobalScope) {
  const scope = globalThis as unknown as WorkerScope;
  scope.onmessage = (e) => scope.postMessage(answerReadingsRequest(e.data));
}
