/** Lengths in the engine's sentences shown in feet (international foot = 0.3048 m exactly, 1959 agreement). */
import { describe, expect, it } from 'vitest';
import { lengthsInText } from '../../shared/units';
import { classifyBuildup } from '../../shared/measure/classify';

describe('lengthsInText', () => {
  it('leaves metres alone', () => {
    const s = 'mean backstep 30.5 m, mean aggradation 292.0 m';
    expect(lengthsInText(s, 'm')).toBe(s);
  });

  it('converts single lengths, lists and ranges, and leaves degrees, velocities, areas, counts and cycle numbers', () => {
    // 30.48 m = 100 ft, 304.8 m = 1000 ft, 3.048 m = 10 ft (exact by the definition of the foot)
    expect(lengthsInText('Rule 2: the net margin trajectory from cycle 1 to cycle 3 is 89.5° (mean backstep 30.48 m, mean aggradation 304.8 m)', 'ft')).toBe(
      'Rule 2: the net margin trajectory from cycle 1 to cycle 3 is 89.5° (mean backstep 100.0 ft, mean aggradation 1000.0 ft)',
    );
    expect(lengthsInText('Top widths narrow upward over the last cycles (3048.0 → 1524.0 → 304.8 m).', 'ft')).toBe('Top widths narrow upward over the last cycles (10000.0 → 5000.0 → 1000.0 ft).');
    expect(lengthsInText('between its margins (x 3048.0–6096.0 m, within 30.48 m of the top)', 'ft')).toBe('between its margins (x 10000.0–20000.0 ft, within 100.0 ft of the top)');
    expect(lengthsInText('mean backstep -30.48 m', 'ft')).toBe('mean backstep -100.0 ft');
    expect(lengthsInText('2 onlap terminations; water 1500 m/s; area 5 m²; 3 m³; 12 metres', 'ft')).toBe('2 onlap terminations; water 1500 m/s; area 5 m²; 3 m³; 12 metres');
  });

  it('every length in the engine’s own sentences becomes feet', () => {
    const c = classifyBuildup({
      cycleCount: 3, topIsDrowningSurface: false, terminationsOnTop: 1, drownedMinTerminations: 2, marginsXM: [6300, 10300],
      terminationToleranceM: 25, topWidthsM: [4000, 2800, 1500], thicknessesM: [180, 120, 60], netTrajectoryDeg: 60,
      netBackstepM: 400, netAggradationM: 690, aggradingToleranceDeg: 10,
    } as Parameters<typeof classifyBuildup>[0]);
    const all = [...c.evidence, ...c.drowningIndicators.map((d) => d.text)];
    expect(all.some((t) => / m\b/.test(t))).toBe(true);
    for (const t of all) expect(lengthsInText(t, 'ft')).not.toMatch(/\d\s?m(?![\w/²³])/);
    expect(all.map((t) => lengthsInText(t, 'ft')).join(' ')).toContain('(13123.4 → 9186.4 → 4921.3 ft)'); // 4000 m / 0.3048 = 13123.36 ft
  });
});
