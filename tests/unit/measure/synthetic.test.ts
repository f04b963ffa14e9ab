/**
 * Synthetic buildups with hand-computed answers, measured in depth, in TWT
 * under each velocity model (the TWT input is built from the depth geometry
 * with the model's inverse) and in pixels through a calibration: every
 * route must give the same depth-domain numbers.
 *
 * Hand computations (depth domain, metres; base flat at z = 2000 m):
 *
 * Pinnacle (pinnacle-depth.json): margins L/R (500,1800)/(3500,1800),
 * (1000,1500)/(3000,1500), (1500,1200)/(2500,1200); top 3 peaks at (2000,1100).
 *   widths 3000, 2000, 1000; centres 2000; thickness at x=2000: 2000−1800=200,
 *   1800−1500=300, 1500−1100=400; backstep 500 m each side, aggradation 300 m,
 *   trajectory atan2(300, −500) = 180° − atan(0.6) = 149.036°; flanks 45°.
 *   Height 2000 − 1100 = 900; base width 4000; area (left half): flank 1
 *   triangle 200·200/2 = 20 000, top 1 200·200 = 40 000, flank 2
 *   (200+500)/2·300 = 105 000, top 2 500·200 = 100 000, flank 3
 *   (500+800)/2·300 = 195 000, top 3 (800+900)/2·500 = 425 000 → 885 000;
 *   both halves 1 770 000 m². First moment of the left half about x = 2000,
 *   Σ Δ/6·[r1(2h1+h2) + r2(h1+2h2)]: 31 333 333.3 + 56 000 000 + 118 500 000
 *   + 90 000 000 + 124 500 000 + 104 166 666.7 = 524 500 000 m³ → volume
 *   2π·524.5e6 (both halves equal). Ages 20 (base), 18, 16, 15 Ma: aggradation
 *   rates 300/2 = 150 and 300/1 = 300 m/Myr; accumulation 200/2, 300/2, 400/1.
 *
 * Aggrading bank (bank-depth.json): margins at x 1000 and 3000, z 1800, 1600,
 * 1400; flanks 45° to the base. Backstep 0, aggradation 200 → 90°. Height
 * 600 (flat crest 1000–3000 → x 2000); area: flanks 2·600·600/2 = 360 000 +
 * top 600·2000 = 1 200 000 → 1 560 000; left moment: flank
 * 600/6·[1600·600 + 1000·1200] = 216 000 000 + top 600·1000²/2 = 300 000 000
 * → 516 000 000.
 *
 * Prograding platform (platform-depth.json): margins (1000,1800)/(3000,1800),
 * (700,1700)/(3300,1700), (400,1600)/(3600,1600). Backstep −300, aggradation
 * 100 → atan2(100, 300) = 18.435°. Flat crest 400–3600 → crest (2000, 1600);
 * height 400; area 2·400·400/2 + 400·3200 = 1 440 000; left moment
 * 400/6·[2000·400 + 1600·800] = 138 666 666.7 + 400·1600²/2 = 512 000 000 →
 * 650 666 666.7. Thickness at x=2000: 200, 100, 100.
 *
 * Drowned (drowned-*.json): margins (800,1800)/(3200,1800),
 * (1000,1600)/(3000,1600); top 2 peaks at (2000,1550). Backstep 200,
 * aggradation 200 → 135° (backstepping before drowning). Height 450; area
 * left: 200·200/2 + (200+400)/2·200 + (400+450)/2·1000 = 505 000, total
 * 1 010 000; left moment 25 333 333.3 + 65 333 333.3 + 208 333 333.3 =
 * 299 000 000. Onlap at (1500,1575) and downlap at (2500,1580) lie on top 2
 * between its margins (within 25 m); the toplap and the onlap at x = 700
 * (outside the margins) do not count → 2 terminations → drowned.
 */
import { describe, expect, it } from 'vitest';
import { measure, type Affine, type MeasurementOutput, type ResolvedVelocityModel } from '../../../shared/measure';
import { depthDocToTwt, firstDifference, loadIn, worldDocToPixels, type Doc } from './helpers';

const TWO_PI = 2 * Math.PI;

const models: Record<string, ResolvedVelocityModel> = {
  constant: { kind: 'constant', v: 4000 },
  layers: { kind: 'layers', layers: [{ topMs: 0, v: 1500 }, { topMs: 600, v: 2400 }, { topMs: 1200, v: 3800 }, { topMs: 1500, v: 4500 }] },
  linear: { kind: 'linear', v0: 1800, k: 0.6 },
  buildup: { kind: 'buildup', water: { v: 1500, seafloorMs: 400 }, overburden: { v: 2200 }, carbonate: { v: 4500 } },
};

const affine: Affine = { a: 2.5, b: 0.05, c: -100, d: 0.02, e: 1.2, f: 900 };
const tieWorld: [number, number][] = [[0, 1000], [4000, 1000], [0, 2100], [4000, 2100], [2000, 1500]];

/** Every route to the same depth-domain geometry. */
function routes(depthDoc: Doc): [string, Doc][] {
  const out: [string, Doc][] = [['depth', depthDoc]];
  for (const [k, m] of Object.entries(models)) out.push([`twt/${k}`, depthDocToTwt(depthDoc, m)]);
  out.push(['pixels/depth', worldDocToPixels(depthDoc, affine, tieWorld)]);
  const twtB = depthDocToTwt(depthDoc, models.buildup);
  const twtAffine: Affine = { a: 2.5, b: 0, c: -100, d: 0, e: 2, f: 0 };
  out.push(['pixels/twt/buildup (axes calibration)', worldDocToPixels(twtB, twtAffine, [[0, 0], [4000, 3000]], 'axes')]);
  return out;
}

/** Numbers that must not depend on the route (everything but names, calibration and velocity echoes). */
const comparable = (o: MeasurementOutput) => o.buildups.map(({ name: _n, ...rest }) => rest);

function checkAllRoutes(file: string): MeasurementOutput {
  const depthDoc = loadIn(file);
  const ref = measure(depthDoc);
  for (const [name, doc] of routes(depthDoc)) {
    const out = measure(doc);
    const diff = firstDifference(comparable(out), comparable(ref), '', 1e-9, 1e-6);
    expect(diff, `${file} via ${name}`).toBeNull();
  }
  return ref;
}

describe('synthetic buildups, same numbers by every route', () => {
  it('symmetric backstepping pinnacle', () => {
    const b = checkAllRoutes('pinnacle-depth.json').buildups[0];
    expect(b.classification).toBe('backstepping');
    expect(b.heightM).toBeCloseTo(900, 9);
    expect(b.baseWidthM).toBeCloseTo(4000, 9);
    expect(b.aspectRatio).toBeCloseTo(0.225, 12);
    expect(b.crest[0]).toBeCloseTo(2000, 9);
    expect(b.crest[1]).toBeCloseTo(1100, 9);
    expect(b.areaM2).toBeCloseTo(1_770_000, 6);
    expect(b.volumeM3 / (TWO_PI * 524_500_000)).toBeCloseTo(1, 12);
    expect(b.trajectoryDeg!).toBeCloseTo(180 - (Math.atan(0.6) * 180) / Math.PI, 9);
    expect(b.cycles.map((c) => c.topWidthM)).toEqual([3000, 2000, 1000]);
    expect(b.cycles.map((c) => c.thicknessM)).toEqual([200, 300, 400]);
    expect(b.cycles.map((c) => c.class)).toEqual([null, 'backstepping', 'backstepping']);
    for (const c of b.cycles.slice(1)) {
      expect(c.left.backstepM).toBe(500);
      expect(c.right.backstepM).toBe(500);
      expect(c.left.aggradationM).toBe(300);
      expect(c.right.aggradationM).toBe(300);
    }
    for (const c of b.cycles) for (const s of [c.left, c.right]) {
      expect(s.flankAngleDeg!).toBeCloseTo(45, 9);
      expect(s.flankMaxDeg!).toBeCloseTo(45, 9);
    }
    expect(b.cycles.map((c) => c.aggradationRateMPerMyr)).toEqual([null, 150, 300]);
    expect(b.cycles.map((c) => c.accumulationRateMPerMyr)).toEqual([100, 150, 400]);
    expect(b.cycles.map((c) => c.systemsTract)).toEqual(['HST', 'TST', 'TST']);
    expect(b.asymmetry.flankAngleDeg).toBeCloseTo(0, 9);
    expect(b.asymmetry.hint).toBeNull();
    expect(b.drowningIndicators.map((d) => d.kind)).toEqual(['narrowingTops']);
    expect(b.evidence[0]).toMatch(/149\.0°.*above 90° \+ 10° → backstepping/);
  });

  it('aggrading bank', () => {
    const b = checkAllRoutes('bank-depth.json').buildups[0];
    expect(b.classification).toBe('aggrading');
    expect(b.trajectoryDeg!).toBeCloseTo(90, 9);
    expect(b.heightM).toBeCloseTo(600, 9);
    expect(b.crest[0]).toBeCloseTo(2000, 9);
    expect(b.areaM2).toBeCloseTo(1_560_000, 6);
    expect(b.volumeM3 / (TWO_PI * 516_000_000)).toBeCloseTo(1, 12);
    expect(b.cycles.map((c) => c.class)).toEqual([null, 'aggrading', 'aggrading']);
    expect(b.cycles.map((c) => c.thicknessM)).toEqual([200, 200, 200]);
    expect(b.drowningIndicators).toEqual([]);
  });

  it('prograding platform with a flat crest', () => {
    const b = checkAllRoutes('platform-depth.json').buildups[0];
    expect(b.classification).toBe('prograding');
    expect(b.trajectoryDeg!).toBeCloseTo((Math.atan(100 / 300) * 180) / Math.PI, 9);
    expect(b.crest[0]).toBeCloseTo(2000, 9);
    expect(b.crest[1]).toBeCloseTo(1600, 9);
    expect(b.heightM).toBeCloseTo(400, 9);
    expect(b.areaM2).toBeCloseTo(1_440_000, 6);
    expect(b.volumeM3 / (TWO_PI * (138_666_666.666_666_7 + 512_000_000))).toBeCloseTo(1, 12);
    expect(b.cycles[1].left.backstepM).toBe(-300);
    expect(b.cycles[1].right.backstepM).toBe(-300);
    expect(b.cycles.map((c) => c.thicknessM)).toEqual([200, 100, 100]);
    expect(b.cycles.map((c) => c.class)).toEqual([null, 'prograding', 'prograding']);
  });

  it('drowned buildup by two terminations on the youngest top', () => {
    const b = checkAllRoutes('drowned-terminations-depth.json').buildups[0];
    expect(b.classification).toBe('drowned');
    expect(b.terminationsOnTop).toBe(2);
    expect(b.heightM).toBeCloseTo(450, 9);
    expect(b.areaM2).toBeCloseTo(1_010_000, 6);
    expect(b.volumeM3 / (TWO_PI * 299_000_000)).toBeCloseTo(1, 12);
    expect(b.trajectoryDeg!).toBeCloseTo(135, 9);
    expect(b.evidence.join(' ')).toMatch(/2 onlap\/downlap terminations .* at least the 2 required → drowned/);
    expect(b.evidence.join(' ')).toMatch(/Before drowning.*135\.0°.*backstepping/);
    expect(b.drowningIndicators.map((d) => d.kind)).toEqual(['terminationsOnTop', 'narrowingTops']);
  });

  it('drowned buildup by the flagged surface', () => {
    const b = checkAllRoutes('drowned-flag-depth.json').buildups[0];
    expect(b.classification).toBe('drowned');
    expect(b.terminationsOnTop).toBe(0);
    expect(b.evidence[0]).toMatch(/flagged as a drowning surface → drowned/);
    expect(b.drowningIndicators[0].kind).toBe('flaggedSurface');
  });
});
