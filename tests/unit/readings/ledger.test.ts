import { describe, expect, it } from 'vitest';
import { baseStatus, cycleCompleteness, formatPixel, nextBuildupName, NO_TRACT, tractOptions } from '../../../client/components/ledger/ledger';
import { kestrel } from '../canvas/fixtures';

describe('Ledger helpers', () => {
  it('cycleCompleteness tells which parts of each cycle are in place', () => {
    const [c1, c2, c3] = kestrel().cycles;
    expect(cycleCompleteness(c1)).toEqual({ top: true, marginLeft: true, marginRight: true, flankLeft: true, flankRight: false });
    expect(cycleCompleteness(c2)).toEqual({ top: true, marginLeft: true, marginRight: true, flankLeft: false, flankRight: true });
    expect(cycleCompleteness(c3)).toEqual({ top: true, marginLeft: false, marginRight: false, flankLeft: false, flankRight: false });
    expect(cycleCompleteness({ ...c3, top: [[1, 2]], flankLeft: [[1, 2]] }).top).toBe(false);
    expect(cycleCompleteness({ ...c3, top: [[1, 2]], flankLeft: [[1, 2]] }).flankLeft).toBe(false);
  });

  it('baseStatus words the state of the base', () => {
    const k = kestrel();
    expect(baseStatus(k)).toEqual({ ok: true, text: 'Base traced, 3 points' });
    expect(baseStatus({ ...k, base: [] })).toEqual({ ok: false, text: 'Base not traced' });
    expect(baseStatus({ ...k, base: [[1, 2]] }).ok).toBe(false);
    expect(baseStatus({ ...k, base: [[1, 2], [1, 9]] }).text).toMatch(/one vertical/);
  });

  it('tractOptions offers —, LST, TST, HST and keeps a free label', () => {
    expect(tractOptions(null).map((o) => o.value)).toEqual([NO_TRACT, 'LST', 'TST', 'HST']);
    expect(tractOptions('HST')).toHaveLength(4);
    expect(tractOptions('FSST').map((o) => o.value)).toEqual([NO_TRACT, 'LST', 'TST', 'HST', 'FSST']);
  });

  it('nextBuildupName avoids names in use; formatPixel rounds', () => {
    expect(nextBuildupName([])).toBe('Buildup 1');
    expect(nextBuildupName(['Kestrel Knoll', 'buildup 3'])).toBe('Buildup 4');
    expect(formatPixel([1204.4, 387.6])).toBe('u 1204, v 388');
  });
});
