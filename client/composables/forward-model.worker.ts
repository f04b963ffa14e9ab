/**
 * Web Worker of the growth forward model (shared/forward-model): a run, the
 * drowning-threshold sweep or the fit to the traced tops, off the page's main
 * thread. useForwardModel.ts starts it with
 * `new Worker(new URL('./forward-model.worker.ts', import.meta.url), { type: 'module' })`
 * and cancels by terminating it.
 *
 * Protocol: one request `{ id, kind, … }` in; any number of
 * `{ id, type: 'progress', fraction }` (at most one per percent), then one
 * `{ id, type: 'done', result }` or `{ id, type: 'error', message, path }`.
 * `answerModelRequest` is the whole protocol as a plain function, so it is
 * tested without a Worker (and used directly where `Worker` is undefined).
 */
import {
  drowningThreshold,
  fitProductionFactors,
  runForwardModel,
  runToInterpretation,
  type FitResult,
  type ModelInterpretation,
  type ModelRun,
  type ThresholdParameter,
  type ThresholdResult,
} from '../../shared/forward-model/index';
import { measure, type MeasurementOutput } from '../../shared/measure/index';
import { MeasureInputError } from '../../shared/measure/errors';

export type ModelRequest =
  | { id: number; kind: 'run'; params: unknown }
  | { id: number; kind: 'threshold'; params: unknown; parameter: ThresholdParameter; lo?: number; hi?: number; sweepPoints?: number; /** Bracket width at which the bisection stops, as a fraction of the range (default 1e-4). */ tolerance?: number }
  | { id: number; kind: 'fit'; params: unknown; tops: [number, number][][]; fitSubsidence?: boolean };

/** A run as plain data (arrays instead of Float64Arrays), with its engine input and the engine's measurement of it. */
export interface RunOutcome {
  xs: number[];
  base: number[];
  surfaces: number[][];
  boundaryTimesYr: number[];
  factors: number[];
  seaZAtBoundaries: number[];
  crestWaterDepthM: number;
  drowningDepthM: number;
  drowned: boolean;
  steps: number;
  /** The modelled surfaces as the engine's input (depth domain, the model's frame). */
  interpretation: ModelInterpretation;
  measurement: MeasurementOutput | null;
  /** Why the engine could not measure the modelled surfaces, when it could not. */
  measureError: string | null;
}

export type FitOutcome = Omit<FitResult, 'run'> & { run: RunOutcome };

export type ModelResult = { kind: 'run'; run: RunOutcome } | { kind: 'threshold'; threshold: ThresholdResult } | { kind: 'fit'; fit: FitOutcome };

export type ModelReply =
  | { id: number; type: 'progress'; fraction: number }
  | { id: number; type: 'done'; result: ModelResult }
  | { id: number; type: 'error'; message: string; path: string | null };

/** The run as plain data, measured by the engine. */
export function runOutcome(run: ModelRun): RunOutcome {
  const interpretation = runToInterpretation(run);
  let measurement: MeasurementOutput | null = null;
  let measureError: string | null = null;
  try {
    measurement = measure(interpretation);
  } catch (e) {
    measureError = e instanceof Error ? e.message : String(e);
  }
  return {
    xs: Array.from(run.xs),
    base: Array.from(run.base),
    surfaces: run.surfaces.map((s) => Array.from(s)),
    boundaryTimesYr: run.boundaryTimesYr,
    factors: run.factors,
    seaZAtBoundaries: run.seaZAtBoundaries,
    crestWaterDepthM: run.crestWaterDepthM,
    drowningDepthM: run.drowningDepthM,
    drowned: run.drowned,
    steps: run.steps,
    interpretation,
    measurement,
    measureError,
  };
}

/** Answer one request; `post` receives the progress messages and the final reply. Never throws. */
export function answerModelRequest(req: ModelRequest, post: (r: ModelReply) => void): void {
  let lastPct = -1;
  const onProgress = (fraction: number) => {
    const pct = Math.floor(fraction * 100);
    if (pct > lastPct) {
      lastPct = pct;
      post({ id: req.id, type: 'progress', fraction });
    }
  };
  try {
    let result: ModelResult;
    if (req.kind === 'run') result = { kind: 'run', run: runOutcome(runForwardModel(req.params, { onProgress })) };
    else if (req.kind === 'threshold')
      result = { kind: 'threshold', threshold: drowningThreshold(req.params, { parameter: req.parameter, lo: req.lo, hi: req.hi, sweepPoints: req.sweepPoints ?? 11, onProgress, relativeTolerance: req.tolerance }) };
    else {
      const { run, ...fit } = fitProductionFactors(req.params, req.tops, { fitSubsidence: req.fitSubsidence, onProgress });
      result = { kind: 'fit', fit: { ...fit, run: runOutcome(run) } };
    }
    post({ id: req.id, type: 'done', result });
  } catch (e) {
    post({ id: req.id, type: 'error', message: e instanceof Error ? e.message : String(e), path: e instanceof MeasureInputError ? (e.path ?? null) : null });
  }
}

interface WorkerScope {
  onmessage: ((e: MessageEvent<ModelRequest>) => void) | null;
  postMessage(message: ModelReply): void;
}

// Inside a worker only (module workers have WorkerGlobalScope; the page and node do not run this).
const g = globalThis as unknown as { WorkerGlobalScope?: abstract new () => unknown };
if (typeof g.WorkerGlobalScope === 'function' && globalThis instanceof g.WorkerGlobalScope) {
  const scope = globalThis as unknown as WorkerScope;
  scope.onmessage = (e) => answerModelRequest(e.data, (r) => scope.postMessage(r));
}
