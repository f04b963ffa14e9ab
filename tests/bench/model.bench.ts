/**
 * Benchmark of the growth forward model (not a test; never fails on time).
 * Run: `npm run bench -- model` (or `npx tsx tests/bench/model.bench.ts`).
 *
 * 1,000 columns × 10,000 steps over a dome under a steady rise, as a ratio to
 * a bare loop doing the same number (10⁷) of Math.tanh evaluations over a
 * Float64Array in the same run (goal ≤ 3). Two cases: the slope rule idle
 * (limit 89°) and active (the default 35°, where the margins steepen).
 */
import { performance } from 'node:perf_hooks';
import { runForwardModel } from '../../shared/forward-model';

const COLUMNS = 1000;
const STEPS = 10000;

function params(slopeLimitDeg: number) {
  return {
    profile: [[0, 205], [5000, 5], [10000, 205]] as [number, number][],
    columns: COLUMNS,
    growth: { GmMmPerYr: 10, I0: 2000, Ik: 250, kPerM: 0.1 },
    subsidence: { kind: 'constant' as const, rateMPerMyr: 3000 },
    stepYr: 5,
    durationYr: 5 * STEPS,
    cycles: { boundaries: [10000, 20000, 30000, 40000], productionFactors: [1, 0.8, 0.6, 0.5, 0.4] },
    slopeLimitDeg,
  };
}

function bareTanh(): number {
  const a = new Float64Array(COLUMNS);
  for (let i = 0; i < COLUMNS; i++) a[i] = i / COLUMNS;
  let s = 0;
  for (let t = 0; t < STEPS; t++) {
    for (let i = 0; i < COLUMNS; i++) {
      const v = Math.tanh(a[i] + t * 1e-6);
      a[i] = v;
      s += v;
    }
  }
  return s;
}

function median(fn: () => unknown, repeats: number): number {
  const times: number[] = [];
  for (let r = 0; r < repeats; r++) {
    const t0 = performance.now();
    fn();
    times.push(performance.now() - t0);
  }
  times.sort((a, b) => a - b);
  return times[Math.floor(times.length / 2)];
}

bareTanh(); // warm up
runForwardModel(params(89));
const floor = median(bareTanh, 5);
console.log(`bare loop of ${(COLUMNS * STEPS).toExponential(0)} tanh over a Float64Array: ${floor.toFixed(1)} ms`);
for (const limit of [89, 35]) {
  const ms = median(() => runForwardModel(params(limit)), 3);
  console.log(`model ${COLUMNS} columns × ${STEPS} steps, slope limit ${limit}°: ${ms.toFixed(1)} ms — ratio ${(ms / floor).toFixed(2)} (goal ≤ 3)`);
}
