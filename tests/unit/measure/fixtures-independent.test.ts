/**
 * Independent numbers for every measurement fixture (tests/fixtures/measure/in)
 * and for the demo sections' known geometry (tests/fixtures/synthetic). The
 * fixture loop (fixtures.test.ts) compares the engine with its own earlier
 * output; here each fixture gets at least one number worked out by hand from
 * the input (the arithmetic is in the comment beside it) or by numpy/shapely
 * at test time, asserted against what the engine gives now.
 *
 * Every input file must appear in HAND below, so a new fixture cannot land
 * without an independent check.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { MeasureInputError, measure, toDepthDomain, type MeasurementOutput } from '../../../shared/measure';
import { needReference, pythonReference, runPython } from '../../helpers/python-ref';
import { FIXTURES, loadIn, type Doc } from './helpers';

const DEG = 180 / Math.PI;
const out = (name: string): MeasurementOutput => measure(loadIn(name), loadIn(name).options);
const b0 = (name: string) => out(name).buildups[0];

/** Checks worked out by hand from each input file. */
const HAND: Record<string, () => void> = {
  'bank-depth.json': () => {
    const b = b0('bank-depth.json');
    // height: base z 2000 − youngest top z 1400 = 600 m
    expect(b.heightM).toBeCloseTo(600, 9);
    // outline = cycle 3 top (1000..3000 at 1400) and its flanks down to (400, 2000) and (3600, 2000):
    // a trapezoid, shoelace area = (2000 + 3200) / 2 × 600 = 1 560 000 m²
    expect(b.areaM2).toBeCloseTo(1_560_000, 3);
    // cycle 2: aggradation z(L1) − z(L2) = 1800 − 1600 = 200 m, backstep 1000 − 1000 = 0 → atan2(200, 0) = 90°
    expect(b.cycles[1].left.aggradationM).toBeCloseTo(200, 9);
    expect(b.cycles[1].trajectoryDeg).toBeCloseTo(90, 9);
  },
  'pinnacle-depth.json': () => {
    const b = b0('pinnacle-depth.json');
    // crest: the single shallowest vertex of the youngest top, (2000, 1100); height 2000 − 1100 = 900 m
    expect(b.crest).toEqual([2000, 1100]);
    expect(b.heightM).toBeCloseTo(900, 9);
    // cycle 2 left: backstep x(L2) − x(L1) = 1000 − 500 = 500 m, aggradation 1800 − 1500 = 300 m,
    // trajectory atan2(300, −500) = 180° − atan(0.6) = 149.036°
    expect(b.cycles[1].left.backstepM).toBeCloseTo(500, 9);
    expect(b.cycles[1].trajectoryDeg!).toBeCloseTo(180 - Math.atan(0.6) * DEG, 9);
    // cycle 3 top width x(R3) − x(L3) = 2500 − 1500 = 1000 m
    expect(b.cycles[2].topWidthM).toBeCloseTo(1000, 9);
  },
  'platform-depth.json': () => {
    const b = b0('platform-depth.json');
    // margins step out 300 m and up 100 m per cycle: atan2(100, 300) = 18.435° → prograding
    expect(b.trajectoryDeg!).toBeCloseTo(Math.atan(100 / 300) * DEG, 9);
    expect(b.classification).toBe('prograding');
    // flat youngest top from x 400 to 3600 at z 1600: crest at the midpoint (400 + 3600) / 2 = 2000, height 2000 − 1600 = 400
    expect(b.crest).toEqual([2000, 1600]);
    expect(b.heightM).toBeCloseTo(400, 9);
  },
  'drowned-flag-depth.json': () => {
    const b = b0('drowned-flag-depth.json');
    expect(b.classification).toBe('drowned'); // topIsDrowningSurface: true in the input
    // cycle 2 thickness at its centre x = (1000 + 3000)/2 = 2000: top 1 z 1800 − top 2 z 1550 = 250 m
    expect(b.cycles[1].thicknessM).toBeCloseTo(250, 9);
    // cycle 1 top width 3200 − 800 = 2400 m; cycle 2 left flank (1000,1600)→(800,1800): Δz/Δx = 200/200 → 45°
    expect(b.cycles[0].topWidthM).toBeCloseTo(2400, 9);
    expect(b.cycles[1].left.flankAngleDeg!).toBeCloseTo(45, 9);
  },
  'drowned-terminations-depth.json': () => {
    const b = b0('drowned-terminations-depth.json');
    // onlap (1500, 1575): on the top (z 1575 at x 1500) → counts; downlap (2500, 1580): 5 m below the top's 1575,
    // within 25 m → counts; toplap: never counted; onlap (700, 1900): left of marginLeft x 1000 → not counted. 2 ≥ 2 → drowned
    expect(b.terminationsOnTop).toBe(2);
    expect(b.classification).toBe('drowned');
  },
  'kestrel-knoll-twt-buildup-ranges.json': () => {
    const b = b0('kestrel-knoll-twt-buildup-ranges.json');
    // buildup velocity model (modes): water 1500 m/s to 400 ms, overburden 2200 m/s below. A point on the upper
    // envelope has no carbonate above it, so z = 1500·400/2000 + 2200·(t − 400)/2000.
    // cycle 1 marginLeft at t = 1763.64 ms: 300 + 2200 × 1363.64 / 2000 = 300 + 1500.004 = 1800.004 m
    expect(b.cycles[0].marginLeft[1]).toBeCloseTo(1800.004, 6);
    // crest at t = 1127.27 ms: 300 + 2200 × 727.27 / 2000 = 1099.997 m
    expect(b.crest[1]).toBeCloseTo(1099.997, 6);
  },
  'marrow-bank-pixels-layers.json': () => {
    // by hand: layered velocities 1500 m/s (0–600 ms), 2400 m/s (600–1200 ms), 3800 m/s below:
    // z(t) = 1500·600/2000 + 2400·600/2000 + 3800·(t − 1200)/2000 = 1170 + 1.9·(t − 1200) for t ≥ 1200 ms.
    // The pins' TWTs come from numpy's least-squares calibration (test below); here the tie at pixel
    // (2.5, 1874.9) ↔ world (0, 1700 ms): depth 1170 + 1.9 × 500 = 2120 m, and the tie at (25, 749.4) ↔
    // (0, 800 ms): 1500·600/2000 + 2400·200/2000 = 450 + 240 = 690 m, through the engine's converter.
    const doc = loadIn('marrow-bank-pixels-layers.json');
    const o = out('marrow-bank-pixels-layers.json');
    expect(o.calibration!.rmsPx).toBeLessThan(0.05); // the four ties agree to the 0.1 px they are written with
    const [x1, z1] = toDepthDomain(doc, [2.5, 1874.9]);
    expect(Math.abs(x1)).toBeLessThan(0.5);
    expect(z1).toBeCloseTo(2120, 1);
    expect(toDepthDomain(doc, [25, 749.4])[1]).toBeCloseTo(690, 1);
    // every margin stays level within a cycle to the drawing's accuracy, so both sides aggrade alike → aggrading
    expect(o.buildups[0].classification).toBe('aggrading');
  },
  'refused-margin-outside-top.json': () => {
    // cycle 2's top spans x 1000 to 3000 and its marginLeft is at x 900: refused, naming that pin and the range
    let err: unknown = null;
    try {
      out('refused-margin-outside-top.json');
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(MeasureInputError);
    expect((err as MeasureInputError).path).toBe('buildups[0].cycles[1].marginLeft');
    expect((err as MeasureInputError).message).toContain("outside the top's x-range (1000 to 3000)");
  },
};

describe('every measurement fixture has an independent check', () => {
  const inputs = readdirSync(join(FIXTURES, 'in')).filter((f) => f.endsWith('.json')).sort();

  it('each input file has a hand-worked check', () => {
    expect(Object.keys(HAND).sort()).toEqual(inputs);
  });

  for (const name of Object.keys(HAND)) it(`${name}: numbers worked out by hand`, () => HAND[name]());
});

const numpyRef = pythonReference('numpy');
const shapelyRef = pythonReference('shapely');

describe('fixtures against numpy and shapely (computed at test time)', () => {
  it('marrow-bank-pixels-layers: margin depths from numpy.linalg.lstsq of the Ties and the layered law by hand', (ctx) => {
    const py = needReference(ctx, numpyRef);
    const doc = loadIn('marrow-bank-pixels-layers.json');
    const cycles = doc.buildups[0].cycles as Doc[];
    const pins = cycles.flatMap((c) => [c.marginLeft, c.marginRight]);
    // numpy.linalg.lstsq on the design matrix [u, v, 1] (references.md: python3-numpy), then each pin mapped
    const script = `
import json, sys, numpy as np
d = json.load(sys.stdin)
A = np.array([[t['px'][0], t['px'][1], 1.0] for t in d['ties']])
X = np.array([t['world'][0] for t in d['ties']]); Y = np.array([t['world'][1] for t in d['ties']])
px = np.linalg.lstsq(A, X, rcond=None)[0]; py = np.linalg.lstsq(A, Y, rcond=None)[0]
P = np.array([[p[0], p[1], 1.0] for p in d['pins']])
print(json.dumps({'x': (P @ px).tolist(), 't': (P @ py).tolist()}))`;
    const ref = runPython(py, script, { ties: doc.calibration, pins }) as { x: number[]; t: number[] };
    // layered law by hand (see HAND above): valid for t ≥ 1200 ms, which every pin is
    const z = (t: number) => {
      expect(t).toBeGreaterThanOrEqual(1200);
      return (1500 * 600) / 2000 + (2400 * 600) / 2000 + (3800 * (t - 1200)) / 2000;
    };
    const got = out('marrow-bank-pixels-layers.json').buildups[0].cycles.flatMap((c) => [c.marginLeft, c.marginRight]);
    got.forEach((p, i) => {
      expect(p[0]).toBeCloseTo(ref.x[i], 6);
      expect(p[1]).toBeCloseTo(z(ref.t[i]), 6);
    });
  });

  it('world depth fixtures: area under the outline from a shapely union, height and width from the input', (ctx) => {
    const py = needReference(ctx, shapelyRef);
    const names = ['bank-depth.json', 'pinnacle-depth.json', 'platform-depth.json', 'drowned-flag-depth.json', 'drowned-terminations-depth.json'];
    const cases = names.map((n) => {
      const b = loadIn(n).buildups[0];
      const sources: number[][][] = [];
      for (const c of b.cycles) for (const k of ['top', 'flankLeft', 'flankRight']) if (c[k]) sources.push(c[k]);
      return { sources, base: b.base };
    });
    // shapely (references.md: python3-shapely): ⋃ {z ≥ s(x), x in span(s)} over tops and flanks, ∩ {z ≤ base(x)}
    const script = `
import json, sys
from shapely.geometry import Polygon
from shapely.ops import unary_union
B = 1e5
out = []
for c in json.load(sys.stdin):
    base = c['base']
    above_base = Polygon([(-B, base[0][1])] + [tuple(p) for p in base] + [(B, base[-1][1]), (B, -B), (-B, -B)])
    parts = []
    for s in c['sources']:
        pts = sorted(s, key=lambda p: p[0])
        parts.append(Polygon([tuple(p) for p in pts] + [(pts[-1][0], B), (pts[0][0], B)]).intersection(above_base))
    out.append(unary_union(parts).area)
print(json.dumps(out))`;
    const areas = runPython(py, script, cases) as number[];
    names.forEach((n, i) => {
      const b = b0(n);
      expect(b.areaM2, n).toBeCloseTo(areas[i], 3);
      // base width: the base runs from x 0 to x 4000 in every one of these inputs
      expect(b.baseWidthM, n).toBe(4000);
    });
  });
});

describe('demo sections (tests/fixtures/synthetic): pixel, TWT and depth geometry agree by hand', () => {
  for (const key of ['tb-11-kestrel-knoll', 'tb-14-marrow-bank']) {
    it(`${key}: the first base vertex through the Ties and the buildup velocity model`, () => {
      const fx = JSON.parse(readFileSync(join(FIXTURES, '..', 'synthetic', `${key}.json`), 'utf8'));
      const v = fx.interpretation.velocity;
      expect(v.kind).toBe('buildup');
      // Ties: px (400, 125) → (800, 125) and (7600, 125) → (15200, 125), (400, 2375) → (800, 2375): x = 2u, TWT = v
      const ties = fx.ties as { px: number[]; world: number[] }[];
      for (const t of ties) expect([t.world[0], t.world[1]]).toEqual([2 * t.px[0], t.px[1]]);
      const pxBase = fx.pixelGeometry.buildups[0].base[0];
      const [x, t] = fx.interpretation.buildups[0].base[0];
      expect(2 * pxBase[0]).toBeCloseTo(x, 2);
      expect(pxBase[1]).toBeCloseTo(t, 2);
      // the first base vertex is the foot of the outermost flank: on the envelope, no carbonate above it, so
      // z = v_water·seafloor/2000 + v_overburden·(t − seafloor)/2000 (vertical ray, layer by layer)
      const z = (v.water.v * v.water.seafloorMs) / 2000 + (v.overburden.v * (t - v.water.seafloorMs)) / 2000;
      const depthBase = fx.depthGeometry.buildups[0].base[0];
      expect(depthBase[0]).toBe(x);
      // both files round to 0.01: TWT rounding (±0.005 ms × v/2000 ≈ 0.006 m) plus depth rounding (0.005 m)
      expect(Math.abs(depthBase[1] - z)).toBeLessThan(0.012);
    });
  }
});
