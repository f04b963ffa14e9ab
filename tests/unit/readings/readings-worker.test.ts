/**
 * The live Readings' Web Worker: its message protocol as a plain function,
 * the newest-request-wins runner in front of it, and the composable driven
 * through a fake worker that answers only when told (results arrive late and
 * out of step with the edits, as they do in the browser).
 */
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { effectScope, nextTick, reactive, shallowRef } from 'vue';
import { toInterpretationInput, type EditorBuildup, type MeasureContext } from '../../../shared/editor/model';
import { measure, MeasureInputError } from '../../../shared/measure/index';
import { answerReadingsRequest, type ReadingsReply, type ReadingsRequest } from '../../../client/composables/readings.worker';
import { createLatestRunner, useLiveReadings, type WorkerLike } from '../../../client/composables/useLiveReadings';
import { fixed, knoll, ranged } from './contexts';

const raised = (b: EditorBuildup, dv: number): EditorBuildup => ({
  ...b,
  cycles: [b.cycles[0], b.cycles[1], { ...b.cycles[2], top: b.cycles[2].top.map(([u, v]) => [u, v - dv] as [number, number]) }],
});

/** A worker that keeps what it is sent (structured-cloned, as postMessage does) and answers when `answer()` is called. */
class FakeWorker implements WorkerLike {
  static all: FakeWorker[] = [];
  inbox: ReadingsRequest[] = [];
  sent: number[] = [];
  terminated = false;
  onmessage: ((e: { data: ReadingsReply }) => void) | null = null;
  onerror: ((e: { message?: string }) => void) | null = null;
  constructor() {
    FakeWorker.all.push(this);
  }
  postMessage(m: ReadingsRequest) {
    const copy = structuredClone(m); // throws on Vue proxies, as a real postMessage would
    this.inbox.push(copy);
    this.sent.push(copy.id);
  }
  terminate() {
    this.terminated = true;
  }
  /** Answer the oldest message. */
  answer() {
    const m = this.inbox.shift();
    if (!m) throw new Error('nothing to answer');
    if (!this.terminated) this.onmessage?.({ data: answerReadingsRequest(m) });
  }
}
const spawn = () => new FakeWorker();
const lastWorker = () => FakeWorker.all[FakeWorker.all.length - 1];
/** Let pending promise callbacks run (the fake timers do not move). */
const settle = async () => {
  for (let i = 0; i < 20; i++) await Promise.resolve();
};

beforeEach(() => {
  FakeWorker.all = [];
});

describe('readings worker protocol', () => {
  it('answers with the engine output under the request id', () => {
    const input = toInterpretationInput(knoll(), ranged);
    const r = answerReadingsRequest({ id: 7, input, options: { draws: 50 } });
    expect(r).toEqual({ id: 7, ok: true, output: measure(input, { draws: 50 }) });
  });

  it('turns an engine refusal into { ok: false, message } with the path first', () => {
    const input = toInterpretationInput(knoll(), fixed);
    let direct: MeasureInputError | null = null;
    try {
      measure(input, { draws: 3 });
    } catch (e) {
      direct = e as MeasureInputError;
    }
    expect(direct).toBeInstanceOf(MeasureInputError);
    expect(answerReadingsRequest({ id: 2, input, options: { draws: 3 } })).toEqual({ id: 2, ok: false, message: direct!.message });
    expect(direct!.message).toMatch(/^options\.draws: /);
  });
});

describe('createLatestRunner', () => {
  it('keeps one request waiting: a newer one replaces it; a result that was overtaken resolves null', async () => {
    const runner = createLatestRunner(spawn);
    const input = toInterpretationInput(knoll(), fixed);
    const a = runner.request(input, undefined, 'quick');
    const b = runner.request(input, { aggradingToleranceDeg: 20 }, 'quick');
    const c = runner.request(input, { aggradingToleranceDeg: 30 }, 'quick');
    expect(await b).toBeNull(); // replaced while waiting, never sent
    const w = lastWorker();
    expect(w.sent).toEqual([1]);
    w.answer();
    expect(await a).toBeNull(); // c was asked for after a: a's result is dropped
    expect(w.sent).toEqual([1, 3]);
    w.answer();
    const rc = await c;
    expect(rc?.ok && rc.output.options.aggradingToleranceDeg).toBe(30);
    runner.dispose();
    expect(w.terminated).toBe(true);
  });

  it('abandons a running full pass (restarts the worker) when a newer pass is asked for', async () => {
    const runner = createLatestRunner(spawn);
    const input = toInterpretationInput(knoll(), ranged);
    const full = runner.request(input, { draws: 50 }, 'full');
    const first = lastWorker();
    const quick = runner.request(input, undefined, 'quick');
    expect(await full).toBeNull();
    expect(first.terminated).toBe(true);
    expect(FakeWorker.all).toHaveLength(2);
    lastWorker().answer();
    expect((await quick)?.ok).toBe(true);
  });

  it('reports a worker failure to the newest request and starts a fresh worker for the next', async () => {
    const runner = createLatestRunner(spawn);
    const input = toInterpretationInput(knoll(), fixed);
    const a = runner.request(input, undefined, 'quick');
    lastWorker().onerror?.({ message: 'boom' });
    expect(await a).toEqual({ ok: false, message: 'The measurement worker failed: boom' });
    const b = runner.request(input, undefined, 'quick');
    expect(FakeWorker.all).toHaveLength(2);
    lastWorker().answer();
    expect((await b)?.ok).toBe(true);
  });
});

describe('useLiveReadings with a worker', () => {
  beforeEach(() => vi.useFakeTimers());
  afterEach(() => vi.useRealTimers());

  function setup(context: MeasureContext) {
    // a reactive store, as the Pinia store is
    const doc = reactive({ buildups: [knoll(), { ...raised(knoll(), 40), id: 'b2', name: 'Marrow Bank' }] });
    const store = { buildupById: (id: string) => doc.buildups.find((b) => b.id === id) };
    const selected = shallowRef<string | null>('b1');
    // the section's context as page state holds it: a reactive object (postMessage refuses proxies)
    const ctx = shallowRef<MeasureContext>(reactive(JSON.parse(JSON.stringify(context))) as MeasureContext);
    const scope = effectScope();
    const live = scope.run(() =>
      useLiveReadings({ store, buildupId: selected, context: ctx, options: { draws: 60 }, quickDelayMs: 150, fullDelayMs: 600, spawnWorker: spawn }),
    )!;
    return { doc, live, scope, selected };
  }

  it('shows the result once the worker answers, drops a result overtaken by an edit, and flush() waits for the newest', async () => {
    const { doc, live, scope } = setup(fixed);
    // the selection measures at once, but the answer is not in yet: the page goes on
    expect(live.output.value).toBeNull();
    expect(live.computing.value).toBe(true);
    const w = lastWorker();
    w.answer();
    await vi.waitFor(() => expect(live.output.value).not.toBeNull());
    const h0 = live.output.value!.buildups[0].heightM;
    expect(live.computing.value).toBe(false);

    // edit; the quick pass starts and, before it is answered, another edit comes
    doc.buildups[0] = raised(knoll(), 10);
    await nextTick();
    vi.advanceTimersByTime(150);
    doc.buildups[0] = raised(knoll(), 25);
    await nextTick();
    vi.advanceTimersByTime(150);
    expect(w.sent).toHaveLength(2); // the second edit waits behind the running pass
    w.answer(); // the result of the first edit arrives late: dropped
    await settle();
    expect(live.output.value!.buildups[0].heightM).toBe(h0);
    expect(live.computing.value).toBe(true);
    const done = live.flush();
    w.answer();
    await done;
    const expected = measure(toInterpretationInput(raised(knoll(), 25), fixed), { draws: 60 }).buildups[0].heightM;
    expect(live.output.value!.buildups[0].heightM).toBe(expected);
    expect(expected).toBeGreaterThan(h0);
    expect(live.computing.value).toBe(false);
    scope.stop();
    expect(w.terminated).toBe(true);
  });

  it('never shows one buildup\'s numbers for another: a new selection clears them until its own arrive', async () => {
    const { live, scope, selected } = setup(fixed);
    lastWorker().answer();
    await vi.waitFor(() => expect(live.output.value?.buildups[0].name).toBe('Kestrel Knoll'));
    selected.value = 'b2';
    await nextTick();
    expect(live.output.value).toBeNull();
    expect(live.computing.value).toBe(true);
    lastWorker().answer();
    await vi.waitFor(() => expect(live.output.value?.buildups[0].name).toBe('Marrow Bank'));
    const expected = measure(toInterpretationInput({ ...raised(knoll(), 40), id: 'b2', name: 'Marrow Bank' }, fixed), { draws: 60 });
    expect(live.output.value!.buildups[0].heightM).toBe(expected.buildups[0].heightM);
    scope.stop();
  });

  it('schedules the full pass (ranges) although the quick result was not in when it was decided', async () => {
    const { live, scope } = setup(ranged);
    lastWorker().answer();
    await vi.waitFor(() => expect(live.output.value?.buildups[0].ranges).toBeNull());
    expect(live.rangesPending.value).toBe(true);
    vi.advanceTimersByTime(600);
    lastWorker().answer();
    await vi.waitFor(() => expect(live.output.value?.buildups[0].ranges?.draws).toBe(60));
    expect(live.complete.value).toBe(true);
    expect(live.rangesPending.value).toBe(false);
    scope.stop();
  });
});
