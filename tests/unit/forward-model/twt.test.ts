/**
 * Modelled surfaces from depth to TWT (shared/forward-model/output.ts
 * `interpretationToTwt`): the inverse of the engine's time→depth conversion,
 * checked by converting back with the engine's own converter.
 */
import { describe, expect, it } from 'vitest';
import { createDepthConverter, measure } from '../../../shared/measure';
import { interpretationToTwt, profileAndTopsOf, runForwardModel, runToInterpretation } from '../../../shared/forward-model';
import type { VelocityModel } from '../../../shared/measure/velocity';

const run = runForwardModel({
  profile: [[0, 905], [1000, 705], [2000, 905]], // 700–900 m below the sea at the start
  columns: 101,
  growth: { GmMmPerYr: 10, I0: 2000, Ik: 250, kPerM: 0.1 },
  eustasy: { kind: 'table', points: [[0, 700], [30000, 790]] }, // the sea stands 700 m higher than the profile's datum
  subsidence: { kind: 'constant', rateMPerMyr: 0 },
  stepYr: 20,
  durationYr: 30000,
  cycles: { boundaries: [10000, 20000], productionFactors: [1, 0.6, 0.4] },
});
const depthIt = runToInterpretation(run);

const models: [string, VelocityModel][] = [
  ['constant', { kind: 'constant', v: 2500 }],
  ['layers', { kind: 'layers', layers: [{ topMs: 0, v: 1500 }, { topMs: 400, v: 2000 }, { topMs: 800, v: 4500 }] }],
  ['linear', { kind: 'linear', v0: 1800, k: 0.6 }],
  ['buildup', { kind: 'buildup', water: { v: 1500, seafloorMs: 300 }, overburden: { v: 2200 }, carbonate: { v: 4500 } }],
  ['buildup with ranges (modes used)', { kind: 'buildup', water: { v: 1500, seafloorMs: 300 }, overburden: { v: { min: 2000, mode: 2200, max: 2400 } }, carbonate: { v: 4500 } }],
];

describe('depth → TWT round trip through the engine', () => {
  it.each(models)('%s: every point converts back to its depth within 1 µm', (_, velocity) => {
    const twt = interpretationToTwt(depthIt, velocity);
    expect(twt.verticalDomain).toBe('twt_ms');
    const back = createDepthConverter(twt, { buildup: 0 });
    const b0 = depthIt.buildups[0];
    const b1 = twt.buildups[0];
    const pairs: [number[], number[]][] = [];
    b0.base.forEach((p, i) => pairs.push([p, b1.base[i]]));
    b0.cycles.forEach((c, ci) => {
      c.top.forEach((p, i) => pairs.push([p, b1.cycles[ci].top[i]]));
      c.flankLeft?.forEach((p, i) => pairs.push([p, b1.cycles[ci].flankLeft![i]]));
      pairs.push([c.marginRight, b1.cycles[ci].marginRight]);
    });
    for (const [d, t] of pairs) {
      expect(t[1]).not.toBeCloseTo(d[1], 0); // really converted
      const [x, z] = back.toDepth(t);
      expect(x).toBe(d[0]);
      expect(z).toBeCloseTo(d[1], 6);
    }
  });

  it('the engine measures the TWT version like the depth version (heights and widths)', () => {
    const a = measure(depthIt).buildups[0];
    const b = measure(interpretationToTwt(depthIt, models[3][1])).buildups[0];
    expect(b.heightM).toBeCloseTo(a.heightM, 6);
    b.cycles.forEach((c, i) => expect(c.topWidthM).toBeCloseTo(a.cycles[i].topWidthM, 9));
  });

  it('a known value: 1250 m at layers 1500/2000/4500 m/s is 1100 ms (references.md, Sheriff & Geldart 1995: 300 + 500 + 450 m)', () => {
    const one = {
      ...depthIt,
      buildups: [{ ...depthIt.buildups[0], base: [[0, 1250], [10, 1250]] as [number, number][] }],
    };
    const t = interpretationToTwt(one, { kind: 'layers', layers: [{ topMs: 0, v: 1500 }, { topMs: 400, v: 2000 }, { topMs: 900, v: 4500 }] });
    expect(t.buildups[0].base[0][1]).toBeCloseTo(1100, 9);
  });
});

describe('profile and tops from an interpretation', () => {
  it('takes a TWT interpretation back to the run’s depth profile and tops', () => {
    const twt = interpretationToTwt(depthIt, models[3][1]);
    const { profile, tops } = profileAndTopsOf(twt);
    profile.forEach((p, i) => expect(p[1]).toBeCloseTo(depthIt.buildups[0].base[i][1], 6));
    expect(tops.length).toBe(3);
    tops.forEach((t, c) => t.forEach((p, i) => expect(p[1]).toBeCloseTo(depthIt.buildups[0].cycles[c].top[i][1], 6)));
    expect(() => profileAndTopsOf(twt, 3)).toThrow(/^buildups: no buildup number 3/);
  });
});
