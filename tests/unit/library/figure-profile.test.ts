import { describe, expect, it } from 'vitest';
import { FigureProfileError, figureConverter, profileFromFigure, upperEnvelope, type FigureScales } from '../../../shared/figure-profile';
import { shapeOf } from '../../../shared/analogue-shape';
import { depthProfileSchema } from '../../../shared/schemas/analogues';

// A figure whose horizontal scale reads 0 m at u = 100 px and 1000 m at u = 600 px,
// and whose vertical scale reads 0 ms at v = 50 px and 800 ms at v = 450 px.
const timeScales: FigureScales = {
  x: { px: [100, 600], value: [0, 1000] },
  z: { px: [50, 450], value: [0, 800] },
  lengthUnit: 'm',
  vertical: 'twt_ms',
  velocityMs: 3000,
};

describe('figure profile: pixels to metres', () => {
  it('maps both scales linearly and converts two-way time with z = v·t/2', () => {
    const toM = figureConverter(timeScales);
    // hand computation: u 350 → 500 m; v 250 → 400 ms TWT → 3000 m/s × 0.4 s / 2 = 600 m
    const [x, z] = toM([350, 250]);
    expect(x).toBeCloseTo(500, 9);
    expect(z).toBeCloseTo(600, 9);
    // v 450 → 800 ms → 1200 m
    expect(toM([600, 450])[1]).toBeCloseTo(1200, 9);
  });

  it('reads feet as international feet (1959 agreement: 1 ft = 0.3048 m exactly)', () => {
    const toM = figureConverter({ x: { px: [0, 1000], value: [0, 1000] }, z: { px: [0, 500], value: [0, 500] }, lengthUnit: 'ft', vertical: 'depth' });
    const [x, z] = toM([1000, 500]);
    expect(x).toBeCloseTo(304.8, 9);
    expect(z).toBeCloseTo(152.4, 9);
  });

  it('takes scales clicked in either order and values that run upwards', () => {
    const toM = figureConverter({ x: { px: [600, 100], value: [1000, 0] }, z: { px: [450, 50], value: [-1200, 0] }, lengthUnit: 'm', vertical: 'depth' });
    const [x, z] = toM([350, 250]);
    expect(x).toBeCloseTo(500, 9);
    expect(z).toBeCloseTo(-600, 9);
  });

  it('names the field of every bad scale', () => {
    const bad = (s: Partial<FigureScales>, path: string) => {
      try {
        figureConverter({ ...timeScales, ...s });
        expect.unreachable(`expected ${path}`);
      } catch (e) {
        expect(e).toBeInstanceOf(FigureProfileError);
        expect((e as FigureProfileError).path).toBe(path);
      }
    };
    bad({ x: { px: [100, 100.5], value: [0, 1000] } }, 'scales.x.px');
    bad({ x: { px: [100, 600], value: [5, 5] } }, 'scales.x.value');
    bad({ z: { px: [50, 450], value: [0, Number.NaN] } }, 'scales.z.value');
    bad({ velocityMs: null }, 'scales.velocityMs');
    bad({ velocityMs: 20000 }, 'scales.velocityMs');
  });
});

describe('figure profile: upper envelope and the profile', () => {
  it('is the shallowest surface at every x, the base where no top reaches', () => {
    const env = upperEnvelope([
      [
        [0, 1000],
        [1000, 1000],
      ],
      [
        [200, 1000],
        [500, 600],
        [800, 1000],
      ],
    ]);
    expect(env).toEqual([
      [0, 1000],
      [200, 1000],
      [500, 600],
      [800, 1000],
      [1000, 1000],
    ]);
  });

  it('handles tops traced right to left', () => {
    const env = upperEnvelope([
      [
        [0, 100],
        [100, 100],
      ],
      [
        [90, 80],
        [10, 60],
      ],
    ]);
    // at x = 50 the top (traced from x 90 to 10) is at 80 + (60 − 80)·(50 − 90)/(10 − 90) = 70
    expect(env.find(([x]) => x === 10)![1]).toBe(60);
    expect(env.find(([x]) => x === 90)![1]).toBe(80);
    expect(env.find(([x]) => x === 0)![1]).toBe(100);
  });

  it('turns a traced symmetric mound into a valid profile with a triangular shape', () => {
    // base along v = 300 (500 ms → 750 m), one top rising to v = 200 (300 ms → 450 m) at u = 350 (500 m)
    const p = profileFromFigure(
      {
        base: [
          [100, 300],
          [600, 300],
        ],
        tops: [
          [
            [150, 300],
            [350, 200],
            [550, 300],
          ],
        ],
      },
      timeScales,
    );
    expect(depthProfileSchema.safeParse(p).success).toBe(true);
    expect(p.base).toEqual([
      [0, 750],
      [1000, 750],
    ]);
    expect(p.tops[0][1]).toEqual([500, 450]);
    // height 750 − 450 = 300 m at x = 500; the normalised shape peaks (1) in the middle sample and is 0 at the ends
    const shape = shapeOf(p, 11)!;
    expect(shape[5]).toBeCloseTo(1, 9);
    expect(shape[0]).toBe(0);
    expect(shape[10]).toBe(0);
    // x = 300 m is 200 m into a 400 m half-width flank: half the height (linear flank)
    expect(shape[3]).toBeCloseTo(0.5, 9);
  });

  it('asks for at least two points per line, naming the line', () => {
    expect(() => profileFromFigure({ base: [[1, 1]], tops: [] }, timeScales)).toThrow(/trace\.base/);
    expect(() =>
      profileFromFigure(
        {
          base: [
            [100, 300],
            [600, 300],
          ],
          tops: [[[200, 250]]],
        },
        timeScales,
      ),
    ).toThrow(/trace\.tops\.0/);
  });
});
