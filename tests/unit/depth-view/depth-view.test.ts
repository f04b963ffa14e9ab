/**
 * The depth view's column resampling and pixel mapping (shared/depth-view)
 * against the engine's own depth conversion (shared/measure: calibration +
 * velocity model, measurement-spec §3).
 */
import { describe, expect, it } from 'vitest';
import {
  ColumnResampler,
  createDepthViewMap,
  depthAxisFor,
  DepthViewError,
  sampleAt,
  sampleSpan,
  spanAt,
  type DepthViewBasis,
} from '../../../shared/depth-view/index';
import { createDepthConverter } from '../../../shared/measure/index';
import { fitCalibration, invertCalibration } from '../../../shared/measure/calibration';
import { makeDepthToTwt, modeOf, type VelocityModel } from '../../../shared/measure/velocity';
import { flankAngles } from '../../../shared/measure/flank';
import { intrinsicVE } from '../../../client/canvas/tools/exaggeration';

const W = 400;
const H = 300;

/** Ties of a 400 × 300 px image: 0–8000 m across, 0–2400 ms TWT down (axes-like affine). */
const axesTies: DepthViewBasis['calibration'] = [
  { px: [0, 0], world: [0, 0] },
  { px: [400, 0], world: [8000, 0] },
  { px: [0, 300], world: [0, 2400] },
  { px: [400, 300], world: [8000, 2400] },
];
/** The same with a little shear and tilt (the general, per-column path). */
const shearTies: DepthViewBasis['calibration'] = [
  { px: [0, 0], world: [0, 100] },
  { px: [400, 0], world: [8000, 160] },
  { px: [0, 300], world: [40, 2500] },
  { px: [400, 300], world: [8040, 2560] },
];

const linear: VelocityModel = { kind: 'linear', v0: { min: 1600, mode: 1800, max: 2000 }, k: 0.6 };
const layers: VelocityModel = { kind: 'layers', layers: [{ topMs: 0, v: 1500 }, { topMs: 800, v: 2600 }, { topMs: 1600, v: 4200 }] };

const basis = (calibration: DepthViewBasis['calibration'], velocity: VelocityModel, buildups?: unknown[]): DepthViewBasis => ({
  verticalDomain: 'twt_ms',
  coordinates: 'pixels',
  calibration,
  velocity,
  ...(buildups ? { buildups } : {}),
});

/**
 * The image row (continuous v) at depth z in the column at u, through the
 * engine's inverse conversion (makeDepthToTwt) and the inverse calibration:
 * an independent path from the forward conversion the view uses. Holds for
 * calibrations whose x does not change along a column (b = 0).
 */
function engineRowAt(b: DepthViewBasis, u: number, z: number): number {
  const fit = fitCalibration(b.calibration, 'affine').affine;
  const t = makeDepthToTwt(modeOf(b.velocity as VelocityModel))(z, NaN);
  // t = d·u + e·v + f
  return (t - fit.d * u - fit.f) / fit.e;
}

describe('column resampling against the engine', () => {
  for (const [name, ties, model] of [
    ['axes calibration, linear law', axesTies, linear],
    ['axes calibration, layers', axesTies, layers],
    ['sheared calibration, linear law', shearTies, linear],
  ] as const) {
    it(`${name}: the source row of each depth row is the engine's row within half a pixel`, () => {
      const b = basis([...ties], model);
      const axis = depthAxisFor(b, W, H);
      const r = new ColumnResampler(b, axis, H);
      const conv = createDepthConverter(b);
      let worst = 0;
      let checked = 0;
      for (const i of [0, 57, 199, 399]) {
        const rows = r.sourceRows(i);
        for (const j of [0, 1, 40, 150, 151, 260, 299]) {
          const z = axis.z0 + (j + 0.5) * axis.dz;
          const v = rows[j];
          if (Number.isNaN(v)) continue;
          // the engine's forward conversion at the chosen source row gives this depth row's depth…
          const zBack = conv.toDepth([i + 0.5, v])[1];
          expect(Math.abs(zBack - z) / axis.dz).toBeLessThan(0.5);
          // …and, where the calibration has no shear in x, so does the engine's inverse
          if (ties === axesTies) worst = Math.max(worst, Math.abs(engineRowAt(b, i + 0.5, z) - v));
          checked++;
        }
      }
      expect(checked).toBeGreaterThan(15);
      expect(worst).toBeLessThan(0.5);
    });
  }

  it('a sheared calibration shifts the columns differently (the per-column path is taken)', () => {
    const b = basis([...shearTies], linear);
    const axis = depthAxisFor(b, W, H);
    const r = new ColumnResampler(b, axis, H);
    expect(r.sharedColumns).toBe(false);
    const left = r.sourceRows(0)[150];
    const right = r.sourceRows(399)[150];
    // t grows by 60 ms across at constant v (0.2 ms per column): the same depth sits higher on the right
    expect(left - right).toBeGreaterThan(5);
    expect(new ColumnResampler(basis([...axesTies], linear), axis, H).sharedColumns).toBe(true);
  });

  it('the buildup model uses the envelope of the buildups: columns under the buildup differ', () => {
    const model: VelocityModel = { kind: 'buildup', water: { v: 1500, seafloorMs: 400 }, overburden: { v: 2200 }, carbonate: { v: 4800 } };
    const buildup = {
      name: 'Kestrel Knoll',
      base: [[100, 250], [300, 250]],
      cycles: [{ index: 1, top: [[120, 200], [200, 120], [280, 200]], marginLeft: [120, 200], marginRight: [280, 200] }],
      terminations: [],
    };
    const b = basis([...axesTies], model, [buildup]);
    const axis = depthAxisFor(b, W, H);
    const r = new ColumnResampler(b, axis, H);
    expect(r.sharedColumns).toBe(false);
    const conv = createDepthConverter(b);
    for (const i of [50, 200]) {
      const rows = r.sourceRows(i);
      for (const j of [60, 200, 280]) {
        if (Number.isNaN(rows[j])) continue;
        expect(Math.abs(conv.toDepth([i + 0.5, rows[j]])[1] - (axis.z0 + (j + 0.5) * axis.dz)) / axis.dz).toBeLessThan(0.5);
      }
    }
    // under the crest the fast carbonate makes each TWT row cover more depth: a deep depth row comes from a shallower image row
    const off = Float64Array.from(r.sourceRows(50));
    const under = Float64Array.from(r.sourceRows(200));
    let j = axis.height - 1;
    while (j > 0 && Number.isNaN(off[j])) j--;
    expect(j).toBeGreaterThan(100);
    expect(under[j]).toBeLessThan(off[j] - 3);
  });

  it('sampleAt interpolates between pixel centres and clamps at the ends', () => {
    const px = [10, 20, 40];
    const at = (row: number) => px[row];
    expect(sampleAt(0.5, 3, at)).toBe(10);
    expect(sampleAt(1, 3, at)).toBe(15);
    expect(sampleAt(2.25, 3, at)).toBe(35);
    expect(sampleAt(0, 3, at)).toBe(10);
    expect(sampleAt(9, 3, at)).toBe(40);
    expect(sampleAt(NaN, 3, at)).toBe(255);
  });

  it('sampleSpan averages the source rows a squeezed depth row covers (overlap-weighted), so a thin line is kept', () => {
    const px = [200, 200, 0, 200, 200, 200];
    const at = (row: number) => px[row];
    // a depth row centred on the dark row 2 covering 3 source rows: one third dark
    expect(sampleSpan(2.5, 3, 6, at)).toBeCloseTo(400 / 3, 9);
    // half a row of overlap at each end
    expect(sampleSpan(2.5, 2, 6, at)).toBeCloseTo((0.5 * 200 + 0 + 0.5 * 200) / 2, 9);
    // point sampling halfway between rows 3 and 4 would miss the dark row entirely; the span does not
    expect(sampleAt(4, 6, at)).toBe(200);
    expect(sampleSpan(4, 4, 6, at)).toBeLessThan(200);
    // spans of one row or less sample as sampleAt
    expect(sampleSpan(1, 0.8, 6, at)).toBe(sampleAt(1, 6, at));
    expect(spanAt(Float64Array.from([1, 2.5, 4]), 1)).toBe(1.5);
    expect(spanAt(Float64Array.from([1, 2.5, NaN]), 1)).toBe(1.5);
    expect(spanAt(Float64Array.from([NaN, 2.5, NaN]), 1)).toBe(0);
    expect(spanAt(Float64Array.from([1, 2.5, NaN]), 2)).toBe(0);
  });

  it('refuses a calibration in which TWT grows upwards, naming the calibration', () => {
    const flipped = axesTies.map((t) => ({ px: t.px, world: [t.world[0], 2400 - t.world[1]] as [number, number] }));
    expect(() => depthAxisFor(basis(flipped, linear), W, H)).toThrow(DepthViewError);
    expect(() => depthAxisFor(basis(flipped, linear), W, H)).toThrow(/^calibration: /);
  });
});

describe('image px ↔ depth-view px', () => {
  it('round trip within half a pixel (in fact within 1e-4 px), both calibrations', () => {
    for (const ties of [axesTies, shearTies]) {
      const b = basis([...ties], linear);
      const map = createDepthViewMap(b, depthAxisFor(b, W, H));
      for (const p of [[0, 0], [12.3, 45.6], [200, 150], [399.9, 299.9], [250, -20], [100, 340]] as [number, number][]) {
        const v = map.toView(p);
        expect(v[0]).toBe(p[0]);
        const back = map.toImage(v);
        expect(Math.abs(back[1] - p[1])).toBeLessThan(1e-4);
        const w2 = map.toView(map.toImage([p[0], v[1] + 7]));
        expect(Math.abs(w2[1] - (v[1] + 7))).toBeLessThan(1e-4);
      }
    }
  });

  it('the depth-view readout gives the depth of the row and the engine x', () => {
    const b = basis([...axesTies], layers);
    const axis = depthAxisFor(b, W, H);
    const map = createDepthViewMap(b, axis);
    const conv = createDepthConverter(b);
    const img: [number, number] = [123, 210];
    const view = map.toView(img);
    const [x, z] = map.viewConverter.toDepth(view);
    const engine = conv.toDepth(img);
    expect(x).toBeCloseTo(engine[0], 6);
    expect(z).toBeCloseTo(engine[1], 6);
  });

  it('at VE 1 in the depth view a flank shows its true angle on screen (within 0.5°)', () => {
    const b = basis([...axesTies], linear);
    const axis = depthAxisFor(b, W, H);
    const map = createDepthViewMap(b, axis);
    const conv = createDepthConverter(b);
    // a flank traced in image pixels, steepening downwards a little (curved in depth by the linear law)
    const flank: [number, number][] = [[150, 80], [170, 110], [185, 140], [196, 170], [205, 200]];
    const depth = flank.map((p) => conv.toDepth(p));
    const truth = flankAngles(depth.map((p) => p[0]), depth.map((p) => p[1])).flankAngleDeg!;
    // the VE control sets the stretch that shows VE 1 from the view's intrinsic VE (tools/exaggeration.ts)
    const stretch = 1 / intrinsicVE(map.viewConverter, map.toView([200, 150]))!;
    const scale = 1.7; // any zoom
    const screen = flank.map((p) => map.toView(p)).map(([u, w]) => [u * scale + 30, w * scale * stretch - 12]);
    const onScreen = flankAngles(screen.map((p) => p[0]), screen.map((p) => p[1])).flankAngleDeg!;
    expect(truth).toBeGreaterThan(30); // a real flank, not a flat line
    expect(Math.abs(onScreen - truth)).toBeLessThan(0.5);
  });
});
