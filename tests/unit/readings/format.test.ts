import { describe, expect, it } from 'vitest';
import {
  MINUS,
  THIN_SPACE as T,
  checklistItem,
  formatAge,
  formatArea,
  formatDegrees,
  formatMetres,
  formatNumber,
  formatRatio,
  formatRate,
  formatScientific,
  formatVolume,
  rangeRows,
} from '../../../client/components/readings/format';
import { measurabilityIssues } from '../../../shared/editor/model';
import { contextIssues, incompleteCycleNotes } from '../../../client/composables/useLiveReadings';
import { kestrel } from '../canvas/fixtures';

describe('number formatting', () => {
  it('groups thousands with a thin space and uses a true minus sign', () => {
    expect(formatNumber(1234567.891, 1)).toBe(`1${T}234${T}567.9`);
    expect(formatNumber(-4520, 0)).toBe(`${MINUS}4${T}520`);
    expect(formatNumber(999, 0)).toBe('999');
    expect(formatNumber(12.5, 1, { signed: true })).toBe('+12.5');
    expect(formatNumber(-0.01, 1)).toBe('0.0'); // no "−0.0"
    expect(formatNumber(null)).toBe('—');
    expect(formatNumber(NaN)).toBe('—');
  });

  it('writes lengths, angles, ratios, rates and ages with their units', () => {
    expect(formatMetres(312.44)).toBe('312.4 m');
    expect(formatMetres(4520.4)).toBe(`4${T}520 m`);
    expect(formatMetres(-35.25, { signed: true })).toBe(`${MINUS}35.3 m`);
    expect(formatDegrees(12.345)).toBe('12.3°');
    expect(formatDegrees(undefined)).toBe('—');
    expect(formatRatio(0.0691234)).toBe('0.0691');
    expect(formatRatio(1.4)).toBe('1.40');
    expect(formatRate(35.56)).toBe('35.6 m/Myr');
    expect(formatAge(12.4)).toBe('12.4 Ma');
    expect(formatAge(5.3331)).toBe('5.333 Ma');
  });

  it('switches areas and volumes to scientific notation from 10⁷', () => {
    expect(formatArea(812345.6)).toBe(`812${T}346 m²`);
    expect(formatArea(9_999_999)).toBe(`9${T}999${T}999 m²`);
    expect(formatArea(12_345_678)).toBe('1.23 × 10⁷ m²');
    expect(formatVolume(3.4249e9)).toBe('3.42 × 10⁹ m³');
    expect(formatScientific(-2.5e-4)).toBe(`${MINUS}2.50 × 10⁻⁴`);
    expect(formatScientific(0)).toBe('0');
  });
});

describe('checklist wording', () => {
  it('turns the measurability issues of a buildup into instructions', () => {
    const k = kestrel();
    const empty = { ...k, base: [], cycles: [k.cycles[2]] };
    const texts = [...measurabilityIssues(empty), ...incompleteCycleNotes(empty)].map((i) => checklistItem(i).text);
    expect(texts).toEqual(['Trace the base', 'Trace a cycle top and pin both its margins', 'Pin both margins of cycle 1']);
  });

  it('names the cycle (1-based) and side of margin and age problems', () => {
    expect(checklistItem('cycles[1].marginLeft: missing')).toEqual({ issue: 'cycles[1].marginLeft: missing', text: 'Pin the left margin of cycle 2', cycle: 2 });
    expect(checklistItem("cycles[0].marginRight: outside the top's u-range [150, 850]").text).toBe('Move the right Margin pin of cycle 1 onto its top');
    expect(checklistItem('cycles[2].top: needs at least 2 points').text).toBe('Trace the top of cycle 3');
    expect(checklistItem('cycles[1].ageTopMa: must be younger (a smaller Ma) than the top of cycle 1 (14.2 Ma)').text).toBe(
      'Make the top age of cycle 2 younger than the cycle below it',
    );
    expect(checklistItem('cycles[0].flankLeft[3]: not a finite [u, v] point').text).toBe('Fix point 4 of the left flank of cycle 1');
    expect(checklistItem('base: needs a u-extent (all its points share one u)').text).toMatch(/^Give the base some width/);
  });

  it('words calibration issues and keeps unknown ones as they are', () => {
    expect(checklistItem(contextIssues(null)[0]).text).toBe('Calibrate the section: place at least 3 Ties');
    expect(checklistItem('calibration: needs at least 3 Ties (has 2)').text).toBe('Place 1 more Tie to calibrate the section');
    expect(checklistItem('something: odd').text).toBe('something: odd');
  });
});

describe('rangeRows', () => {
  it('lists height, area, volume and each traced flank with formatted P90/P50/P10', () => {
    const p = (a: number, b: number, c: number) => ({ p90: a, p50: b, p10: c });
    const rows = rangeRows({
      heightM: p(280.04, 300, 320.96),
      areaM2: p(1e6, 1.1e6, 1.2e6),
      volumeM3: p(2e9, 2.5e9, 3e9),
      cycles: [
        { index: 1, left: { flankAngleDeg: p(10, 12, 14) }, right: { flankAngleDeg: null } },
        { index: 2, left: { flankAngleDeg: null }, right: { flankAngleDeg: p(20, 22.25, 24) } },
      ],
    });
    expect(rows.map((r) => r.label)).toEqual(['Height', 'Area', 'Volume', 'Flank L, cycle 1', 'Flank R, cycle 2']);
    expect(rows[0]).toMatchObject({ p90: '280.0 m', p50: '300.0 m', p10: '321.0 m' });
    expect(rows[2].p50).toBe('2.50 × 10⁹ m³');
    expect(rows[4].p50).toBe('22.3°');
  });
});
