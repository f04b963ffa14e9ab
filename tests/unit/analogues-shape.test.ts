/**
 * Shape of an analogue and the shape distance of Look-alikes, checked against
 * an independent computation with Debian's python3-numpy (numpy.interp for the
 * resampling) and python3-scipy (scipy.spatial.distance.euclidean).
 */
import { describe, expect, it } from 'vitest';
import seedrandom from 'seedrandom';
import { shapeDistance, shapeOf } from '../../shared/analogue-shape';
import { SHAPE_SAMPLES, type DepthPoint } from '../../shared/schemas/analogues';
import { needReference, pythonReference, runPython } from '../helpers/python-ref';

const ref = pythonReference(['numpy', 'scipy']);

/** Random profiles: a gently sloping base and an envelope of 3–12 vertices spanning part or all of it. */
function profiles(n: number) {
  const rnd = seedrandom('tessel-shapes');
  const out: { base: DepthPoint[]; envelope: DepthPoint[] }[] = [];
  for (let i = 0; i < n; i++) {
    const W = 500 + 8000 * rnd();
    const z0 = 1000 + 2000 * rnd();
    const slope = (rnd() - 0.5) * 0.02;
    const base: DepthPoint[] = [0, 0.3, 0.7, 1].map((f) => [f * W, z0 + slope * f * W]);
    const k = 3 + Math.floor(rnd() * 10);
    const a = 0.1 * rnd() * W;
    const b = W - 0.1 * rnd() * W;
    const h = 30 + 400 * rnd();
    const envelope: DepthPoint[] = [];
    for (let j = 0; j < k; j++) {
      const x = a + ((b - a) * j) / (k - 1);
      const lift = j === 0 || j === k - 1 ? 0 : h * (0.3 + 0.7 * rnd());
      envelope.push([x, z0 + slope * x - lift]);
    }
    out.push({ base, envelope });
  }
  return out;
}

const SCRIPT = `
import json, sys
import numpy as np
from scipy.spatial.distance import euclidean
d = json.load(sys.stdin)
N = d['n']
def shape(p):
    b = np.array(p['base'], dtype=float); e = np.array(p['envelope'], dtype=float)
    xs = np.linspace(b[0, 0], b[-1, 0], N)
    zb = np.interp(xs, b[:, 0], b[:, 1])
    ze = np.interp(xs, e[:, 0], e[:, 1], left=np.nan, right=np.nan)
    h = np.where(np.isnan(ze), 0.0, np.maximum(0.0, zb - ze))
    return h / h.max()
S = [shape(p) for p in d['profiles']]
D = [[euclidean(S[i], S[j]) / np.sqrt(N) for j in range(len(S))] for i in range(len(S))]
print(json.dumps({'shapes': [s.tolist() for s in S], 'd': D}))
`;

describe('shape distance', () => {
  it('shapes and distances equal numpy.interp + scipy euclidean / √N', (ctx) => {
    const py = needReference(ctx, ref);
    const ps = profiles(12);
    const want = runPython(py, SCRIPT, { n: SHAPE_SAMPLES, profiles: ps }) as { shapes: number[][]; d: number[][] };
    const shapes = ps.map((p) => shapeOf(p)!);
    shapes.forEach((s, i) => s.forEach((v, k) => expect(v).toBeCloseTo(want.shapes[i][k], 10)));
    for (let i = 0; i < ps.length; i++) for (let j = 0; j < ps.length; j++) expect(shapeDistance(shapes[i], shapes[j])).toBeCloseTo(want.d[i][j], 10);
  });

  it('is blind to size (unit height and width) but not to skew', () => {
    const tri = (W: number, h: number, peak: number) => ({
      base: [[0, 1000], [W, 1000]] as DepthPoint[],
      envelope: [[0, 1000], [peak * W, 1000 - h], [W, 1000]] as DepthPoint[],
    });
    const a = shapeOf(tri(2000, 100, 0.5))!;
    expect(shapeDistance(a, shapeOf(tri(9000, 700, 0.5))!)).toBeCloseTo(0, 12);
    expect(shapeDistance(a, shapeOf(tri(2000, 100, 0.7))!)).toBeGreaterThan(0.05);
    expect(Math.max(...a)).toBe(1);
    expect(a).toHaveLength(SHAPE_SAMPLES);
  });

  it('has no shape without width or height', () => {
    expect(shapeOf({ base: [[0, 10], [0, 10]], envelope: [[0, 5], [1, 5]] })).toBeNull();
    expect(shapeOf({ base: [[0, 10], [10, 10]], envelope: [[0, 10], [10, 10]] })).toBeNull();
    expect(() => shapeDistance([0, 1], [0])).toThrow();
  });
});
