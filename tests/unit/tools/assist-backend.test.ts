import { describe, expect, it } from 'vitest';
import { WorkerAssistBackend, type AssistWorkerLike } from '../../../client/canvas/assist/backend';
import type { AssistReply, AssistRequest } from '../../../client/canvas/assist/protocol';
import { handle } from '../../../client/canvas/assist/traceAssist.worker';
import type { TilesDescriptor } from '../../../shared/schemas/sections';
import { ricker } from '../../../server/synth/ricker';

/** The worker's own message handler, run in-process behind a Worker-like object (replies arrive asynchronously). */
function inProcessWorker(log: AssistRequest[]): AssistWorkerLike {
  const w: AssistWorkerLike = {
    onmessage: null,
    onerror: null,
    postMessage(msg: AssistRequest) {
      log.push(msg);
      const reply = handle(msg);
      if (reply) setTimeout(() => w.onmessage?.({ data: reply } as MessageEvent<AssistReply>), 0);
    },
    terminate() {},
  };
  return w;
}

describe('trace assist on a SEG-Y section (true amplitudes)', () => {
  it('reads blocks of 256 traces × 256 samples through the amplitude API and follows the event in them', async () => {
    const width = 700, height = 400;
    const f = (u: number) => 200 + 0.15 * u - 20 * Math.sin(u / 150);
    // amplitudes in the API's shape: values[trace][sample], in the file's own units (here ±3,000)
    const amp = (t: number, s: number) => 3000 * ricker((s + 0.5 - f(t + 0.5)) / 1000, 30);
    const asked: string[] = [];
    const load = async (w: { trace: number; sample: number; traces: number; samples: number }) => {
      asked.push(`${w.trace},${w.sample},${w.traces}x${w.samples}`);
      expect(w.traces * w.samples).toBeLessThanOrEqual(65_536);
      return Array.from({ length: w.traces }, (_, i) => Array.from({ length: w.samples }, (_, j) => amp(w.trace + i, w.sample + j)));
    };
    const tiles: TilesDescriptor = { urlTemplate: '/api/sections/77/tiles/{z}/{x}_{y}.jpg', layout: 'dz', tileSize: 512, overlap: 0, format: 'jpeg', width, height, minLevel: 0, maxLevel: 10, levels: [] };
    const log: AssistRequest[] = [];
    const be = new WorkerAssistBackend(tiles, 'darkPositive', {
      spawn: () => inProcessWorker(log),
      load: () => Promise.reject(new Error('grey tiles must not be fetched for a SEG-Y section')),
      amplitudes: load,
    });
    expect(be.readsAmplitudes).toBe(true);
    const r = await be.run({ kind: 'path', from: [20.5, f(20.5)], to: [660.5, f(660.5) + 2], phase: 'peak', tolerancePx: 0 });
    expect(r.kind).toBe('path');
    const pts = (r as { points: [number, number][] }).points;
    expect(pts.length).toBeGreaterThan(600);
    for (const p of pts.slice(1)) expect(Math.abs(p[1] - f(p[0]))).toBeLessThanOrEqual(1);
    expect(asked.length).toBeGreaterThan(0);
    expect(asked.every((a) => /^(0|256|512),(0|256),\d+x\d+$/.test(a))).toBe(true);
    expect(log.filter((m) => m.type === 'amplitudes').length).toBe(asked.length);
    // a second task over the same place asks the server nothing more
    const n = asked.length;
    await be.run({ kind: 'snap', points: [[300.5, f(300.5) + 3]], phase: 'peak' });
    expect(asked.length).toBe(n);
    be.dispose();
  });
});
