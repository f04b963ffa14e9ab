/**
 * The growth forward model on the interpret page: the parameter draft, runs,
 * drowning-threshold sweeps and fits in a Web Worker (forward-model.worker.ts)
 * with progress and Cancel, the modelled surfaces for the overlay, the
 * interpreted-versus-modelled rows, and the buildup's saved runs.
 *
 * One job at a time: a new job or Cancel terminates the worker (a run cannot
 * be interrupted any other way without blocking it) and the next job starts a
 * fresh one. Where `Worker` is undefined (unit tests) jobs run synchronously.
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/vue-query';
import { computed, onScopeDispose, ref, shallowRef, toValue, watch, type MaybeRefOrGetter } from 'vue';
import type { ThresholdParameter, ThresholdResult } from '../../shared/forward-model/index';
import type { EditorBuildup, MeasureContext } from '../../shared/editor/model';
import type { MeasurementOutput } from '../../shared/measure/index';
import type { ForwardModelParamsInput } from '../../shared/schemas/forward-model';
import { createModelRun, deleteModelRun, getModelRun, listModelRuns } from '../api/modelRuns';
import {
  DraftError,
  defaultDraft,
  draftToParams,
  overlayLines,
  paramsToDraft,
  sideBySide,
  summaryOf,
  tracedGeometry,
  type FieldIssue,
  type ModelDraft,
  type OverlayLine,
} from '../components/model/modelSetup';
import { answerModelRequest, type FitOutcome, type ModelReply, type ModelRequest, type ModelResult, type RunOutcome } from './forward-model.worker';

type Job = ModelRequest extends infer R ? (R extends { id: number } ? Omit<R, 'id'> : never) : never;

/** What the runner needs of a Worker (a real one in the browser; a fake in tests). */
export interface ModelWorkerLike {
  postMessage(message: ModelRequest): void;
  terminate(): void;
  onmessage: ((e: { data: ModelReply }) => void) | null;
  onerror: ((e: { message?: string }) => void) | null;
}

export class ModelJobCancelled extends Error {
  constructor() {
    super('cancelled');
    this.name = 'ModelJobCancelled';
  }
}

export class ModelJobFailed extends Error {
  constructor(
    message: string,
    public path: string | null,
  ) {
    super(message);
    this.name = 'ModelJobFailed';
  }
}

export interface ModelRunner {
  /** Start a job (cancelling any running one); resolves with its result, rejects with ModelJobCancelled or ModelJobFailed. */
  start(job: Job, onProgress?: (fraction: number) => void): Promise<ModelResult>;
  cancel(): void;
  dispose(): void;
}

export function createModelRunner(spawn: (() => ModelWorkerLike) | null): ModelRunner {
  let worker: ModelWorkerLike | null = null;
  let current: { id: number; resolve(r: ModelResult): void; reject(e: Error): void; onProgress?: (f: number) => void } | null = null;
  let nextId = 1;

  const stop = () => {
    if (!worker) return;
    worker.onmessage = null;
    worker.onerror = null;
    worker.terminate();
    worker = null;
  };
  const settle = (reply: ModelReply) => {
    const job = current;
    if (!job || reply.id !== job.id) return;
    if (reply.type === 'progress') return void job.onProgress?.(reply.fraction);
    current = null;
    if (reply.type === 'done') job.resolve(reply.result);
    else job.reject(new ModelJobFailed(reply.message, reply.path));
  };
  const cancel = () => {
    const job = current;
    current = null;
    stop();
    job?.reject(new ModelJobCancelled());
  };

  return {
    start(job, onProgress) {
      cancel();
      const id = nextId++;
      return new Promise<ModelResult>((resolve, reject) => {
        current = { id, resolve, reject, onProgress };
        const req = { ...job, id } as ModelRequest;
        if (!spawn) {
          // synchronously (no Worker): the answer arrives before this returns
          answerModelRequest(req, settle);
          return;
        }
        worker ??= spawn();
        worker.onmessage = (e) => settle(e.data);
        worker.onerror = (e) => {
          const j = current;
          current = null;
          stop();
          j?.reject(new ModelJobFailed(`The model worker failed: ${e.message ?? 'unknown error'}`, null));
        };
        worker.postMessage(req);
      });
    },
    cancel,
    dispose: cancel,
  };
}

function browserWorker(): (() => ModelWorkerLike) | null {
  if (typeof Worker === 'undefined') return null;
  return () => new Worker(new URL('./forward-model.worker.ts', import.meta.url), { type: 'module' }) as unknown as ModelWorkerLike;
}

/** Vue proxies cannot be posted: plain data. */
const plain = <T>(v: T): T => JSON.parse(JSON.stringify(v)) as T;

export interface ForwardModelArgs {
  buildup: MaybeRefOrGetter<EditorBuildup | null>;
  /** Saved id of the buildup (runs are saved per buildup); null while unsaved. */
  buildupId: MaybeRefOrGetter<number | null>;
  context: MaybeRefOrGetter<MeasureContext | null>;
  /** The interpreted buildup's Readings, for the side-by-side rows. */
  interpreted: MaybeRefOrGetter<MeasurementOutput | null>;
  spawnWorker?: (() => ModelWorkerLike) | null;
}

export type JobKind = ModelResult['kind'];

export function useForwardModel(args: ForwardModelArgs) {
  const runner = createModelRunner(args.spawnWorker === undefined ? browserWorker() : args.spawnWorker);
  onScopeDispose(() => runner.dispose());

  const draft = ref<ModelDraft>(defaultDraft());
  const traced = computed(() => tracedGeometry(toValue(args.buildup), toValue(args.context)));
  const tracedProfile = computed(() => ('profile' in traced.value ? traced.value.profile : null));
  const tracedTops = computed(() => ('tops' in traced.value ? traced.value.tops : null));
  const tracedError = computed(() => ('error' in traced.value ? traced.value.error : null));

  /** The parameters the draft gives now, or the fields it gets wrong. */
  const built = computed<{ params: ForwardModelParamsInput; depthOffsetM: number } | { issues: FieldIssue[] }>(() => {
    try {
      return draftToParams(draft.value, tracedProfile.value);
    } catch (e) {
      if (e instanceof DraftError) return { issues: e.issues };
      return { issues: [{ path: '', message: e instanceof Error ? e.message : String(e) }] };
    }
  });
  const issues = computed(() => ('issues' in built.value ? built.value.issues : []));

  const running = ref<JobKind | null>(null);
  const progress = ref(0);
  const error = ref<string | null>(null);
  const run = shallowRef<RunOutcome | null>(null);
  /** Offset of the run on view (model frame → present depth). */
  const runOffsetM = ref(0);
  const threshold = shallowRef<ThresholdResult | null>(null);
  const fit = shallowRef<Omit<FitOutcome, 'run'> | null>(null);
  const showOverlay = ref(true);

  async function go(kind: JobKind, extra: { parameter?: ThresholdParameter; fitSubsidence?: boolean } = {}): Promise<void> {
    const b = built.value;
    if ('issues' in b) {
      error.value = `Check the parameters: ${b.issues.map((i) => (i.path ? `${i.path}: ${i.message}` : i.message)).join('; ')}`;
      return;
    }
    error.value = null;
    progress.value = 0;
    running.value = kind;
    const params = plain(b.params);
    const offset = b.depthOffsetM;
    let job: Job;
    if (kind === 'run') job = { kind, params };
    else if (kind === 'threshold') job = { kind, params, parameter: extra.parameter ?? 'productionFactor', sweepPoints: 11, tolerance: 1e-3 };
    else {
      const tops = tracedTops.value;
      if (!tops) {
        running.value = null;
        error.value = tracedError.value ?? 'The buildup has no traced tops to fit.';
        return;
      }
      job = { kind, params, tops: tops.map((t) => t.map(([x, z]) => [x, z - offset] as [number, number])), fitSubsidence: extra.fitSubsidence };
    }
    try {
      const r = await runner.start(job, (f) => (progress.value = f));
      if (r.kind === 'run') {
        run.value = r.run;
        runOffsetM.value = offset;
      } else if (r.kind === 'threshold') threshold.value = r.threshold;
      else {
        const { run: fitted, ...rest } = r.fit;
        fit.value = rest;
        run.value = fitted;
        runOffsetM.value = offset;
      }
      progress.value = 1;
    } catch (e) {
      if (!(e instanceof ModelJobCancelled)) error.value = e instanceof Error ? e.message : String(e);
    } finally {
      running.value = null;
    }
  }

  function cancel(): void {
    runner.cancel();
    running.value = null;
    progress.value = 0;
  }

  /** Use the fitted factors (and subsidence) in the draft. */
  function adoptFit(): void {
    const f = fit.value;
    if (!f) return;
    draft.value = {
      ...draft.value,
      factors: f.factors.map((v) => Number(v.toFixed(4))).join(', '),
      ...(f.subsidenceMPerMyr != null ? { subsidenceKind: 'constant' as const, subsidenceRateMPerMyr: Number(f.subsidenceMPerMyr.toFixed(2)) } : {}),
    };
  }

  const overlay = computed<OverlayLine[]>(() => {
    const r = run.value;
    const ctx = toValue(args.context);
    if (!r || !ctx || !showOverlay.value) return [];
    try {
      return overlayLines(r.interpretation, runOffsetM.value, ctx);
    } catch {
      return [];
    }
  });
  const rows = computed(() => sideBySide(toValue(args.interpreted), run.value?.measurement ?? null));

  // a different buildup: its own runs; results of the previous one go
  watch(
    () => toValue(args.buildupId),
    () => {
      cancel();
      run.value = null;
      threshold.value = null;
      fit.value = null;
      error.value = null;
    },
  );

  // ---- saved runs --------------------------------------------------------------
  const qc = useQueryClient();
  const key = computed(() => ['model-runs', toValue(args.buildupId) ?? 0] as const);
  const saved = useQuery({
    queryKey: key,
    queryFn: ({ signal }) => listModelRuns(toValue(args.buildupId)!, signal),
    enabled: computed(() => (toValue(args.buildupId) ?? 0) > 0),
  });
  const save = useMutation({
    mutationFn: async (name: string) => {
      const id = toValue(args.buildupId);
      const r = run.value;
      const b = built.value;
      if (!id) throw new Error('Save the buildup first: runs are kept per saved buildup.');
      if (!r) throw new Error('Run the model first.');
      if ('issues' in b) throw new Error('Check the parameters first.');
      return createModelRun(id, { name, params: plain(b.params) as Record<string, unknown>, profileSource: draft.value.profileSource, depthOffsetM: b.depthOffsetM, summary: summaryOf(r, threshold.value, fit.value) });
    },
    onSuccess: () => qc.invalidateQueries({ queryKey: key.value }),
  });
  const remove = useMutation({
    mutationFn: (runId: number) => deleteModelRun(runId),
    onSuccess: () => qc.invalidateQueries({ queryKey: key.value }),
  });
  /** Load a saved run's parameters into the editor and run it again (runs are deterministic). */
  async function open(runId: number): Promise<void> {
    const d = await getModelRun(runId);
    draft.value = paramsToDraft(d.params as ForwardModelParamsInput, d.depthOffsetM, d.profileSource, { ...defaultDraft(), name: d.name });
    threshold.value = null;
    fit.value = null;
    await go('run');
  }

  return {
    draft,
    tracedProfile,
    tracedTops,
    tracedError,
    built,
    issues,
    running,
    progress,
    error,
    run,
    threshold,
    fit,
    showOverlay,
    overlay,
    rows,
    go,
    cancel,
    adoptFit,
    saved,
    save,
    remove,
    open,
  };
}

export type ForwardModelState = ReturnType<typeof useForwardModel>;
