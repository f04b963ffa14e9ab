/**
 * Client side of the review: the Readings comparison of two kept versions
 * (numbers, change, change in %), the transitions offered from the shared
 * table, and a save refused as signed off keeping its own code and message
 * (the save call used to turn every 409 into `version_conflict`).
 */
import { afterEach, describe, expect, it, vi } from 'vitest';
import { compareReadings, formatPct } from '../../../client/components/review/compare';
import { saveBuildup } from '../../../client/api/buildups';
import { signedOffRefusal } from '../../../client/api/review';
import { isApiError } from '../../../client/api/http';
import { measure } from '../../../shared/measure/index';
import { allowedTransitions } from '../../../shared/schemas/review';

/** A one-cycle buildup in depth (invented Kestrel Knoll numbers): base at 2000 m, crest `crest` m. */
function output(crest: number) {
  return measure({
    verticalDomain: 'depth_m',
    buildups: [{ name: 'Kestrel Knoll', base: [[0, 2000], [4000, 2000]], cycles: [{ index: 1, top: [[1000, 1800], [2000, crest], [3000, 1800]], marginLeft: [1000, 1800], marginRight: [3000, 1800] }] }],
  });
}

describe('compareReadings', () => {
  it('gives each number of A and B, B − A and the change in % of A', () => {
    const a = output(1700); // 300 m high
    const b = output(1600); // 400 m high
    const rows = compareReadings(a, b);
    const h = rows.find((r) => r.key === 'height')!;
    expect(h.a).toBeCloseTo(300, 9);
    expect(h.b).toBeCloseTo(400, 9);
    expect(h.delta).toBeCloseTo(100, 9);
    expect(h.pct).toBeCloseTo(33.333333, 5);
    expect(h.changed).toBe(true);
    const w = rows.find((r) => r.key === 'baseWidth')!;
    expect(w.delta).toBe(0);
    expect(w.pct).toBe(0);
    expect(w.changed).toBe(false);
    expect(rows.some((r) => r.key === 'c1.thickness')).toBe(true);
  });

  it('a side without the number: no change figures; zero in A: no per cent', () => {
    const a = output(1700);
    const rows = compareReadings(a, null);
    expect(rows.find((r) => r.key === 'height')).toMatchObject({ b: null, delta: null, pct: null, changed: true });
    const both = compareReadings(a, a);
    const term = both.find((r) => r.key === 'terminations')!;
    expect(term).toMatchObject({ a: 0, b: 0, delta: 0, pct: null, changed: false });
    expect(compareReadings(null, null)).toEqual([]);
  });

  it('formats per cent with sign and typographic minus', () => {
    expect(formatPct(12.345)).toBe('+12.3\u2009%');
    expect(formatPct(-4)).toBe('\u22124.0\u2009%');
    expect(formatPct(0)).toBe('±0.0\u2009%');
    expect(formatPct(null)).toBe('—');
  });
});

describe('transitions offered from the shared table', () => {
  it('interpreters send Drafts; reviewers and admins decide; authors never sign off; Needs rework offers nothing (a save moves it)', () => {
    const to = (s: Parameters<typeof allowedTransitions>[0], role: string, author = false) => allowedTransitions(s, role, author).map((t) => t.to);
    expect(to('draft', 'interpreter')).toEqual(['out_for_review']);
    expect(to('draft', 'reviewer')).toEqual([]);
    expect(to('out_for_review', 'reviewer')).toEqual(['needs_rework', 'signed_off']);
    expect(to('out_for_review', 'admin', true)).toEqual(['needs_rework']);
    expect(to('out_for_review', 'curator')).toEqual([]);
    expect(to('needs_rework', 'admin')).toEqual([]);
    expect(to('signed_off', 'reviewer')).toEqual(['draft']);
    expect(to('signed_off', 'interpreter')).toEqual([]);
  });
});

describe('saving a signed-off buildup', () => {
  afterEach(() => vi.unstubAllGlobals());

  it('keeps the 409 signed_off code, message and details', async () => {
    const body = {
      code: 'signed_off',
      message: '"Kestrel Knoll" is signed off (version 4 by Remy Dunlin on 2026-12-04) and cannot change.',
      details: { buildupId: 7, name: 'Kestrel Knoll', version: 4, signedOffBy: { id: 4, name: 'Remy Dunlin' }, signedOffAt: '2026-12-04T05:00:00.000Z' },
    };
    vi.stubGlobal('fetch', vi.fn(async () => new Response(JSON.stringify(body), { status: 409, headers: { 'content-type': 'application/json' } })));
    const e = await saveBuildup(7, { version: 4, geometry: { base: [], cycles: [], terminations: [], topIsDrowningSurface: false } }).catch((x: unknown) => x);
    expect(isApiError(e) && e.code).toBe('signed_off');
    expect((e as Error).message).toBe(body.message);
    expect(signedOffRefusal(e)).toEqual(body.details);
  });

  it('still normalises any other 409 to version_conflict', async () => {
    vi.stubGlobal('fetch', vi.fn(async () => new Response(JSON.stringify({ code: 'conflict', message: 'stale' }), { status: 409, headers: { 'content-type': 'application/json' } })));
    const e = await saveBuildup(7, { version: 1, geometry: { base: [], cycles: [], terminations: [], topIsDrowningSurface: false } }).catch((x: unknown) => x);
    expect(isApiError(e) && e.code).toBe('version_conflict');
    expect(signedOffRefusal(e)).toBeNull();
  });
});

describe('review state colours', () => {
  it('text on each state fill reaches a contrast ratio of 4.5 (WCAG 2.x, success criterion 1.4.3)', async () => {
    const { REVIEW_LOOK } = await import('../../../client/components/review/states');
    const { contrastRatio } = await import('../../../client/canvas/palette');
    for (const [state, look] of Object.entries(REVIEW_LOOK)) expect(contrastRatio(look.text, look.fill), state).toBeGreaterThanOrEqual(4.5);
    const fills = new Set(Object.values(REVIEW_LOOK).map((l) => l.fill));
    expect(fills.size).toBe(4);
  });
});

describe('the working copy after someone else’s save or a sign-off', () => {
  const signedOff = (version: number, savedVersion: number) => ({ buildupId: 7, signedOff: { version, savedVersion, by: null, at: '2026-12-05T09:00:00.000Z' } });
  const copy = (version: number) => ({ id: 'b1', serverId: 7, version });

  it('follows only a version kept at sign-off after the very version it holds', async () => {
    const { keptBySignOff } = await import('../../../client/composables/useInterpretReview');
    expect(keptBySignOff(signedOff(5, 4), copy(4), [])).toBe(5); // kept at sign-off from version 4: same geometry
    expect(keptBySignOff(signedOff(6, 4), copy(5), [])).toBe(6); // two kept in a row (sign-off, reopen, sign-off)
    expect(keptBySignOff(signedOff(5, 5), copy(5), [])).toBeNull(); // nothing newer
  });

  it('never takes the number of someone else’s save, so the next save meets the conflict', async () => {
    const { keptBySignOff } = await import('../../../client/composables/useInterpretReview');
    // Not signed off: a newer version is a save by someone else (this used to be followed silently).
    expect(keptBySignOff({ buildupId: 7, signedOff: null }, copy(4), [])).toBeNull();
    // Signed off after someone else saved version 5: the copy (4) has other geometry.
    expect(keptBySignOff(signedOff(5, 5), copy(4), [])).toBeNull();
    expect(keptBySignOff(signedOff(6, 5), copy(4), [])).toBeNull();
    // Unsaved edits, another buildup's review.
    expect(keptBySignOff(signedOff(5, 4), copy(4), ['b1'])).toBeNull();
    expect(keptBySignOff({ ...signedOff(5, 4), buildupId: 8 }, copy(4), [])).toBeNull();
  });
});
