/**
 * Engine rules that depend on the frame and the size of the geometry:
 * - a Margin pin is checked against its top's x-range in SECTION x (contract
 *   §4), also under a rotated and sheared calibration, where pixel columns
 *   are not section x (engine schema and the editor model alike);
 * - rounding allowances (crest ties, "no aggradation") scale with the
 *   geometry, so the same buildup drawn tiny or huge gets the same class;
 * - a linear velocity law whose k makes depths overflow, or velocities
 *   leave any rock's range, within the input's TWTs is refused naming
 *   `velocity.k`.
 */
import { describe, expect, it } from 'vitest';
import {
  MeasureInputError,
  applyCalibration,
  invertCalibration,
  linearLawProblem,
  measure,
  type Affine,
  type Point,
} from '../../../shared/measure';
import { emptyBuildup, emptyCycle, measurabilityIssues, toInterpretationInput, type CalibrationTie, type Pt } from '../../../shared/editor/model';
import { clone, depthDocToTwt, loadIn, mapPoints, worldDocToPixels, type Doc } from './helpers';

function refusal(doc: unknown, options?: unknown): MeasureInputError {
  try {
    measure(doc, options);
  } catch (e) {
    if (e instanceof MeasureInputError) return e;
    throw e;
  }
  throw new Error('expected the engine to refuse the input');
}

describe('margin x-range in section coordinates under a rotated and sheared calibration', () => {
  // pixel → section map with shear (b = 0.8: x grows down the image) and a slight rotation (d = 0.05)
  const A: Affine = { a: 2, b: 0.8, c: 100, d: 0.05, e: 1.5, f: -20 };
  const tieWorld: Point[] = [[0, 1000], [4000, 1000], [0, 2200], [4000, 2200]];
  // cycle 3 of the pinnacle: top from x 1500 to 2500 (z 1200 at both ends, 1100 at the crest)
  const withLeftMargin = (m: Point) => {
    const w = loadIn('pinnacle-depth.json');
    w.buildups[0].cycles[2].marginLeft = m;
    return worldDocToPixels(w, A, tieWorld);
  };
  // 10 m left of the top in section x, 100 m above its end: inside the top's pixel columns
  const outside: Point = [1490, 1100];
  // 10 m right of the top's left end in section x, 100 m below it: left of the top's pixel columns
  const inside: Point = [1510, 1300];
  const uRangeOf = (top: Point[]) => [Math.min(...top.map((p) => p[0])), Math.max(...top.map((p) => p[0]))];

  it('the two pins are chosen where the pixel-column test gives the opposite answer', () => {
    for (const [m, inPixels] of [[outside, true], [inside, false]] as const) {
      const doc = withLeftMargin(m);
      const [u0, u1] = uRangeOf(doc.buildups[0].cycles[2].top);
      const u = invertCalibration(A, m)[0];
      expect(u >= u0 && u <= u1).toBe(inPixels);
    }
  });

  it('the engine refuses the pin outside the top in section x, naming it', () => {
    const e = refusal(withLeftMargin(outside));
    expect(e.path).toBe('buildups[0].cycles[2].marginLeft');
    expect(e.message).toMatch(/^buildups\[0\]\.cycles\[2\]\.marginLeft: outside the top's x-range \(1500(\.0+\d*)? to 2500/);
  });

  it('the engine accepts the pin inside the top in section x and measures it there', () => {
    const out = measure(withLeftMargin(inside));
    const m = out.buildups[0].cycles[2].marginLeft;
    expect(m[0]).toBeCloseTo(1510, 6);
    expect(m[1]).toBeCloseTo(1300, 6);
  });

  it('the editor model checks the same way when it knows the Ties, and builds the engine input accordingly', () => {
    const toEditor = (doc: Doc) =>
      emptyBuildup({
        name: 'Kestrel Knoll',
        base: doc.buildups[0].base as Pt[],
        cycles: doc.buildups[0].cycles.map((c: Doc) => emptyCycle({ top: c.top, marginLeft: c.marginLeft, marginRight: c.marginRight })),
      });
    const ties: CalibrationTie[] = tieWorld.map((w) => ({ px: invertCalibration(A, w), world: w }));
    const ctx = { calibrationTies: ties, verticalDomain: 'depth_m' as const, velocity: { kind: 'constant' as const, v: 2000 } };
    const bad = toEditor(withLeftMargin(outside));
    const good = toEditor(withLeftMargin(inside));
    expect(measurabilityIssues(bad, ties)).toEqual([expect.stringMatching(/^cycles\[2\]\.marginLeft: outside the top's x-range \(1500 to 2500 m/)]);
    expect(measurabilityIssues(good, ties)).toEqual([]);
    expect(() => toInterpretationInput(bad, ctx)).toThrow(/^buildups\[0\]\.cycles\[2\]\.marginLeft: outside the top's x-range/);
    const input = toInterpretationInput(good, ctx);
    expect(measure(input).buildups[0].cycles[2].marginLeft[0]).toBeCloseTo(1510, 6);
    // without the Ties only pixel columns are known: the fallback answers the other way round here
    expect(measurabilityIssues(bad)).toEqual([]);
    expect(measurabilityIssues(good)).toEqual([expect.stringMatching(/^cycles\[2\]\.marginLeft: outside the top's u-range/)]);
    // Ties that cannot be fitted yet leave the pins unchecked (the calibration is reported on its own)
    expect(measurabilityIssues(bad, ties.slice(0, 2))).toEqual([]);
  });

  it('world coordinates are still checked directly', () => {
    const w = loadIn('pinnacle-depth.json');
    w.buildups[0].cycles[2].marginRight = [2500.5, 1200];
    expect(refusal(w).path).toBe('buildups[0].cycles[2].marginRight');
    // a section-x check, not a pixel one: the same geometry through an axes-only map is still refused
    const px = worldDocToPixels(w, { a: 0.5, b: 0, c: 0, d: 0, e: 2, f: 0 }, tieWorld, 'axes');
    expect(refusal(px).path).toBe('buildups[0].cycles[2].marginRight');
    expect(applyCalibration({ a: 0.5, b: 0, c: 0, d: 0, e: 2, f: 0 }, [2, 3])).toEqual([1, 6]);
  });
});

describe('rounding allowances scale with the geometry', () => {
  const scaled = (doc: Doc, s: number) => mapPoints(doc, ([x, z]) => [x * s, z * s]);
  // the terminations' distance to the top is an option in metres: it scales with the drawing too
  const optionsAt = (s: number) => ({ terminationToleranceM: 25 * s });
  const SCALES = [1e-9, 1e-4, 1, 1e3, 1e6];

  for (const name of ['pinnacle-depth.json', 'bank-depth.json', 'platform-depth.json', 'drowned-flag-depth.json', 'drowned-terminations-depth.json']) {
    it(`${name}: same classes, angles and crest at every scale (${SCALES.join(', ')})`, () => {
      const ref = measure(loadIn(name), optionsAt(1)).buildups[0];
      for (const s of SCALES) {
        const got = measure(scaled(loadIn(name), s), optionsAt(s)).buildups[0];
        expect(got.classification, `scale ${s}`).toBe(ref.classification);
        expect(got.cycles.map((c) => c.class), `scale ${s}`).toEqual(ref.cycles.map((c) => c.class));
        expect(got.drowningIndicators.map((d) => d.kind), `scale ${s}`).toEqual(ref.drowningIndicators.map((d) => d.kind));
        expect(got.terminationsOnTop).toBe(ref.terminationsOnTop);
        if (ref.trajectoryDeg !== null) expect(got.trajectoryDeg!).toBeCloseTo(ref.trajectoryDeg, 9);
        expect(got.crest[0] / s).toBeCloseTo(ref.crest[0], 6);
        expect(got.heightM / s).toBeCloseTo(ref.heightM, 6);
      }
    });
  }

  it('a crest vertex 0.4 mm deeper than the summit is not a tie, drawn at any scale', () => {
    const doc = loadIn('pinnacle-depth.json');
    doc.buildups[0].cycles[2].top = [[1500, 1200], [1900, 1100], [2100, 1100.0004], [2500, 1200]];
    for (const s of [1e-6, 1, 1e6]) {
      const crest = measure(scaled(doc, s)).buildups[0].crest;
      expect(crest[0] / s, `scale ${s}`).toBeCloseTo(1900, 6); // the single shallowest vertex, not the midpoint 2000
    }
  });

  it('margins that differ only by rounding count as flat (downstepping) at every scale', () => {
    // two cycles; the second's margins step out 300 m and "rise" by 4 units in the last place of their depth only
    const flat = (s: number): Doc => {
      const z = 1800 * s;
      const up = z * (1 - 2 ** -50);
      return {
        verticalDomain: 'depth_m',
        buildups: [
          {
            name: 'Marrow Bank (flat)',
            base: [[0, 2000 * s], [4000 * s, 2000 * s]],
            cycles: [
              { index: 1, top: [[1000 * s, z], [3000 * s, z]], marginLeft: [1000 * s, z], marginRight: [3000 * s, z] },
              { index: 2, top: [[700 * s, up], [3300 * s, up]], marginLeft: [700 * s, up], marginRight: [3300 * s, up] },
            ],
          },
        ],
      };
    };
    for (const s of [1e-3, 1, 1e6]) {
      const b = measure(flat(s)).buildups[0];
      expect(b.netAggradationM!, `scale ${s}`).toBeGreaterThanOrEqual(0);
      expect(b.classification, `scale ${s}: aggradation ${b.netAggradationM} m is rounding`).toBe('downstepping');
      expect(b.cycles[1].class).toBe('downstepping');
    }
    // a real rise of 1 part in 10⁶ of the depth is aggradation, again at every scale
    for (const s of [1e-6, 1, 1e6]) {
      const d = clone(flat(s));
      for (const c of [d.buildups[0].cycles[1]]) {
        const z = 1800 * s * (1 - 1e-6);
        c.top = c.top.map((p: Point) => [p[0], z]);
        c.marginLeft[1] = z;
        c.marginRight[1] = z;
      }
      expect(measure(d).buildups[0].classification, `scale ${s}`).toBe('prograding');
    }
  });
});

describe('linear velocity law: k that overflows depths is refused', () => {
  // the pinnacle converted to TWT with v(z) = 2000 + 0.6 z (its deepest point, z = 2000 m, lies at about 1.57 s TWT)
  const twt = () => depthDocToTwt(loadIn('pinnacle-depth.json'), { kind: 'linear', v0: 2000, k: 0.6 });
  const deepestMs = () => Math.max(...twt().buildups[0].base.map((p: Point) => p[1]));

  it('accepts a sediment-like k and gives the depths back', () => {
    // inverse check by hand: t = (2/k)·ln(1 + k·z/v0) = (2/0.6)·ln(1 + 0.6·2000/2000) = 3.333·ln 1.6 = 1.5667 s (Geldart & Sheriff 2004, eq. 4.17a)
    expect(deepestMs()).toBeCloseTo((2000 / 0.6) * Math.log(1.6), 6);
    const out = measure(twt());
    expect(out.buildups[0].heightM).toBeCloseTo(900, 6); // base 2000 m − crest 1100 m, as drawn in depth
  });

  for (const k of [20, 1e6, 1e308]) {
    it(`refuses k = ${k} 1/s naming velocity.k`, () => {
      const doc = twt();
      doc.velocity = { kind: 'linear', v0: 2000, k };
      const e = refusal(doc);
      expect(e.path).toBe('velocity.k');
      expect(e.message).toMatch(/^velocity\.k: k = .* 1\/s is too large for this section/);
    });
  }

  it('judges k over the TWT range of the input and with the largest v0 of a range', () => {
    // e^{k·t/2} = 20000/2000 = 10 at the deepest TWT t: k = 2·ln 10 / t is the edge
    const tS = deepestMs() / 1000;
    const edge = (2 * Math.log(10)) / tS;
    expect(linearLawProblem(2000, edge * 0.999, deepestMs())).toBeNull();
    expect(linearLawProblem(2000, edge * 1.001, deepestMs())).toMatch(/beyond 20000 m\/s/);
    expect(linearLawProblem({ min: 1800, mode: 2000, max: 2500 }, edge * 0.999, deepestMs())).toMatch(/beyond/);
    expect(linearLawProblem(2000, 1e308, deepestMs())).toMatch(/overflow/);
    expect(linearLawProblem(2000, 0, 1e9)).toBeNull(); // k = 0 is the constant law
    // a shallower section tolerates the same k
    const shallow = twt();
    shallow.velocity = { kind: 'linear', v0: 2000, k: edge * 1.001 };
    expect(refusal(shallow).path).toBe('velocity.k');
    const cut = mapPoints(shallow, ([x, t]) => [x, t * 0.5]);
    expect(() => measure(cut)).not.toThrow();
  });
});
