/**
 * The true amplitude under the cursor of a SEG-Y section: the image pixel
 * [u, v] is trace ⌊u⌋, sample ⌊v⌋. Amplitudes are fetched in blocks of
 * 32 traces × 128 samples (GET /api/sections/:id/amplitudes, float32 values
 * as stored) and kept in a small LRU cache, so moving the cursor within a
 * block asks the server nothing; the newest block asked for wins.
 */
import { ref, watch, type Ref } from 'vue';
import { getAmplitudes } from '../api/segy';

export const AMPLITUDE_BLOCK = { traces: 32, samples: 128 } as const;
const CACHE_BLOCKS = 64;

export interface AmplitudeAt {
  trace: number;
  sample: number;
  value: number;
}

export function useSegyAmplitude(
  section: Ref<{ id: number; width: number; height: number; segy: unknown | null } | null | undefined>,
  at: Ref<readonly [number, number] | null>,
) {
  const amplitude = ref<AmplitudeAt | null>(null);
  const cache = new Map<string, Promise<number[][]>>();
  let ticket = 0;

  function block(id: number, bt: number, bs: number, width: number, height: number): Promise<number[][]> {
    const key = `${id}:${bt}:${bs}`;
    const hit = cache.get(key);
    if (hit) {
      cache.delete(key);
      cache.set(key, hit); // most recent last
      return hit;
    }
    const trace = bt * AMPLITUDE_BLOCK.traces;
    const sample = bs * AMPLITUDE_BLOCK.samples;
    const p = getAmplitudes(id, {
      trace,
      sample,
      traces: Math.min(AMPLITUDE_BLOCK.traces, width - trace),
      samples: Math.min(AMPLITUDE_BLOCK.samples, height - sample),
    }).then((w) => w.values);
    p.catch(() => cache.delete(key));
    cache.set(key, p);
    while (cache.size > CACHE_BLOCKS) cache.delete(cache.keys().next().value!);
    return p;
  }

  watch(
    [() => section.value, () => at.value],
    async ([s, p]) => {
      const mine = ++ticket;
      if (!s || !s.segy || !p) {
        amplitude.value = null;
        return;
      }
      const trace = Math.floor(p[0]);
      const sample = Math.floor(p[1]);
      if (trace < 0 || sample < 0 || trace >= s.width || sample >= s.height) {
        amplitude.value = null;
        return;
      }
      const bt = Math.floor(trace / AMPLITUDE_BLOCK.traces);
      const bs = Math.floor(sample / AMPLITUDE_BLOCK.samples);
      try {
        const values = await block(s.id, bt, bs, s.width, s.height);
        if (mine !== ticket) return;
        amplitude.value = { trace, sample, value: values[trace - bt * AMPLITUDE_BLOCK.traces][sample - bs * AMPLITUDE_BLOCK.samples] };
      } catch {
        if (mine === ticket) amplitude.value = null;
      }
    },
  );

  return { amplitude };
}
