/**
 * Cross-checks against independent libraries (references.md, "Reference
 * libraries for cross-checks"): numpy.linalg.lstsq for the affine
 * calibration, shapely for polygon area/centroid and for the area and
 * half-profile moments of buildup profiles (union of the regions below each
 * surface and above the base). Each test calls a python3 that can import the
 * library (tests/helpers/python-ref.ts): when none can, it fails in CI
 * (CI=true, CAYLINE_REQUIRE_REFERENCES=1) and is skipped, saying why, elsewhere.
 */
import seedrandom from 'seedrandom';
import { describe, expect, it } from 'vitest';
import {
  evaluateEnvelope,
  fitCalibration,
  integrateProfile,
  orderByX,
  piecesOf,
  planEnvelope,
  polygonCentroid,
  shoelaceArea,
  type Point,
  type Tie,
} from '../../../shared/measure';
import { needReference, pythonReference, runPython } from '../../helpers/python-ref';

const numpyRef = pythonReference('numpy');
const shapelyRef = pythonReference('shapely');

describe('calibration against numpy.linalg.lstsq', () => {
  it('affine fit, residuals and RMS agree on noisy random ties', (ctx) => {
    const numpyPy = needReference(ctx, numpyRef);
    const rng = seedrandom('ties');
    const cases: Tie[][] = [];
    for (let c = 0; c < 20; c++) {
      const a = 1 + rng() * 4, b = (rng() - 0.5) * 0.2, cc = rng() * 1000, d = (rng() - 0.5) * 0.1, e = 0.5 + rng() * 2, f = rng() * 500;
      const n = 3 + Math.floor(rng() * 8);
      const ties: Tie[] = [];
      for (let i = 0; i < n; i++) {
        const u = rng() * 20000, v = rng() * 6000;
        ties.push({ px: [u, v], world: [a * u + b * v + cc + (rng() - 0.5) * 10, d * u + e * v + f + (rng() - 0.5) * 5] });
      }
      cases.push(ties);
    }
    // numpy.linalg.lstsq on the design matrix [u, v, 1] (references.md: python3-numpy)
    const script = `
import json, sys, numpy as np
out = []
for ties in json.load(sys.stdin):
    A = np.array([[t['px'][0], t['px'][1], 1.0] for t in ties])
    X = np.array([t['world'][0] for t in ties]); Y = np.array([t['world'][1] for t in ties])
    px = np.linalg.lstsq(A, X, rcond=None)[0]; py = np.linalg.lstsq(A, Y, rcond=None)[0]
    rx = X - A @ px; ry = Y - A @ py
    out.append({'p': list(px) + list(py), 'rx': list(rx), 'ry': list(ry), 'rmsx': float(np.sqrt(np.mean(rx**2))), 'rmsy': float(np.sqrt(np.mean(ry**2)))})
print(json.dumps(out))`;
    const ref = runPython(numpyPy, script, cases) as { p: number[]; rx: number[]; ry: number[]; rmsx: number; rmsy: number }[];
    cases.forEach((ties, i) => {
      const fit = fitCalibration(ties);
      const m = fit.affine;
      [m.a, m.b, m.c, m.d, m.e, m.f].forEach((v, k) => expect(Math.abs(v - ref[i].p[k])).toBeLessThan(1e-7 * Math.max(1, Math.abs(ref[i].p[k]))));
      fit.residuals.forEach((r, k) => {
        expect(r.residualWorld[0]).toBeCloseTo(ref[i].rx[k], 6);
        expect(r.residualWorld[1]).toBeCloseTo(ref[i].ry[k], 6);
      });
      expect(fit.rmsWorld.x).toBeCloseTo(ref[i].rmsx, 6);
      expect(fit.rmsWorld.y).toBeCloseTo(ref[i].rmsy, 6);
    });
  });
});

/** A random simple (star-shaped) polygon. */
function starPolygon(rng: () => number, n: number): Point[] {
  const cx = rng() * 1000, cy = rng() * 1000;
  const angles = Array.from({ length: n }, () => rng() * 2 * Math.PI).sort((a, b) => a - b);
  return angles.map((t) => {
    const r = 10 + rng() * 300;
    return [cx + r * Math.cos(t), cy + r * Math.sin(t)] as Point;
  });
}

describe('geometry against shapely', () => {
  it('shoelace area and centroid of random polygons', (ctx) => {
    const shapelyPy = needReference(ctx, shapelyRef);
    const rng = seedrandom('polygons');
    const polys = Array.from({ length: 50 }, () => starPolygon(rng, 3 + Math.floor(rng() * 40)));
    // shapely Polygon.area and .centroid (references.md: python3-shapely)
    const script = `
import json, sys
from shapely.geometry import Polygon
print(json.dumps([[p.area, p.centroid.x, p.centroid.y] for p in (Polygon(q) for q in json.load(sys.stdin))]))`;
    const ref = runPython(shapelyPy, script, polys) as number[][];
    polys.forEach((p, i) => {
      expect(shoelaceArea(p)).toBeCloseTo(ref[i][0], 6);
      const c = polygonCentroid(p);
      expect(c[0]).toBeCloseTo(ref[i][1], 6);
      expect(c[1]).toBeCloseTo(ref[i][2], 6);
    });
  });

  it('buildup profile area and half-profile moments equal the shapely union of the regions under each surface', (ctx) => {
    const shapelyPy = needReference(ctx, shapelyRef);
    const rng = seedrandom('profiles');
    const cases: { surfaces: Point[][]; base: Point[]; xc: number }[] = [];
    for (let c = 0; c < 25; c++) {
      const surfaces: Point[][] = [];
      const ns = 1 + Math.floor(rng() * 6);
      for (let s = 0; s < ns; s++) {
        const x0 = rng() * 3000, x1 = x0 + 100 + rng() * 3000;
        const nv = 2 + Math.floor(rng() * 30);
        const pts: Point[] = [];
        for (let k = 0; k < nv; k++) pts.push([x0 + ((x1 - x0) * k) / (nv - 1) + (k > 0 && k < nv - 1 ? (rng() - 0.5) * 5 : 0), 1000 + rng() * 1000]);
        // some surfaces are traced right to left
        surfaces.push(rng() < 0.3 ? pts.reverse() : pts);
      }
      const base: Point[] = [];
      const nb = 2 + Math.floor(rng() * 20);
      for (let k = 0; k < nb; k++) base.push([-200 + (6800 * k) / (nb - 1), 1700 + rng() * 600]);
      cases.push({ surfaces, base, xc: 500 + rng() * 4000 });
    }
    // shapely: region = ⋃_s {z ≥ s(x), x in span(s)} ∩ {z ≤ base(x)}; left part clipped at x ≤ xc
    const script = `
import json, sys
from shapely.geometry import Polygon, box
from shapely.ops import unary_union
B = 1e5
out = []
for c in json.load(sys.stdin):
    base = c['base']
    above_base = Polygon([(-B, base[0][1])] + [tuple(p) for p in base] + [(B, base[-1][1]), (B, -B), (-B, -B)])
    parts = []
    for s in c['surfaces']:
        pts = sorted(s[::-1] if s[0][0] > s[-1][0] else s, key=lambda p: p[0])  # same ordering rule as orderByX (stable)
        below = Polygon([tuple(p) for p in pts] + [(pts[-1][0], B), (pts[0][0], B)])
        parts.append(below.intersection(above_base))
    region = unary_union(parts)
    xc = c['xc']
    left = region.intersection(box(-B, -B, xc, B)); right = region.intersection(box(xc, -B, B, B))
    ml = left.area * (xc - left.centroid.x) if left.area > 0 else 0.0
    mr = right.area * (right.centroid.x - xc) if right.area > 0 else 0.0
    out.append([region.area, left.area, right.area, ml, mr])
print(json.dumps(out))`;
    const ref = runPython(shapelyPy, script, cases) as number[][];
    cases.forEach((c, i) => {
      const cols = c.surfaces.map((s) => orderByX(s)).map((s) => ({ xs: s.map((p) => p[0]), zs: s.map((p) => p[1]) }));
      const plan = planEnvelope(piecesOf(cols), (k) => cols[k].xs, cols.length);
      const env = evaluateEnvelope(plan, cols.map((q) => q.zs));
      const r = integrateProfile(env, c.base.map((p) => p[0]), c.base.map((p) => p[1]), c.xc);
      const tol = (v: number) => 1e-7 * Math.max(1, Math.abs(v));
      expect(Math.abs(r.area - ref[i][0]), `case ${i} area`).toBeLessThan(tol(ref[i][0]) + 1e-3);
      expect(Math.abs(r.areaLeft - ref[i][1]), `case ${i} left`).toBeLessThan(tol(ref[i][1]) + 1e-3);
      expect(Math.abs(r.areaRight - ref[i][2]), `case ${i} right`).toBeLessThan(tol(ref[i][2]) + 1e-3);
      expect(Math.abs(r.momentLeft - ref[i][3]), `case ${i} left moment`).toBeLessThan(tol(ref[i][3]) + 1);
      expect(Math.abs(r.momentRight - ref[i][4]), `case ${i} right moment`).toBeLessThan(tol(ref[i][4]) + 1);
    });
  });
});
