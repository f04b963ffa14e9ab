import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { effectScope, nextTick, shallowRef } from 'vue';
import { fromGeometry, toGeometry, toInterpretationInput, type EditorBuildup, type MeasureContext } from '../../../shared/editor/model';
import { measure, type MeasurementOutput } from '../../../shared/measure/index';
import {
  compareWithServer,
  contextIssues,
  createReadingsScheduler,
  incompleteCycleNotes,
  useLiveReadings,
  type PassMode,
} from '../../../client/composables/useLiveReadings';
import { kestrel } from '../canvas/fixtures';
import { fixed, knoll, ranged } from './contexts';


const clone = <T>(v: T): T => JSON.parse(JSON.stringify(v)) as T;

describe('createReadingsScheduler', () => {
  beforeEach(() => vi.useFakeTimers());
  afterEach(() => vi.useRealTimers());

  function setup(needsFull = true) {
    const runs: PassMode[] = [];
    let busy = false;
    const states: string[] = [];
    const s = createReadingsScheduler({
      quickDelayMs: 150,
      fullDelayMs: 600,
      run: (m) => runs.push(m),
      needsFull: () => needsFull,
      isBusy: () => busy,
      onState: (st) => states.push(st),
    });
    return { s, runs, states, setBusy: (b: boolean) => (busy = b) };
  }

  it('coalesces a burst of edits into one quick pass 150 ms after the last one', () => {
    const { s, runs } = setup();
    s.touch();
    vi.advanceTimersByTime(100);
    s.touch();
    vi.advanceTimersByTime(100);
    s.touch();
    vi.advanceTimersByTime(149);
    expect(runs).toEqual([]);
    expect(s.state).toBe('quickPending');
    vi.advanceTimersByTime(1);
    expect(runs).toEqual(['quick']);
    expect(s.state).toBe('fullPending');
  });

  it('runs the full pass only after further quiet, and an edit in between starts over', () => {
    const { s, runs } = setup();
    s.touch();
    vi.advanceTimersByTime(150 + 599);
    expect(runs).toEqual(['quick']);
    s.touch(); // edit during the wait for the full pass
    vi.advanceTimersByTime(600);
    expect(runs).toEqual(['quick', 'quick']);
    vi.advanceTimersByTime(150);
    expect(runs).toEqual(['quick', 'quick', 'full']);
    expect(s.state).toBe('idle');
  });

  it('holds the full pass while busy (a drag) and runs it once the gesture ends', () => {
    const { s, runs, setBusy } = setup();
    setBusy(true);
    s.touch();
    vi.advanceTimersByTime(150 + 600 * 5);
    expect(runs).toEqual(['quick']);
    setBusy(false);
    vi.advanceTimersByTime(600);
    expect(runs).toEqual(['quick', 'full']);
  });

  it('skips the full pass when it is not needed (no velocity ranges)', () => {
    const { s, runs, states } = setup(false);
    s.touch();
    vi.advanceTimersByTime(10_000);
    expect(runs).toEqual(['quick']);
    expect(states).toEqual(['quickPending', 'idle']);
  });

  it('touch(true) runs the quick pass at once; flush runs what is pending; cancel forgets it', () => {
    const { s, runs } = setup();
    s.touch(true);
    expect(runs).toEqual(['quick']);
    s.flush();
    expect(runs).toEqual(['quick', 'full']);
    s.touch();
    s.flush();
    expect(runs).toEqual(['quick', 'full', 'quick', 'full']);
    s.touch();
    s.cancel();
    vi.advanceTimersByTime(10_000);
    expect(runs).toHaveLength(4);
    expect(s.state).toBe('idle');
  });
});

describe('incompleteCycleNotes / contextIssues', () => {
  it('names what each incomplete cycle lacks (0-based positions)', () => {
    const k = kestrel(); // cycle 3 has a top of 2 points and no margins
    expect(incompleteCycleNotes(k)).toEqual(['cycles[2].margins: both Margin pins missing']);
    k.cycles[1] = { ...k.cycles[1], marginRight: null, top: [[260, 600]] };
    expect(incompleteCycleNotes(k)).toEqual([
      'cycles[1].top: needs at least 2 points',
      'cycles[1].marginRight: missing',
      'cycles[2].margins: both Margin pins missing',
    ]);
    expect(incompleteCycleNotes(knoll())).toEqual([]);
  });

  it('reports a missing or too small calibration', () => {
    expect(contextIssues(null)).toEqual(['calibration: the section has no Ties yet']);
    expect(contextIssues({ ...fixed, calibrationTies: fixed.calibrationTies.slice(0, 2) })).toEqual(['calibration: needs at least 3 Ties (has 2)']);
    expect(contextIssues(fixed)).toEqual([]);
  });
});

describe('compareWithServer', () => {
  const local = measure(toInterpretationInput(knoll(), ranged), { draws: 200 });

  it('finds no mismatch when the server measured the same saved geometry', () => {
    // the server path: geometry → JSON → fromGeometry → engine
    const saved = fromGeometry(clone({ id: 11, name: 'Kestrel Knoll', version: 4, geometry: toGeometry(knoll()) }));
    const server = clone(measure(toInterpretationInput(saved, ranged), { draws: 200 }));
    expect(compareWithServer(local, server)).toEqual([]);
  });

  it('reports a changed number with its path, but not differences within the tolerance', () => {
    const server = clone(local);
    server.buildups[0].heightM *= 1 + 1e-12;
    expect(compareWithServer(local, server)).toEqual([]);
    server.buildups[0].cycles[1].left.backstepM = (server.buildups[0].cycles[1].left.backstepM ?? 0) + 0.5;
    server.buildups[0].areaM2 += 10;
    const m = compareWithServer(local, server);
    expect(m.map((x) => x.path).sort()).toEqual(['areaM2', 'cycles[1].left.backstepM']);
    expect(m.find((x) => x.path === 'areaM2')!.text).toMatch(/^areaM2: local [\d.]+, server [\d.]+$/);
  });

  it('reports class, null-versus-number and cycle-count differences', () => {
    const server = clone(local);
    server.buildups[0].classification = server.buildups[0].classification === 'drowned' ? 'aggrading' : 'drowned';
    server.buildups[0].cycles[0].left.flankAngleDeg = null;
    expect(compareWithServer(local, server).map((x) => x.path)).toEqual(
      expect.arrayContaining(['classification', 'cycles[0].left.flankAngleDeg']),
    );
    const fewer = clone(local);
    fewer.buildups[0].cycles.pop();
    expect(compareWithServer(local, fewer).some((x) => x.path === 'cycles' && /3 entries, server 2/.test(x.text))).toBe(true);
  });

  it('ignores prose, compares ranges only at equal draws, and reports ranges on one side only', () => {
    const server = clone(local);
    server.buildups[0].evidence = ['reworded'];
    server.buildups[0].volumeNote = 'reworded';
    expect(compareWithServer(local, server)).toEqual([]);
    const full = measure(toInterpretationInput(knoll(), ranged), { draws: 1000 });
    expect(full.buildups[0].ranges!.heightM.p90).not.toBe(local.buildups[0].ranges!.heightM.p90);
    expect(compareWithServer(local, full)).toEqual([]);
    const none: MeasurementOutput = clone(local);
    none.buildups[0].ranges = null;
    expect(compareWithServer(local, none).map((x) => x.path)).toEqual(['ranges']);
    const shifted = clone(local);
    shifted.buildups[0].ranges!.volumeM3.p10 *= 1.01;
    expect(compareWithServer(local, shifted).map((x) => x.path)).toEqual(['ranges.volumeM3.p10']);
  });

  it('reports a missing buildup', () => {
    const empty = { ...clone(local), buildups: [] };
    expect(compareWithServer(local, empty)[0].path).toBe('buildups');
  });
});

describe('useLiveReadings', () => {
  beforeEach(() => vi.useFakeTimers());
  afterEach(() => vi.useRealTimers());

  function setup(context: MeasureContext | null, busy = shallowRef(false)) {
    const doc = shallowRef<EditorBuildup[]>([knoll()]);
    const store = { buildupById: (id: string) => doc.value.find((b) => b.id === id) };
    const selected = shallowRef<string | null>('b1');
    const ctx = shallowRef<MeasureContext | null>(context);
    const scope = effectScope();
    const live = scope.run(() =>
      useLiveReadings({ store, buildupId: selected, context: ctx, options: { draws: 100 }, busy, quickDelayMs: 150, fullDelayMs: 600 }),
    )!;
    return { doc, selected, ctx, live, scope, busy };
  }

  it('measures the selected buildup at once, without ranges, then with ranges when idle', async () => {
    const { live, scope } = setup(ranged);
    expect(live.output.value?.buildups[0].cycles).toHaveLength(3);
    expect(live.output.value?.buildups[0].ranges).toBeNull();
    expect(live.rangesPending.value).toBe(true);
    vi.advanceTimersByTime(600);
    expect(live.rangesPending.value).toBe(false);
    expect(live.complete.value).toBe(true);
    expect(live.output.value?.buildups[0].ranges?.draws).toBe(100);
    // the quick pass used the modes: its deterministic numbers equal the full pass's
    const direct = measure(toInterpretationInput(knoll(), ranged), { draws: 100 });
    expect(compareWithServer(live.output.value!, direct)).toEqual([]);
    scope.stop();
  });

  it('debounces edits: the numbers follow 150 ms after the last edit', async () => {
    const { doc, live, scope } = setup(fixed);
    const h0 = live.output.value!.buildups[0].heightM;
    const raise = (dv: number) => {
      const b = doc.value[0];
      const c = b.cycles[2];
      doc.value = [{ ...b, cycles: [b.cycles[0], b.cycles[1], { ...c, top: c.top.map(([u, v]) => [u, v - dv] as [number, number]) }] }];
    };
    raise(5);
    await nextTick();
    expect(live.computing.value).toBe(true);
    vi.advanceTimersByTime(100);
    raise(10);
    await nextTick();
    vi.advanceTimersByTime(149);
    expect(live.output.value!.buildups[0].heightM).toBe(h0);
    vi.advanceTimersByTime(1);
    expect(live.computing.value).toBe(false);
    const expected = measure(toInterpretationInput(doc.value[0], fixed)).buildups[0].heightM;
    expect(live.output.value!.buildups[0].heightM).toBe(expected);
    expect(expected).toBeGreaterThan(h0);
    // no ranges in the model: no full pass is scheduled
    expect(live.rangesPending.value).toBe(false);
    scope.stop();
  });

  it('lists blocking issues and gives no output when the buildup cannot be measured', async () => {
    const { doc, ctx, live, scope } = setup(fixed);
    doc.value = [{ ...doc.value[0], base: [[100, 800]] }];
    await nextTick();
    expect(live.issues.value).toEqual(['base: needs at least 2 points']);
    vi.advanceTimersByTime(150);
    expect(live.output.value).toBeNull();
    ctx.value = null;
    await nextTick();
    expect(live.issues.value).toContain('calibration: the section has no Ties yet');
    scope.stop();
  });

  it('reports an engine refusal as error', async () => {
    const { ctx, live, scope } = setup(fixed);
    // collinear Ties cannot be fitted
    ctx.value = { ...fixed, calibrationTies: [
      { px: [0, 0], world: [0, 0] },
      { px: [1, 1], world: [1, 1] },
      { px: [2, 2], world: [2, 2] },
    ] };
    await nextTick();
    vi.advanceTimersByTime(150);
    expect(live.output.value).toBeNull();
    expect(live.error.value).toMatch(/calibration/i);
    scope.stop();
  });

  it('waits with the ranges while busy', async () => {
    const busy = shallowRef(true);
    const { live, scope } = setup(ranged, busy);
    vi.advanceTimersByTime(5000);
    expect(live.output.value!.buildups[0].ranges).toBeNull();
    busy.value = false;
    vi.advanceTimersByTime(600);
    expect(live.output.value!.buildups[0].ranges).not.toBeNull();
    scope.stop();
  });
});
