import { describe, expect, it } from 'vitest';
import {
  FOOT_M,
  areaLabel,
  fromDisplay,
  fromDisplayArea,
  fromDisplayLength,
  fromDisplayVelocity,
  fromDisplayVolume,
  isLengthUnit,
  lengthLabel,
  quantityLabel,
  toDisplay,
  toDisplayArea,
  toDisplayLength,
  toDisplayRate,
  toDisplayVelocity,
  toDisplayVolume,
  velocityLabel,
  volumeLabel,
  withUnit,
} from '../../shared/units';

/*
 * Source: the international yard and pound agreement of 1959 defines
 * 1 yard = 0.9144 m exactly, so 1 ft = 1/3 yd = 0.3048 m exactly, 1 in =
 * 25.4 mm exactly, and the statute mile (5280 ft) = 1609.344 m exactly
 * (NIST Special Publication 811, appendix B.8; NIST Handbook 44, appendix C).
 */
describe('international foot (1959 agreement)', () => {
  it('is 0.3048 m exactly', () => {
    expect(FOOT_M).toBe(0.3048);
    expect(fromDisplayLength(1, 'ft')).toBe(0.3048);
  });

  it('1 yard = 3 ft = 0.9144 m', () => {
    expect(fromDisplayLength(3, 'ft')).toBeCloseTo(0.9144, 12);
    expect(toDisplayLength(0.9144, 'ft')).toBeCloseTo(3, 12);
  });

  it('1 inch = 1/12 ft = 25.4 mm', () => {
    expect(fromDisplayLength(1 / 12, 'ft') * 1000).toBeCloseTo(25.4, 10);
  });

  it('1 mile = 5280 ft = 1609.344 m', () => {
    expect(fromDisplayLength(5280, 'ft')).toBeCloseTo(1609.344, 9);
    expect(toDisplayLength(1609.344, 'ft')).toBeCloseTo(5280, 9);
  });

  it('1 m = 3.280839895… ft (1 / 0.3048)', () => {
    // 1 / 0.3048 = 3.28083989501312… (exact decimal expansion of 10000/3048)
    expect(toDisplayLength(1, 'ft')).toBeCloseTo(3.280839895013123, 12);
  });

  it('is not the US survey foot (1200/3937 m)', () => {
    // Source: NIST Handbook 44 appendix C: US survey foot = 1200/3937 m ≈ 0.3048006 m.
    const surveyFoot = 1200 / 3937;
    expect(Math.abs(fromDisplayLength(1, 'ft') - surveyFoot)).toBeGreaterThan(5e-7);
  });

  it('metres are unchanged', () => {
    expect(toDisplayLength(1234.5, 'm')).toBe(1234.5);
    expect(fromDisplayLength(1234.5, 'm')).toBe(1234.5);
    expect(toDisplayArea(7, 'm')).toBe(7);
    expect(toDisplayVolume(7, 'm')).toBe(7);
    expect(toDisplayVelocity(2500, 'm')).toBe(2500);
  });
});

describe('derived quantities', () => {
  it('1 ft² = 0.09290304 m² and 1 acre = 43560 ft² = 4046.8564224 m²', () => {
    // Source: NIST SP 811 appendix B.8 (acre based on the international foot).
    expect(fromDisplayArea(1, 'ft')).toBeCloseTo(0.09290304, 14);
    expect(fromDisplayArea(43560, 'ft')).toBeCloseTo(4046.8564224, 8);
    expect(toDisplayArea(0.09290304, 'ft')).toBeCloseTo(1, 12);
  });

  it('1 ft³ = 0.028316846592 m³', () => {
    // Source: NIST SP 811 appendix B.8.
    expect(fromDisplayVolume(1, 'ft')).toBeCloseTo(0.028316846592, 15);
    expect(toDisplayVolume(0.028316846592, 'ft')).toBeCloseTo(1, 12);
  });

  it('velocities convert like lengths: 3048 m/s = 10000 ft/s', () => {
    expect(toDisplayVelocity(3048, 'ft')).toBeCloseTo(10000, 9);
    expect(fromDisplayVelocity(10000, 'ft')).toBeCloseTo(3048, 9);
  });

  it('rates convert like lengths: 30.48 m/Myr = 100 ft/Myr', () => {
    expect(toDisplayRate(30.48, 'ft')).toBeCloseTo(100, 10);
  });

  it('toDisplay/fromDisplay round-trip every quantity and leave angles, ratios and TWT alone', () => {
    for (const q of ['length', 'area', 'volume', 'velocity', 'rate'] as const) {
      const si = 1234.5678;
      expect(fromDisplay(q, toDisplay(q, si, 'ft'), 'ft')).toBeCloseTo(si, 9);
      expect(toDisplay(q, si, 'ft')).not.toBeCloseTo(si, 3);
    }
    for (const q of ['angle', 'ratio', 'twt'] as const) {
      expect(toDisplay(q, 12.5, 'ft')).toBe(12.5);
      expect(fromDisplay(q, 12.5, 'ft')).toBe(12.5);
    }
  });
});

describe('labels', () => {
  it('names the unit of every quantity', () => {
    expect(lengthLabel('m')).toBe('m');
    expect(lengthLabel('ft')).toBe('ft');
    expect(areaLabel('ft')).toBe('ft²');
    expect(volumeLabel('m')).toBe('m³');
    expect(volumeLabel('ft')).toBe('ft³');
    expect(velocityLabel('ft')).toBe('ft/s');
    expect(velocityLabel('m')).toBe('m/s');
    expect(quantityLabel('twt', 'ft')).toBe('ms');
    expect(quantityLabel('angle', 'ft')).toBe('°');
    expect(withUnit('Height', 'length', 'ft')).toBe('Height (ft)');
    expect(withUnit('Aspect ratio', 'ratio', 'ft')).toBe('Aspect ratio');
  });

  it('accepts only m and ft', () => {
    expect(isLengthUnit('m')).toBe(true);
    expect(isLengthUnit('ft')).toBe(true);
    expect(isLengthUnit('feet')).toBe(false);
    expect(isLengthUnit('usft')).toBe(false);
    expect(isLengthUnit(undefined)).toBe(false);
  });
});

describe('display formatting in the chosen unit', () => {
  it('Readings formatters convert SI values at display and name the unit', async () => {
    const { formatMetres, formatArea, formatVolume, formatRate, rangeRows, THIN_SPACE } = await import('../../shared/format');
    // 304.8 m = 1000 ft exactly (international foot)
    expect(formatMetres(304.8, { unit: 'ft' })).toBe(`1${THIN_SPACE}000 ft`);
    expect(formatMetres(304.8)).toBe('304.8 m');
    expect(formatMetres(-3.048, { unit: 'ft', signed: true })).toBe('\u221210.0 ft');
    // 92.90304 m² = 1000 ft²; 28.316846592 m³ = 1000 ft³
    expect(formatArea(92.90304, 'ft')).toBe(`1${THIN_SPACE}000 ft²`);
    expect(formatVolume(28.316846592, 'ft')).toBe(`1${THIN_SPACE}000 ft³`);
    expect(formatRate(30.48, 'ft')).toBe('100.0 ft/Myr');
    const p = { p90: 30.48, p50: 60.96, p10: 91.44 };
    const rows = rangeRows({ heightM: p, areaM2: p, volumeM3: p, cycles: [] }, 'ft');
    expect(rows[0].p50).toBe('200.0 ft');
    expect(rows[1].p50).toMatch(/ ft²$/);
  });

  it('the Ruler label shows feet when asked, the angle unchanged', async () => {
    const { formatRuler } = await import('../../client/canvas/tools/ruler');
    const r = { distanceM: 1609.344, angleDeg: 12.34, dzM: -30.48 } as Parameters<typeof formatRuler>[0];
    expect(formatRuler(r, 'en-US', 'ft')).toBe('5,280 ft · 12.3° true · Δz −100 ft');
    expect(formatRuler(r, 'en-US')).toBe('1,609 m · 12.3° true · Δz −30 m');
  });
});

describe('velocities in the chosen unit', () => {
  it('the velocity model summary shows ft/s (3048 m/s = 10 000 ft/s), TWT still in ms', async () => {
    const { velocitySummary } = await import('../../client/components/velocity/velocityForm');
    expect(velocitySummary({ kind: 'constant', v: 3048 }, 'ft')).toBe('Constant 10000 ft/s');
    expect(velocitySummary({ kind: 'constant', v: 3048 })).toBe('Constant 3048 m/s');
    const b = velocitySummary({ kind: 'buildup', water: { v: 1524, seafloorMs: 120 }, overburden: { v: { min: 2133.6, mode: 2286, max: 2438.4 } }, carbonate: { v: 4572 } }, 'ft');
    expect(b).toBe('Buildup-aware: water 5000 to 120 ms · overburden 7000–8000 · carbonate 15000 ft/s');
  });
});
