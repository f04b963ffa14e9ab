/**
 * The interpret page's side of the forward model, without a browser: the
 * worker protocol (answerModelRequest), the runner's progress and Cancel with
 * a fake Worker, the parameter draft → model parameters (field paths of
 * refusals, the depth offset, the round trip through a saved run), the
 * overlay's depth → TWT → pixel mapping checked against the engine's own
 * pixel → depth converter, the side-by-side rows and the sweep plot's marks.
 */
import { describe, expect, it } from 'vitest';
import { answerModelRequest, type ModelReply, type ModelRequest } from '../../../client/composables/forward-model.worker';
import { ModelJobCancelled, ModelJobFailed, createModelRunner, type ModelWorkerLike } from '../../../client/composables/useForwardModel';
import { DraftError, defaultDraft, draftToParams, overlayLines, paramsToDraft, sideBySide, summaryOf, type ModelDraft } from '../../../client/components/model/modelSetup';
import { sweepOption } from '../../../client/components/model/sweepPlot';
import { runForwardModel, runToInterpretation, forwardModelParamsSchema, drowningThreshold } from '../../../shared/forward-model/index';
import { createDepthConverter, measure } from '../../../shared/measure/index';
import type { MeasureContext } from '../../../shared/editor/model';
import { modelRunSummarySchema } from '../../../shared/schemas/model-runs';
import { MODEL_KEY, NOTE_PIN_KEY, SHORTCUT_GROUPS, TOOL_KEYS } from '../../../client/canvas/tools/toolbox';

type Pt = [number, number];
/** A knoll 6 km wide, crest at 1960 m, flanks at 2050 m (present depth). */
const TRACED: Pt[] = [[0, 2050], [3000, 1960], [6000, 2050]];
const small = (over: Partial<ModelDraft> = {}): ModelDraft => ({ ...defaultDraft(), columns: 61, stepYr: 1000, ...over });

describe('worker protocol', () => {
  it('a run: progress in order at most once a percent, then the run with its engine measurement', () => {
    const { params } = draftToParams(small(), TRACED);
    const out: ModelReply[] = [];
    answerModelRequest({ id: 7, kind: 'run', params }, (r) => out.push(r));
    const progress = out.filter((r) => r.type === 'progress').map((r) => (r as { fraction: number }).fraction);
    expect(progress.length).toBeGreaterThan(5);
    expect(progress.length).toBeLessThanOrEqual(101);
    expect(progress.every((f, i) => i === 0 || f > progress[i - 1])).toBe(true);
    const last = out[out.length - 1];
    expect(last.type).toBe('done');
    if (last.type !== 'done' || last.result.kind !== 'run') throw new Error('not a run');
    const direct = runForwardModel(params);
    expect(last.result.run.surfaces).toEqual(direct.surfaces.map((s) => Array.from(s)));
    expect(last.result.run.measurement).toEqual(measure(runToInterpretation(direct)));
    expect(out.every((r) => r.id === 7)).toBe(true);
  });

  it('a fit: the factors that made synthetic tops come back, with the fitted run measured', () => {
    const d = small({ columns: 41, stepYr: 400, factors: '0.8, 0.5, 0.3, 0.2' });
    const { params } = draftToParams(d, TRACED);
    const truthRun = runForwardModel(params);
    const tops = truthRun.surfaces.map((s) => Array.from(truthRun.xs, (x, i) => [x, s[i]] as Pt).filter((_, i) => i % 2 === 0));
    const out: ModelReply[] = [];
    answerModelRequest({ id: 3, kind: 'fit', params: { ...params, cycles: { ...params.cycles, productionFactors: [0.6] } }, tops }, (r) => out.push(r));
    const last = out[out.length - 1];
    if (last.type !== 'done' || last.result.kind !== 'fit') throw new Error(JSON.stringify(last).slice(0, 300));
    [0.8, 0.5, 0.3, 0.2].forEach((f, i) => expect(Math.abs(last.result.kind === 'fit' ? last.result.fit.factors[i] - f : 1)).toBeLessThan(0.02));
    expect(last.result.fit.rmsM).toBeLessThan(0.05);
    expect(last.result.fit.run.measurement).not.toBeNull();
    expect(out.filter((r) => r.type === 'progress').length).toBeGreaterThan(3);
  }, 60_000);

  it('bad parameters come back as an error naming the field', () => {
    const out: ModelReply[] = [];
    answerModelRequest({ id: 1, kind: 'run', params: { ...draftToParams(small(), TRACED).params, stepYr: 1e7 } }, (r) => out.push(r));
    expect(out).toHaveLength(1);
    expect(out[0]).toMatchObject({ type: 'error', path: 'stepYr' });
    expect((out[0] as { message: string }).message).toMatch(/^stepYr: must not exceed durationYr/);
  });
});

/** A Worker stand-in: answers with answerModelRequest when `flush()` is called (as a real worker would, later). */
function fakeWorker() {
  const made: (ModelWorkerLike & { queue: ModelRequest[]; terminated: boolean; flush(): void })[] = [];
  const spawn = () => {
    const w = {
      queue: [] as ModelRequest[],
      terminated: false,
      onmessage: null as ModelWorkerLike['onmessage'],
      onerror: null as ModelWorkerLike['onerror'],
      postMessage(m: ModelRequest) { this.queue.push(m); },
      terminate() { this.terminated = true; },
      flush() {
        for (const m of this.queue.splice(0)) answerModelRequest(m, (r) => { if (!this.terminated) this.onmessage?.({ data: r }); });
      },
    };
    made.push(w);
    return w;
  };
  return { spawn, made };
}

describe('runner', () => {
  const params = () => draftToParams(small(), TRACED).params;

  it('forwards progress and resolves with the result', async () => {
    const f = fakeWorker();
    const runner = createModelRunner(f.spawn);
    const seen: number[] = [];
    const p = runner.start({ kind: 'run', params: params() }, (x) => seen.push(x));
    f.made[0].flush();
    const r = await p;
    expect(r.kind).toBe('run');
    expect(seen.length).toBeGreaterThan(5);
  });

  it('Cancel terminates the worker and rejects; the next job gets a fresh worker', async () => {
    const f = fakeWorker();
    const runner = createModelRunner(f.spawn);
    const p = runner.start({ kind: 'run', params: params() });
    runner.cancel();
    await expect(p).rejects.toBeInstanceOf(ModelJobCancelled);
    expect(f.made[0].terminated).toBe(true);
    const q = runner.start({ kind: 'run', params: params() });
    expect(f.made).toHaveLength(2);
    f.made[1].flush();
    await expect(q).resolves.toMatchObject({ kind: 'run' });
  });

  it('a new job cancels the running one', async () => {
    const f = fakeWorker();
    const runner = createModelRunner(f.spawn);
    const first = runner.start({ kind: 'run', params: params() });
    const second = runner.start({ kind: 'threshold', params: params(), parameter: 'productionFactor', sweepPoints: 3 });
    await expect(first).rejects.toBeInstanceOf(ModelJobCancelled);
    f.made[1].flush();
    await expect(second).resolves.toMatchObject({ kind: 'threshold' });
  });

  it('without a Worker the job runs synchronously; refusals reject with the path', async () => {
    const runner = createModelRunner(null);
    await expect(runner.start({ kind: 'run', params: params() })).resolves.toMatchObject({ kind: 'run' });
    const bad = runner.start({ kind: 'run', params: { ...params(), cycles: { productionFactors: [2] } } });
    await expect(bad).rejects.toBeInstanceOf(ModelJobFailed);
    await expect(bad).rejects.toMatchObject({ path: 'cycles.productionFactors[0]' });
  });
});

describe('parameter draft', () => {
  it('the default draft over a traced base is valid; the base crest sits at the chosen water depth', () => {
    const { params, depthOffsetM } = draftToParams(defaultDraft(), TRACED);
    expect(forwardModelParamsSchema.safeParse(params).success).toBe(true);
    expect(depthOffsetM).toBe(1960 - 10);
    expect(params.profile).toEqual([[0, 100], [3000, 10], [6000, 100]]);
  });

  it('refusals name the model field', () => {
    const issues = (d: ModelDraft, traced: Pt[] | null = TRACED) => {
      try {
        draftToParams(d, traced);
        return [];
      } catch (e) {
        expect(e).toBeInstanceOf(DraftError);
        return (e as DraftError).issues.map((i) => i.path);
      }
    };
    expect(issues(small({ factors: '1, 1.4' }))).toContain('cycles.productionFactors[1]');
    expect(issues(small({ factors: '1, lots' }))).toContain('cycles.productionFactors[1]');
    expect(issues(small({ stepYr: 500_000 }))).toContain('stepYr');
    expect(issues(small({ boundaryTimes: '100000, 50000' }))).toContain('cycles.boundaries[1]');
    expect(issues(small({ growth: { GmMmPerYr: -1, I0: 2000, Ik: 250, kPerM: 0.1 } }))).toContain('growth.GmMmPerYr');
    expect(issues(small({ profileSource: 'typed', typedProfile: '0 100\n50' }))).toContain('profile[1][1]');
    expect(issues(small({ profileSource: 'drawn', drawnProfile: [[10, 5]] }))).toContain('profile');
    expect(issues(small(), null)).toContain('profile');
    expect(issues(small({ eustasyKind: 'table', eustasyTable: '0 0\n0 5' }))).toContain('eustasy.points[1][0]');
  });

  it('a saved run opens back into the same parameters', () => {
    for (const d of [small(), small({ profileSource: 'typed', typedProfile: '0 300\n2000 250\n4000 320', eustasyKind: 'table', eustasyTable: '0 0\n100000 -5\n400000 3', subsidenceKind: 'table', subsidenceTable: '0 0\n400000 600', boundaryMode: 'lowstands' }), small({ profileSource: 'drawn', drawnProfile: [[0, 2000], [3000, 1970], [6000, 2040]], startWaterDepthM: 4 })]) {
      const a = draftToParams(d, TRACED);
      const stored = forwardModelParamsSchema.parse(a.params);
      const back = draftToParams(paramsToDraft(stored, a.depthOffsetM, d.profileSource), TRACED);
      expect(forwardModelParamsSchema.parse(back.params)).toEqual(stored);
      expect(back.depthOffsetM).toBeCloseTo(a.depthOffsetM, 9);
    }
  });
});

describe('overlay on the section', () => {
  const ties = [
    { px: [0, 0] as Pt, world: [0, 1000] as Pt },
    { px: [600, 0] as Pt, world: [6000, 1000] as Pt },
    { px: [0, 400] as Pt, world: [0, 3000] as Pt },
  ];

  it('pixels of the modelled surfaces convert back (engine, pixels → depth) to the model depth plus the offset — TWT section, buildup-aware velocity', () => {
    const ctx: MeasureContext = { calibrationTies: ties, verticalDomain: 'twt_ms', velocity: { kind: 'buildup', water: { v: 1500, seafloorMs: 600 }, overburden: { v: 2400 }, carbonate: { v: 4500 } } };
    const { params, depthOffsetM } = draftToParams(small(), TRACED);
    const it = runToInterpretation(runForwardModel(params));
    const lines = overlayLines(it, depthOffsetM, ctx);
    expect(lines.filter((l) => l.kind === 'top')).toHaveLength(it.buildups[0].cycles.length);
    // the engine's converter over the same surfaces in pixels (its envelope comes from them)
    const cycles = it.buildups[0].cycles.map((c, i) => {
      const px = (kind: 'top') => lines.filter((l) => l.kind === kind && l.cycle === c.index)[0].points;
      const pairs = (flat: number[]) => Array.from({ length: flat.length / 2 }, (_, k) => [flat[2 * k], flat[2 * k + 1]] as Pt);
      const top = pairs(px('top'));
      const flanks = lines.filter((l) => l.kind === 'flank' && l.cycle === c.index).map((l) => pairs(l.points));
      return { index: i + 1, top, marginLeft: top[0], marginRight: top[top.length - 1], ...(flanks[0] ? { flankLeft: flanks[0] } : {}), ...(flanks[1] ? { flankRight: flanks[1] } : {}) };
    });
    const basePx = lines.find((l) => l.kind === 'base')!.points;
    const input = { format: 'cayline.interpretation/1', verticalDomain: 'twt_ms', coordinates: 'pixels', calibration: ties, velocity: ctx.velocity, buildups: [{ name: 'm', base: Array.from({ length: basePx.length / 2 }, (_, k) => [basePx[2 * k], basePx[2 * k + 1]]), cycles, terminations: [], topIsDrowningSurface: false }] };
    const conv = createDepthConverter(input, { buildup: 0 });
    it.buildups[0].cycles.forEach((c, i) => {
      c.top.forEach((p, k) => {
        const [x, z] = conv.toDepth(cycles[i].top[k]);
        expect(x).toBeCloseTo(p[0], 6);
        expect(z).toBeCloseTo(p[1] + depthOffsetM, 6);
      });
    });
  });

  it('a depth section maps straight through the Ties', () => {
    const ctx: MeasureContext = { calibrationTies: ties.map((t) => ({ px: t.px, world: [t.world[0], t.world[1] - 1000] as Pt })), verticalDomain: 'depth_m', velocity: { kind: 'constant', v: 2000 } };
    const { params, depthOffsetM } = draftToParams(small(), TRACED);
    const it = runToInterpretation(runForwardModel(params));
    const base = overlayLines(it, depthOffsetM, ctx).find((l) => l.kind === 'base')!.points;
    // x = 10·u, depth = 5·v
    expect(base[0]).toBeCloseTo(it.buildups[0].base[0][0] / 10, 9);
    expect(base[1]).toBeCloseTo((it.buildups[0].base[0][1] + depthOffsetM) / 5, 9);
  });
});

describe('side by side, summary and sweep plot', () => {
  it('rows per buildup and per cycle with modelled − interpreted; the summary fits the saved-run schema', () => {
    const { params } = draftToParams(small(), TRACED);
    const out: ModelReply[] = [];
    answerModelRequest({ id: 1, kind: 'run', params }, (r) => out.push(r));
    const done = out.at(-1)!;
    if (done.type !== 'done' || done.result.kind !== 'run') throw new Error('no run');
    const modelled = done.result.run.measurement!;
    const interpreted = structuredClone(modelled);
    interpreted.buildups[0].heightM += 12.5;
    interpreted.buildups[0].cycles[0].topWidthM -= 100;
    const rows = sideBySide(interpreted, modelled);
    expect(rows.find((r) => r.key === 'height')!.diff).toBeCloseTo(-12.5, 9);
    expect(rows.find((r) => r.key === 'c1.topWidth')!.diff).toBeCloseTo(100, 9);
    expect(rows.find((r) => r.key === 'class')!.modelled).toBeTruthy();
    expect(rows.filter((r) => r.key.endsWith('.backstep'))).toHaveLength(modelled.buildups[0].cycles.length);
    const summary = summaryOf(done.result.run, null, null);
    expect(modelRunSummarySchema.safeParse(summary).success).toBe(true);
    expect(summary.cycles.map((c) => c.factor)).toEqual([1, 0.5, 0.25, 0.12]);
  });

  it('the sweep plot marks the drowning depth and the threshold', () => {
    const { params } = draftToParams(small(), TRACED);
    const t = drowningThreshold(params, { parameter: 'productionFactor', sweepPoints: 5 });
    expect(t.value).not.toBeNull();
    const o = sweepOption(t);
    const marks = o.series[0].markLine.data;
    expect(marks.find((m) => m.yAxis !== undefined)!.yAxis).toBe(t.drowningDepthM);
    expect(marks.find((m) => m.xAxis !== undefined)!.xAxis).toBe(t.value);
    expect(o.series[0].data).toHaveLength(t.points.length);
    expect(o.yAxis.inverse).toBe(true);
  });
});

describe('the Model key', () => {
  it('is a key of its own (no tool, Note pin or stage key) and is listed in the help', () => {
    expect([...Object.values(TOOL_KEYS), NOTE_PIN_KEY, 'f', '0', '+', '-', '?']).not.toContain(MODEL_KEY);
    expect(SHORTCUT_GROUPS.flatMap((g) => g.entries.flatMap((e) => e.keys))).toContain(MODEL_KEY.toUpperCase());
  });
});
