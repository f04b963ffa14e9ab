/**
 * Live Readings: the shared measurement engine run in the browser on every
 * edit of the selected buildup, debounced and kept cheap.
 *
 * Two passes after an edit:
 * - quick (after `quickDelayMs` of quiet, default 150 ms): the deterministic
 *   numbers with the mode velocities — no Monte Carlo, so `ranges` are null;
 * - full (after a further `fullDelayMs` of quiet, default 600 ms, and only
 *   when nothing is `busy`, e.g. a drag in progress): the whole output with
 *   the P90/P50/P10 ranges. Skipped when no velocity is a range.
 *
 * The engine runs in a Web Worker (readings.worker.ts) so the page never
 * blocks; the newest request wins: a result that arrives after a newer pass
 * was asked for is dropped, at most one request waits behind the running
 * one, and a running full pass is abandoned (worker restarted) when a newer
 * pass is asked for. Where `Worker` does not exist (node, the unit tests) the
 * passes run synchronously.
 *
 * `compareWithServer(local, server)` (serverCompare.ts, re-exported here)
 * checks the browser's numbers against the server's for the same saved
 * geometry ("confirmed by the server").
 */
import { computed, onScopeDispose, shallowRef, toValue, watch, type MaybeRefOrGetter, type Ref, type ShallowRef } from 'vue';
import {
  isCycleComplete,
  measurabilityIssues,
  toInterpretationInput,
  type EditorBuildup,
  type MeasureContext,
} from '../../shared/editor/model';
import { hasRanges, measure, modeOf, type InterpretationInput, type MeasureOptionsInput, type MeasurementOutput } from '../../shared/measure/index';
import type { ReadingsReply, ReadingsRequest } from './readings.worker';

// ---------------------------------------------------------------------------
// scheduling (pure: timers are injected so tests can drive them)

export type PassMode = 'quick' | 'full';
export type SchedulerState = 'idle' | 'quickPending' | 'fullPending';

export interface TimerApi {
  setTimeout(fn: () => void, ms: number): unknown;
  clearTimeout(handle: unknown): void;
}

export interface SchedulerOptions {
  /** Quiet time after the last edit before the quick pass (ms). */
  quickDelayMs?: number;
  /** Further quiet time after the quick pass before the full pass (ms). */
  fullDelayMs?: number;
  /** Run a pass. */
  run: (mode: PassMode) => void;
  /** Whether a full pass is worth running after the quick one (e.g. the velocity has ranges). */
  needsFull?: () => boolean;
  /** While true the full pass waits (checked again every `fullDelayMs`). */
  isBusy?: () => boolean;
  onState?: (s: SchedulerState) => void;
  timers?: TimerApi;
}

export interface ReadingsScheduler {
  /** Something changed: restart the wait. `immediate` runs the quick pass now. */
  touch(immediate?: boolean): void;
  /** Run the pending pass(es) now: quick then, when needed, full. */
  flush(): void;
  /** Forget pending passes. */
  cancel(): void;
  readonly state: SchedulerState;
}

export const QUICK_DELAY_MS = 150;
export const FULL_DELAY_MS = 600;

const realTimers: TimerApi = {
  setTimeout: (fn, ms) => globalThis.setTimeout(fn, ms),
  clearTimeout: (h) => globalThis.clearTimeout(h as ReturnType<typeof setTimeout>),
};

/** The debounce of live Readings: quick pass after quiet, full pass after more quiet and no drag. */
export function createReadingsScheduler(o: SchedulerOptions): ReadingsScheduler {
  const quickDelay = o.quickDelayMs ?? QUICK_DELAY_MS;
  const fullDelay = o.fullDelayMs ?? FULL_DELAY_MS;
  const timers = o.timers ?? realTimers;
  let handle: unknown = null;
  let state: SchedulerState = 'idle';

  const setState = (s: SchedulerState) => {
    if (s === state) return;
    state = s;
    o.onState?.(s);
  };
  const clear = () => {
    if (handle !== null) timers.clearTimeout(handle);
    handle = null;
  };
  const full = () => {
    handle = null;
    if (o.isBusy?.()) {
      handle = timers.setTimeout(full, fullDelay);
      return;
    }
    setState('idle');
    o.run('full');
  };
  const quick = () => {
    handle = null;
    o.run('quick');
    if (o.needsFull?.() ?? true) {
      setState('fullPending');
      handle = timers.setTimeout(full, fullDelay);
    } else setState('idle');
  };

  return {
    touch(immediate = false) {
      clear();
      if (immediate) {
        setState('quickPending');
        quick();
        return;
      }
      setState('quickPending');
      handle = timers.setTimeout(quick, quickDelay);
    },
    flush() {
      if (state === 'idle') return;
      const wasQuick = state === 'quickPending';
      clear();
      if (wasQuick) o.run('quick');
      if (!wasQuick || (o.needsFull?.() ?? true)) o.run('full');
      setState('idle');
    },
    cancel() {
      clear();
      setState('idle');
    },
    get state() {
      return state;
    },
  };
}

// ---------------------------------------------------------------------------
// what is missing (for the Readings checklist)

/**
 * Cycles that are not complete yet and are therefore left out of the
 * measurement, as `cycles[i].<part>: <what is missing>` strings (0-based i).
 */
export function incompleteCycleNotes(b: EditorBuildup): string[] {
  const notes: string[] = [];
  b.cycles.forEach((c, i) => {
    if (isCycleComplete(c)) return;
    if (c.top.length < 2) notes.push(`cycles[${i}].top: needs at least 2 points`);
    if (!c.marginLeft && !c.marginRight) notes.push(`cycles[${i}].margins: both Margin pins missing`);
    else if (!c.marginLeft) notes.push(`cycles[${i}].marginLeft: missing`);
    else if (!c.marginRight) notes.push(`cycles[${i}].marginRight: missing`);
  });
  return notes;
}

/** Problems of the measure context itself (no Ties yet, too few Ties). */
export function contextIssues(ctx: MeasureContext | null | undefined): string[] {
  if (!ctx) return ['calibration: the section has no Ties yet'];
  const n = ctx.calibrationTies?.length ?? 0;
  if (n < 3) return [`calibration: needs at least 3 Ties (has ${n})`];
  if (ctx.verticalDomain === 'twt_ms' && !ctx.velocity) return ['velocity: needs a velocity model'];
  return [];
}

// ---------------------------------------------------------------------------
// comparison with the server (serverCompare.ts)

export { compareWithServer, type CompareOptions, type Mismatch } from './serverCompare';

// ---------------------------------------------------------------------------
// the engine in a Web Worker, newest request wins

/** What the runner needs of a Worker (a real one in the browser; a fake in tests). */
export interface WorkerLike {
  postMessage(message: ReadingsRequest): void;
  terminate(): void;
  onmessage: ((e: { data: ReadingsReply }) => void) | null;
  onerror: ((e: { message?: string }) => void) | null;
}

export type RunnerResult = { ok: true; output: MeasurementOutput } | { ok: false; message: string };

export interface LatestRunner {
  /**
   * Measure `input` in the worker. Resolves with the result, or with null when
   * a newer request superseded this one before its result was delivered.
   */
  request(input: unknown, options: unknown, mode: PassMode): Promise<RunnerResult | null>;
  /** Stop the worker; pending requests resolve null. */
  dispose(): void;
}

interface Job {
  id: number;
  input: unknown;
  options: unknown;
  mode: PassMode;
  resolve(r: RunnerResult | null): void;
}

/**
 * One worker, at most one request running and one waiting (the newest):
 * a request that arrives while another waits replaces it (the replaced one
 * resolves null); a running full pass (Monte Carlo) is abandoned by
 * restarting the worker, a running quick pass is short and finishes, but its
 * caller sees null when something newer was asked meanwhile.
 */
export function createLatestRunner(spawn: () => WorkerLike): LatestRunner {
  let worker: WorkerLike | null = null;
  let running: Job | null = null;
  let waiting: Job | null = null;
  let nextId = 1;
  let latestId = 0;

  const stop = () => {
    if (!worker) return;
    worker.onmessage = null;
    worker.onerror = null;
    worker.terminate();
    worker = null;
  };
  const start = (): WorkerLike => {
    const w = spawn();
    w.onmessage = (e) => {
      const job = running;
      if (!job || e.data.id !== job.id) return;
      running = null;
      job.resolve(job.id === latestId ? (e.data.ok ? { ok: true, output: e.data.output } : { ok: false, message: e.data.message }) : null);
      pump();
    };
    w.onerror = (e) => {
      const job = running;
      running = null;
      stop(); // a fresh worker for the next request
      job?.resolve(job.id === latestId ? { ok: false, message: `The measurement worker failed: ${e.message ?? 'unknown error'}` } : null);
      pump();
    };
    return w;
  };
  function pump(): void {
    if (running || !waiting) return;
    running = waiting;
    waiting = null;
    worker ??= start();
    worker.postMessage({ id: running.id, input: running.input, options: running.options });
  }

  return {
    request(input, options, mode) {
      return new Promise((resolve) => {
        const job: Job = { id: nextId++, input, options, mode, resolve };
        latestId = job.id;
        waiting?.resolve(null);
        waiting = job;
        if (running?.mode === 'full') {
          running.resolve(null);
          running = null;
          stop();
        }
        pump();
      });
    },
    dispose() {
      waiting?.resolve(null);
      running?.resolve(null);
      waiting = running = null;
      stop();
    },
  };
}

/** A real Web Worker running readings.worker.ts (Vite bundles it), or null where `Worker` does not exist. */
function browserWorker(): (() => WorkerLike) | null {
  if (typeof Worker === 'undefined') return null;
  return () => new Worker(new URL('./readings.worker.ts', import.meta.url), { type: 'module' }) as unknown as WorkerLike;
}

/**
 * Plain data for `postMessage`, which refuses Vue proxies. The engine input's
 * geometry is already copied by `toInterpretationInput`; the velocity model
 * and the options come from the page's state as they are, and are small JSON.
 */
const plain = <T>(v: T): T => (v === undefined ? v : (JSON.parse(JSON.stringify(v)) as T));

// ---------------------------------------------------------------------------
// the composable

/** What the composable needs of the interpretation store. */
export interface BuildupSource {
  buildupById(id: string): EditorBuildup | undefined;
}

export interface LiveReadingsArgs {
  store: BuildupSource;
  /** Local id of the selected buildup (the store's selection.buildupId), or null. */
  buildupId: MaybeRefOrGetter<string | null | undefined>;
  /** Ties, vertical domain and velocity model of the section; null until calibrated. */
  context: MaybeRefOrGetter<MeasureContext | null | undefined>;
  /** Engine options (thresholds, draws, seed). */
  options?: MaybeRefOrGetter<MeasureOptionsInput | undefined>;
  /** True while a gesture is in progress (drag): the full pass waits. */
  busy?: MaybeRefOrGetter<boolean>;
  quickDelayMs?: number;
  fullDelayMs?: number;
  timers?: TimerApi;
  /**
   * Starts the engine's worker. Default: a Web Worker on readings.worker.ts
   * where `Worker` exists; null runs the passes synchronously (node, tests).
   */
  spawnWorker?: (() => WorkerLike) | null;
}

export interface LiveReadings {
  /** Latest output (quick or full); null when not measurable or on error. */
  output: ShallowRef<MeasurementOutput | null>;
  /** Whether `output` came from the full pass (with ranges when the velocity has any). */
  complete: Ref<boolean>;
  /** Blocking problems: measurability issues of the buildup and of the context (`path: reason`). */
  issues: Readonly<Ref<string[]>>;
  /** Incomplete cycles left out of the measurement (`cycles[i].part: reason`). */
  leftOut: Readonly<Ref<string[]>>;
  /** True from an edit until its quick pass has run. */
  computing: Ref<boolean>;
  /** True while the full pass (ranges) is still to come. */
  rangesPending: Ref<boolean>;
  /** Message of the engine's refusal, or null. */
  error: Ref<string | null>;
  /** Run any pending pass now; resolves once the newest pass's result is in `output`. */
  flush(): Promise<void>;
}

function errorText(e: unknown): string {
  return e instanceof Error ? e.message : String(e);
}

/**
 * Measure the selected buildup in the browser on every edit (see the header
 * of this file for the two passes). Must be called inside a component setup
 * or an effect scope; timers stop with it.
 */
export function useLiveReadings(args: LiveReadingsArgs): LiveReadings {
  const buildup = computed(() => {
    const id = toValue(args.buildupId);
    return id ? (args.store.buildupById(id) ?? null) : null;
  });
  const ctx = computed(() => toValue(args.context) ?? null);
  const opts = computed(() => toValue(args.options));
  const issues = computed(() => {
    const b = buildup.value;
    if (!b) return [];
    return [...measurabilityIssues(b, ctx.value?.calibrationTies), ...contextIssues(ctx.value)];
  });
  const leftOut = computed(() => (buildup.value ? incompleteCycleNotes(buildup.value) : []));

  const output = shallowRef<MeasurementOutput | null>(null);
  const complete = shallowRef(false);
  const computing = shallowRef(false);
  const rangesPending = shallowRef(false);
  const error = shallowRef<string | null>(null);

  const ranged = () => {
    const c = ctx.value;
    return !!c && c.verticalDomain === 'twt_ms' && !!c.velocity && hasRanges(c.velocity);
  };

  const spawn = args.spawnWorker === undefined ? browserWorker() : args.spawnWorker;
  const runner = spawn ? createLatestRunner(spawn) : null;
  let seq = 0;
  let last: Promise<void> = Promise.resolve();
  const inFlight = { quick: 0, full: 0 };
  let schedulerState: SchedulerState = 'idle';
  const showState = () => {
    computing.value = schedulerState === 'quickPending' || inFlight.quick > 0;
    rangesPending.value = schedulerState === 'fullPending' || inFlight.full > 0;
  };

  /** Buildup (local id) whose numbers `output` holds: another one's numbers are never shown while the worker runs. */
  let shownId: string | null = null;

  function apply(r: RunnerResult, quick: boolean, id: string): void {
    shownId = id;
    if (r.ok) {
      output.value = r.output;
      complete.value = !quick;
      error.value = null;
    } else {
      output.value = null;
      complete.value = false;
      error.value = r.message;
    }
  }

  function run(mode: PassMode): void {
    const mine = ++seq;
    const b = buildup.value;
    const c = ctx.value;
    if (!b || !c || issues.value.length) {
      shownId = null;
      output.value = null;
      complete.value = false;
      error.value = null;
      return;
    }
    const quick = mode === 'quick' && ranged();
    let input: InterpretationInput;
    try {
      const context: MeasureContext = quick ? { ...c, velocity: modeOf(c.velocity) } : c;
      input = toInterpretationInput(b, context);
      if (!runner) {
        apply({ ok: true, output: measure(input, opts.value) }, quick, b.id);
        return;
      }
    } catch (e) {
      apply({ ok: false, message: errorText(e) }, quick, b.id);
      return;
    }
    if (shownId !== b.id) {
      // another buildup was selected: its numbers go, the new ones follow
      output.value = null;
      complete.value = false;
      error.value = null;
    }
    inFlight[mode]++;
    showState();
    last = runner
      .request({ ...input, velocity: plain(input.velocity) }, plain(opts.value), mode)
      .then((r) => {
        if (r && mine === seq) apply(r, quick, b.id); // an older pass's result never overwrites a newer one
      })
      .finally(() => {
        inFlight[mode]--;
        showState();
      });
  }

  /** Resolves once no pass is running (passes asked for meanwhile included). */
  async function settled(): Promise<void> {
    let p: Promise<void>;
    do {
      p = last;
      await p;
    } while (p !== last);
  }

  const scheduler = createReadingsScheduler({
    quickDelayMs: args.quickDelayMs,
    fullDelayMs: args.fullDelayMs,
    timers: args.timers,
    run,
    // with the worker this is asked before the quick result is in: go by measurability then
    needsFull: () => ranged() && (runner ? !!buildup.value && issues.value.length === 0 : !!output.value),
    isBusy: () => !!toValue(args.busy),
    onState: (s) => {
      schedulerState = s;
      showState();
    },
  });

  // A new buildup (selection) measures at once; edits of the same one are debounced.
  watch(
    () => buildup.value?.id ?? null,
    () => scheduler.touch(true),
    { immediate: true },
  );
  watch([buildup, ctx, opts], ([b], [pb]) => {
    if ((b?.id ?? null) !== (pb?.id ?? null)) return;
    scheduler.touch();
  });

  onScopeDispose(() => {
    scheduler.cancel();
    runner?.dispose();
  });

  return {
    output,
    complete,
    issues,
    leftOut,
    computing,
    rangesPending,
    error,
    flush: () => {
      scheduler.flush();
      return settled();
    },
  };
}
