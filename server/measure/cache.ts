/**
 * Measurements of stored buildups, kept in a small in-process LRU
 * (lru-cache). The key names everything the numbers depend on (buildup id and
 * version, calibration id and version, the section's vertical domain, the
 * velocity model with its updatedAt, the options), so a save, a new
 * calibration or a velocity change simply asks under a new key and old
 * entries age out. The cached value is the promise: concurrent identical
 * requests share one computation; a failed computation is not kept.
 *
 * One cache per database connection (a WeakMap on the Sequelize instance), so
 * two apps in one process (tests) never see each other's rows under equal ids.
 */
import { LRUCache } from 'lru-cache';
import type { MeasurementOutput } from '../../shared/measure/index';

const MAX_ENTRIES = Number(process.env.MEASURE_CACHE_ENTRIES ?? 200);

const caches = new WeakMap<object, LRUCache<string, Promise<MeasurementOutput>>>();

function cacheFor(owner: object): LRUCache<string, Promise<MeasurementOutput>> {
  let c = caches.get(owner);
  if (!c) {
    c = new LRUCache({ max: Number.isInteger(MAX_ENTRIES) && MAX_ENTRIES > 0 ? MAX_ENTRIES : 200 });
    caches.set(owner, c);
  }
  return c;
}

/** JSON with object keys sorted and undefined members left out: equal options give equal text. */
export function stableJson(v: unknown): string {
  if (Array.isArray(v)) return `[${v.map((x) => (x === undefined ? 'null' : stableJson(x))).join(',')}]`;
  if (v && typeof v === 'object') {
    const o = v as Record<string, unknown>;
    return `{${Object.keys(o)
      .filter((k) => o[k] !== undefined)
      .sort()
      .map((k) => `${JSON.stringify(k)}:${stableJson(o[k])}`)
      .join(',')}}`;
  }
  return JSON.stringify(v) ?? 'null';
}

/** The cached measurement under `key` for `owner`, or `compute()` started now and cached. */
export function cachedMeasurement(owner: object, key: string, compute: () => Promise<MeasurementOutput>): Promise<MeasurementOutput> {
  const cache = cacheFor(owner);
  const hit = cache.get(key);
  if (hit) return hit;
  const p = compute();
  cache.set(key, p);
  p.catch(() => {
    if (cache.get(key) === p) cache.delete(key);
  });
  return p;
}
