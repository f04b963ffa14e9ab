/**
 * Benchmark of the measurement engine (not a test; never fails on time).
 * Run: `npx tsx tests/bench/measure.bench.ts`
 *
 * Input: one buildup, 10 cycles, 2,000 vertices on every surface (base,
 * each top, each flank), in TWT with the `buildup` velocity model.
 * Prints:
 *  - measure() time as a ratio to JSON.parse of the same input text (goal ≤ 3);
 *  - Monte Carlo with 1,000 draws on that input (goal ≤ 0.5 s).
 */
import { performance } from 'node:perf_hooks';
import { measure } from '../../shared/measure';

const N = 2000;
const CYCLES = 10;

function makeInput(ranged: boolean) {
  let seed = 12345;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  const line = (x0: number, x1: number, f: (x: number) => number) =>
    Array.from({ length: N }, (_, i) => {
      const x = x0 + ((x1 - x0) * i) / (N - 1);
      return [x, f(x) + (i > 0 && i < N - 1 ? (rnd() - 0.5) * 0.5 : 0)];
    });
  const base = line(0, 20000, () => 2000);
  const cycles = [];
  for (let i = 0; i < CYCLES; i++) {
    const L = 2000 + 600 * i;
    const R = 18000 - 500 * i;
    const t = 1900 - 60 * i;
    const mid = (L + R) / 2;
    const top = line(L, R, (x) => t - 15 * Math.exp(-(((x - mid) / 2000) ** 2)));
    const toe = t + 60 + 40;
    const flankLeft = line(L, L - 400, (x) => t + ((L - x) / 400) * (toe - t));
    const flankRight = line(R, R + 400, (x) => t + ((x - R) / 400) * (toe - t));
    cycles.push({ index: i + 1, top, marginLeft: top[0], marginRight: top[N - 1], flankLeft, flankRight });
  }
  const v = (mode: number, spread: number) => (ranged ? { min: mode - spread, mode, max: mode + spread } : mode);
  return {
    format: 'cayline.interpretation/1',
    verticalDomain: 'twt_ms',
    coordinates: 'world',
    velocity: { kind: 'buildup', water: { v: v(1500, 20), seafloorMs: 400 }, overburden: { v: v(2200, 300) }, carbonate: { v: v(4500, 700) } },
    buildups: [{ name: 'Bench knoll', base, cycles, terminations: [], topIsDrowningSurface: false }],
  };
}

function timeIt(fn: () => void, repeats: number): number {
  const times: number[] = [];
  for (let r = 0; r < repeats; r++) {
    const t0 = performance.now();
    fn();
    times.push(performance.now() - t0);
  }
  times.sort((a, b) => a - b);
  return times[Math.floor(times.length / 2)];
}

const text = JSON.stringify(makeInput(false));
const rangedText = JSON.stringify(makeInput(true));
// warm up the JIT
for (let i = 0; i < 5; i++) measure(JSON.parse(text));

const parseMs = timeIt(() => JSON.parse(text), 15);
const measureMs = timeIt(() => measure(JSON.parse(text)), 15) - parseMs;
const vertices = (CYCLES * 3 + 1) * N;
console.log(`input: 1 buildup, ${CYCLES} cycles, ${N} vertices per surface (${vertices} vertices), ${(text.length / 1e6).toFixed(2)} MB of JSON`);
console.log(`JSON.parse: ${parseMs.toFixed(2)} ms`);
console.log(`measure() (after parse, deterministic): ${measureMs.toFixed(2)} ms → ratio to JSON.parse ${(measureMs / parseMs).toFixed(2)} (goal ≤ 3)`);

const opts = { draws: 1000 };
measure(JSON.parse(rangedText), opts); // warm up
const parsed = () => JSON.parse(rangedText);
const totalMs = timeIt(() => measure(parsed(), opts), 3) - parseMs;
const mcMs = totalMs - measureMs;
console.log(`Monte Carlo, ${opts.draws} draws: ${(mcMs / 1000).toFixed(3)} s (goal ≤ 0.5 s); whole measure() with ranges ${(totalMs / 1000).toFixed(3)} s`);
