import { describe, expect, it } from 'vitest';
import { DEFAULT_LOOKALIKE_METRICS } from '../../../shared/schemas/analogues';
import { lookAlikesQuery, lookAlikesRequest, parseLookAlikes } from '../../../client/components/library/lookAlikeState';

describe('Look-alikes state in the URL', () => {
  it('defaults: metrics mode, k 10, the default metrics; nothing to compare without a source', () => {
    const s = parseLookAlikes({});
    expect(s).toEqual({ from: null, mode: 'metrics', k: 10, metrics: DEFAULT_LOOKALIKE_METRICS });
    expect(lookAlikesRequest(s)).toBeNull();
    expect(lookAlikesQuery(s)).toEqual({});
  });

  it('round-trips a buildup, shape mode, k and weighted metrics', () => {
    const q = { buildup: '7', mode: 'shape', k: '5', m: 'heightM:2,aspectRatio:0.5' };
    const s = parseLookAlikes(q);
    expect(s.from).toEqual({ buildupId: 7 });
    expect(s.metrics).toEqual([
      { key: 'heightM', weight: 2 },
      { key: 'aspectRatio', weight: 0.5 },
    ]);
    expect(lookAlikesQuery(s)).toEqual(q);
    expect(lookAlikesRequest(s)).toEqual({ from: { buildupId: 7 }, mode: 'shape', k: 5 });
  });

  it('drops unknown or repeated metrics and bad weights; zero weights are left out of the request', () => {
    const s = parseLookAlikes({ analogue: '3', m: 'heightM:0,nonsense:1,flankAngleDeg:-2,heightM:4,cycleCount' });
    expect(s.metrics).toEqual([
      { key: 'heightM', weight: 0 },
      { key: 'cycleCount', weight: 1 },
    ]);
    expect(lookAlikesRequest(s)).toEqual({ from: { analogueId: 3 }, mode: 'metrics', k: 10, metrics: [{ key: 'cycleCount', weight: 1 }] });
    expect(lookAlikesRequest({ ...s, metrics: [{ key: 'heightM', weight: 0 }] })).toBeNull();
  });

  it('ignores ids that are not positive integers and caps k at 100', () => {
    expect(parseLookAlikes({ buildup: '-1', analogue: '2.5', k: '900' })).toMatchObject({ from: null, k: 100 });
  });
});
