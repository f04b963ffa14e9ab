/**
 * Benchmark of trace assist's preview (not a test; never fails on time).
 * Run: `npm run bench -- trace-assist` (or `npx tsx tests/bench/trace-assist.bench.ts`).
 *
 * The TB-11 demo section is rendered at full resolution (8000 × 2500) and cut
 * into 512-px tiles held the way the Web Worker holds them
 * (TiledGreySource). One preview is what the worker does per mouse move: the
 * least-cost path of a 1,000-pixel segment (corridor ±60 px, the default for
 * that length) plus its Douglas–Peucker thinning. Goal: ≤ 50 ms. The
 * baseline is one pass over the same corridor's pixels (reading the patch
 * from the tiles and summing it), in the same run; the ratio is printed.
 * The message round trip to the worker (structured clone of a few hundred
 * numbers) is not included.
 */
import { performance } from 'node:perf_hooks';
import { answerAssist } from '../../client/canvas/assist/protocol';
import { DEMO_SECTIONS } from '../../server/synth/demo';
import { EarthModel, renderModel } from '../../server/synth/model';
import { defaultCorridor } from '../../shared/trace-assist/path';
import { TiledGreySource } from '../../shared/trace-assist/source';
import { median, ms, percentile } from './stats';

const def = DEMO_SECTIONS.find((d) => d.lineName === 'TB-11')!;
const model = new EarthModel(def.model, def.seed);
const t0 = performance.now();
const img = renderModel(model, { width: def.width, height: def.height, seed: def.seed });
console.log(`rendered TB-11 ${img.width} × ${img.height} in ${ms(performance.now() - t0)}`);

const span = 512;
const src = new TiledGreySource(img.width, img.height, span, 'darkPositive');
for (let r = 0; r * span < img.height; r++)
  for (let c = 0; c * span < img.width; c++) {
    const x = c * span, y = r * span;
    const w = Math.min(img.width, x + span) - x, h = Math.min(img.height, y + span) - y;
    const g = new Uint8Array(w * h);
    for (let j = 0; j < h; j++) g.set(img.grey.subarray((y + j) * img.width + x, (y + j) * img.width + x + w), j * w);
    src.put(c, r, { x, y, width: w, height: h, grey: g });
  }

// Segments of 1,000 px across the fill above Kestrel Knoll, the cursor 3 px off the straight line.
const segs: [[number, number], [number, number]][] = [];
for (let k = 0; k < 30; k++) {
  const u0 = 600 + k * 200;
  const v0 = 900 + (k % 5) * 37;
  segs.push([[u0 + 0.5, v0 + 0.5], [u0 + 1000.5, v0 + 3.5 + (k % 3) * 4]]);
}
const C = defaultCorridor(1000);

function baseline(a: [number, number], b: [number, number]): number {
  const x0 = Math.floor(Math.min(a[0], b[0]));
  const y0 = Math.floor(Math.min(a[1], b[1])) - C - 1;
  const w = Math.abs(Math.floor(b[0]) - Math.floor(a[0])) + 1;
  const h = Math.abs(Math.floor(b[1]) - Math.floor(a[1])) + 2 * C + 3;
  const p = src.readPatch(x0, y0, w, h);
  let s = 0;
  for (let i = 0; i < w * h; i++) s += p[i];
  return s;
}

// warm-up
for (const [a, b] of segs.slice(0, 5)) {
  answerAssist(src, { kind: 'path', from: a, to: b, phase: 'peak' });
  baseline(a, b);
}
const preview: number[] = [];
const base: number[] = [];
let sink = 0;
for (let round = 0; round < 3; round++) {
  for (const [a, b] of segs) {
    let t = performance.now();
    const r = answerAssist(src, { kind: 'path', from: a, to: b, phase: 'peak' });
    preview.push(performance.now() - t);
    sink += r.result.kind === 'path' ? r.result.points.length : 0;
    t = performance.now();
    sink += baseline(a, b);
    base.push(performance.now() - t);
  }
}
const mp = median(preview);
const mb = median(base);
console.log(`preview of a 1,000-px segment (corridor ±${C} px, path + thinning): median ${ms(mp)}, p95 ${ms(percentile(preview, 95))} (goal ≤ 50 ms)`);
console.log(`one pass over the corridor pixels: median ${ms(mb)}`);
console.log(`ratio preview ÷ one pass: ${(mp / mb).toFixed(1)}   (checksum ${Math.round(sink) % 1000})`);
