/**
 * Per-metric differences between a Look-alikes query and one match, computed
 * in the browser for the shape mode (the API sends them for the metrics mode
 * only). Same rows as the API's: match minus query in raw units, and the
 * difference in library standard deviations in the metric's own space
 * (log10 for metrics spanning decades, as `metricSpaceValue` has it). Pure.
 */
import { METRIC_KEYS, type MetricKey, type Metrics } from '../../../shared/schemas/analogues';
import { metricSpaceValue } from '../../../shared/analogue-shape';

export interface MetricDifference {
  key: MetricKey;
  query: number;
  match: number;
  difference: number;
  /** In library SDs; null when the spread of that metric is not known (or zero). */
  zDifference: number | null;
}

/** The library's spread per metric (as the API's `metrics[].sd`, in metric space). */
export type MetricSpread = Partial<Record<MetricKey, number>>;

/**
 * Rows for `keys` (in that order) where both sides have a value usable in
 * metric space (finite, and positive for log metrics); other keys are left out.
 */
export function metricDifferences(query: Metrics, match: Metrics, keys: readonly MetricKey[], spread: MetricSpread = {}): MetricDifference[] {
  const out: MetricDifference[] = [];
  const seen = new Set<MetricKey>();
  for (const key of keys) {
    if (seen.has(key) || !(METRIC_KEYS as readonly string[]).includes(key)) continue;
    seen.add(key);
    const q = query[key];
    const m = match[key];
    const qs = metricSpaceValue(key, q);
    const ms = metricSpaceValue(key, m);
    if (qs === null || ms === null) continue;
    const sd = spread[key];
    out.push({
      key,
      query: q as number,
      match: m as number,
      difference: (m as number) - (q as number),
      zDifference: sd !== undefined && Number.isFinite(sd) && sd > 0 ? (ms - qs) / sd : null,
    });
  }
  return out;
}

/** Keys among `keys` the query can be compared on (a value usable in metric space). */
export function comparableKeys(query: Metrics, keys: readonly MetricKey[]): MetricKey[] {
  return keys.filter((k, i) => keys.indexOf(k) === i && metricSpaceValue(k, query[k]) !== null);
}
