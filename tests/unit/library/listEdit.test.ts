import { describe, expect, it } from 'vitest';
import { checkListItem, slugFromLabel, usageCounts } from '../../../client/components/library/listEdit';

describe('controlled lists page logic', () => {
  it('suggests a value from a label', () => {
    expect(slugFromLabel('Ramp margin (distally steepened)')).toBe('ramp-margin-distally-steepened');
    expect(slugFromLabel('  Récif frangeant ')).toBe('recif-frangeant');
    expect(slugFromLabel('***')).toBe('');
    const long = slugFromLabel('A very long label for a setting that goes on and on and on');
    expect(long.length).toBeLessThanOrEqual(40);
    expect(long.endsWith('-')).toBe(false);
  });

  it('checks the form with the shared schema, naming the field', () => {
    const ok = checkListItem({ value: 'ramp-margin', label: ' Ramp margin ' }, [{ value: 'bank' }]);
    expect(ok).toEqual({ ok: true, value: { value: 'ramp-margin', label: 'Ramp margin' }, errors: {} });

    const bad = checkListItem({ value: 'Ramp Margin', label: '' }, []);
    expect(bad.ok).toBe(false);
    expect(bad.errors.value).toBe('must be lower-case letters, digits and hyphens');
    expect(bad.errors.label).toBe('is required');

    const long = checkListItem({ value: 'x'.repeat(41), label: 'y'.repeat(81) }, []);
    expect(long.errors).toEqual({ value: 'must be at most 40 characters', label: 'must be at most 80 characters' });
  });

  it('refuses a value already in the list', () => {
    const dup = checkListItem({ value: 'bank', label: 'Another bank' }, [{ value: 'pinnacle' }, { value: 'bank' }]);
    expect(dup.ok).toBe(false);
    expect(dup.errors).toEqual({ value: '"bank" is already in this list' });
  });

  it('counts analogues per value from facet counts (missing values count nothing)', () => {
    const u = usageCounts({ setting: [{ value: 'bank', count: 12 }], climate: [{ value: 'tropical', count: 3 }], tags: [{ value: 'x', count: 1 }] });
    expect(u.setting).toEqual({ bank: 12 });
    expect(u.factory).toEqual({});
    expect(u.climate.tropical).toBe(3);
    expect(usageCounts(undefined)).toEqual({ setting: {}, factory: {}, climate: {} });
  });
});
