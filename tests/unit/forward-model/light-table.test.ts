/**
 * The model reads the light term tanh(I0·e^(−k·d)/Ik) of Bosscher & Schlager
 * (1992) from a cubic Hermite table; here the table is checked against the
 * formula evaluated directly, and a run against a run with the formula.
 */
import { describe, expect, it } from 'vitest';
import { lightFromTable, lightTable, LIGHT_TABLE_FLOOR } from '../../../shared/forward-model/model';
import { growthRate } from '../../../shared/measure/growth';

const exact = (a: number, k: number, d: number) => Math.tanh(a * Math.exp(-k * d));

describe('light table', () => {
  for (const [a, k] of [[2000 / 250, 0.1], [2000 / 300, 0.05], [1, 0.5], [40, 0.2], [0.5, 0.02]] as const) {
    it(`a = ${a}, k = ${k}: within 1e-9 of tanh(a·e^(−k·d)) at 20,000 depths, and under the floor past its end`, () => {
      const t = lightTable(a, k)!;
      expect(t).not.toBeNull();
      let worst = 0;
      for (let i = 0; i < 20000; i++) {
        const d = (i / 20000) * t.end * 1.0001 + ((i * 0.6180339887) % 1) * 0.01; // off the knots
        const e = exact(a, k, d);
        const v = lightFromTable(t, d);
        if (d < t.end) worst = Math.max(worst, Math.abs(v - e));
        else expect(e).toBeLessThan(LIGHT_TABLE_FLOOR * 1.01);
      }
      expect(worst).toBeLessThan(1e-9);
    });
  }

  it('the half-rate depth of references.md reads as half of Gm through the table (26.785 m for Gm 10 mm/yr, I0 2000, Ik 250, k 0.1)', () => {
    // Bosscher & Schlager (1992) growth law; check value from references.md
    const t = lightTable(2000 / 250, 0.1)!;
    expect(10 * lightFromTable(t, 26.785)).toBeCloseTo(growthRate(26.785, { Gm: 10, I0: 2000, Ik: 250, k: 0.1 }), 9);
    expect(10 * lightFromTable(t, 26.785)).toBeCloseTo(5, 3);
  });

  it('no attenuation (k = 0) has no finite table: the model then evaluates the formula', () => {
    expect(lightTable(8, 0)).toBeNull();
  });
});
