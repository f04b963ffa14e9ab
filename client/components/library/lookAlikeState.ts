/**
 * The Look-alikes page keeps its request in the URL:
 * `buildup=ID` or `analogue=ID`, `mode=metrics|shape`, `k=10`,
 * `m=heightM:1,aspectRatio:2` (metrics and weights). Pure.
 */
import {
  DEFAULT_LOOKALIKE_METRICS,
  METRIC_KEYS,
  type LookAlikesRequest,
  type MetricKey,
} from '../../../shared/schemas/analogues';
import type { RouteQuery } from './searchState';

export interface LookAlikeState {
  from: { buildupId: number } | { analogueId: number } | null;
  mode: 'metrics' | 'shape';
  k: number;
  metrics: { key: MetricKey; weight: number }[];
}

const one = (v: RouteQuery[string]): string | undefined => (Array.isArray(v) ? (v[0] ?? undefined) : (v ?? undefined));
const posInt = (s: string | undefined): number | null => {
  const n = Number(s);
  return s !== undefined && Number.isInteger(n) && n > 0 ? n : null;
};

export function parseLookAlikes(q: RouteQuery): LookAlikeState {
  const b = posInt(one(q.buildup));
  const a = posInt(one(q.analogue));
  const k = posInt(one(q.k));
  const metrics: { key: MetricKey; weight: number }[] = [];
  for (const part of (one(q.m) ?? '').split(',')) {
    const [key, w] = part.split(':');
    if (!(METRIC_KEYS as readonly string[]).includes(key) || metrics.some((m) => m.key === key)) continue;
    const weight = w === undefined || w === '' ? 1 : Number(w);
    if (!Number.isFinite(weight) || weight < 0 || weight > 100) continue;
    metrics.push({ key: key as MetricKey, weight });
  }
  return {
    from: b ? { buildupId: b } : a ? { analogueId: a } : null,
    mode: one(q.mode) === 'shape' ? 'shape' : 'metrics',
    k: k ? Math.min(k, 100) : 10,
    metrics: metrics.length ? metrics : DEFAULT_LOOKALIKE_METRICS.map((m) => ({ ...m })),
  };
}

export function lookAlikesQuery(s: LookAlikeState): Record<string, string> {
  const out: Record<string, string> = {};
  if (s.from && 'buildupId' in s.from) out.buildup = String(s.from.buildupId);
  if (s.from && 'analogueId' in s.from) out.analogue = String(s.from.analogueId);
  if (s.mode !== 'metrics') out.mode = s.mode;
  if (s.k !== 10) out.k = String(s.k);
  const isDefault =
    s.metrics.length === DEFAULT_LOOKALIKE_METRICS.length &&
    s.metrics.every((m, i) => m.key === DEFAULT_LOOKALIKE_METRICS[i].key && m.weight === DEFAULT_LOOKALIKE_METRICS[i].weight);
  if (!isDefault) out.m = s.metrics.map((m) => `${m.key}:${m.weight}`).join(',');
  return out;
}

/** The API request, or null when there is nothing to compare from (or no metric with a weight). */
export function lookAlikesRequest(s: LookAlikeState): LookAlikesRequest | null {
  if (!s.from) return null;
  if (s.mode === 'shape') return { from: s.from, mode: 'shape', k: s.k };
  const metrics = s.metrics.filter((m) => m.weight > 0);
  if (metrics.length === 0) return null;
  return { from: s.from, mode: 'metrics', k: s.k, metrics };
}
