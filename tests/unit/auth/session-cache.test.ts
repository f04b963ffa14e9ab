import { describe, expect, it } from 'vitest';
import { SessionCache, sessionTrustMs } from '../../../server/services/session-cache';
import type { User } from '../../../server/models/index';

const user = { id: 7, role: 'interpreter' } as unknown as User;
const T0 = 1_000_000;
const kept = (expiresAt = T0 + 3_600_000) => ({ user, sid: '3f0c1a52-8d4e-4c1b-9a61-0b2f7c9e5d11', expiresAt });

function listening(trustMs = 5000) {
  const c = new SessionCache(trustMs);
  c.setListening(true);
  return c;
}

describe('session cache', () => {
  it('keeps and answers nothing while its change listener is not listening', () => {
    const c = new SessionCache();
    c.remember('tok', kept(), c.ticket(), T0);
    expect(c.lookup('tok', T0 + 1)).toBeUndefined();
    expect(c.size).toBe(0);
  });

  it('answers a remembered token within the trust window, and not after it', () => {
    const c = listening(5000);
    c.remember('tok', kept(), c.ticket(), T0);
    expect(c.lookup('tok', T0 + 4999)?.user).toBe(user);
    expect(c.lookup('other', T0 + 1)).toBeUndefined();
    expect(c.lookup('tok', T0 + 5000)).toBeUndefined();
    expect(c.size).toBe(0); // the stale entry is dropped
  });

  it("never answers at or after the token's own expiry", () => {
    const c = listening(60_000);
    c.remember('tok', kept(T0 + 1000), c.ticket(), T0);
    expect(c.lookup('tok', T0 + 999)).toBeDefined();
    expect(c.lookup('tok', T0 + 1000)).toBeUndefined();
    c.remember('late', kept(T0), c.ticket(), T0); // already expired when checked: not kept
    expect(c.size).toBe(0);
  });

  it('forgets everything on a change, and drops an answer read before the change', () => {
    const c = listening();
    c.remember('a', kept(), c.ticket(), T0);
    const ticket = c.ticket(); // a request starts its check…
    c.clear(); // …a session changes meanwhile (NOTIFY or a write in this process)
    c.remember('b', kept(), ticket, T0); // …its answer may predate the change
    expect(c.lookup('a', T0 + 1)).toBeUndefined();
    expect(c.lookup('b', T0 + 1)).toBeUndefined();
    c.remember('b', kept(), c.ticket(), T0);
    expect(c.lookup('b', T0 + 1)).toBeDefined();
  });

  it('forgets everything when the listener stops, and starts empty when it is back', () => {
    const c = listening();
    c.remember('a', kept(), c.ticket(), T0);
    c.setListening(false);
    c.setListening(true);
    expect(c.lookup('a', T0 + 1)).toBeUndefined();
  });

  it('counts hits and misses', () => {
    const c = listening();
    c.remember('a', kept(), c.ticket(), T0);
    c.lookup('a', T0 + 1);
    c.lookup('a', T0 + 2);
    c.lookup('z', T0 + 2);
    expect([c.hits, c.misses]).toEqual([2, 1]);
  });

  it('reads its trust window from CAYLINE_SESSION_TRUST_MS, naming the setting when it is not a number of milliseconds', () => {
    expect(sessionTrustMs(undefined)).toBe(5000);
    expect(sessionTrustMs(' ')).toBe(5000);
    expect(sessionTrustMs('0')).toBe(0);
    expect(sessionTrustMs('60000')).toBe(60000);
    expect(() => sessionTrustMs('-1')).toThrow(/CAYLINE_SESSION_TRUST_MS/);
    expect(() => sessionTrustMs('soon')).toThrow(/CAYLINE_SESSION_TRUST_MS/);
  });

  it('with a trust window of 0 never answers from what it kept', () => {
    const c = listening(0);
    c.remember('a', kept(), c.ticket(), T0);
    expect(c.lookup('a', T0)).toBeUndefined();
  });
});
