/**
 * The depth job's pixel resampling (server/jobs/depth.job.ts resampleToDepth):
 * dark reflectors at known image rows land on the depth-view rows that the
 * engine's conversion gives (shared/depth-view createDepthViewMap), within
 * half a pixel, in every column.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { afterAll, describe, expect, it } from 'vitest';
import { resampleToDepth } from '../../../server/jobs/depth.job';
import { createDepthViewMap, type DepthViewBasis } from '../../../shared/depth-view/index';

const W = 96;
const H = 240;
const LINES = [40, 130, 200]; // image rows painted black on white, 3 px thick (centred on these rows)
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-depth-'));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

async function decodedImage(): Promise<string> {
  const px = Buffer.alloc(W * H, 255);
  for (const r of LINES) px.fill(0, (r - 1) * W, (r + 2) * W);
  const file = path.join(dir, `src-${Math.random().toString(36).slice(2)}.v`);
  await sharp(px, { raw: { width: W, height: H, channels: 1 } }).toColourspace('b-w').toFile(file);
  return file;
}

const cases: [string, DepthViewBasis][] = [
  [
    'axes-like calibration, layered velocities',
    {
      verticalDomain: 'twt_ms',
      coordinates: 'pixels',
      calibration: [
        { px: [0, 0], world: [0, 0] },
        { px: [96, 0], world: [1920, 0] },
        { px: [0, 240], world: [0, 2400] },
      ],
      velocity: { kind: 'layers', layers: [{ topMs: 0, v: 1500 }, { topMs: 900, v: 3200 }] },
    },
  ],
  [
    'sheared calibration, linear law',
    {
      verticalDomain: 'twt_ms',
      coordinates: 'pixels',
      calibration: [
        { px: [0, 0], world: [0, 0] },
        { px: [96, 0], world: [1920, 150] },
        { px: [0, 240], world: [0, 2400] },
      ],
      velocity: { kind: 'linear', v0: 1700, k: 0.5 },
    },
  ],
];

describe('resampleToDepth', () => {
  it('keeps one-pixel reflectors where a depth row squeezes several TWT rows (slow water over fast rock)', async () => {
    // 1500 m/s above 900 ms, 6000 m/s below: 7.5 m per image row up there against ~21.6 m per depth row
    const basis: DepthViewBasis = { ...cases[0][1], velocity: { kind: 'layers', layers: [{ topMs: 0, v: 1500 }, { topMs: 900, v: 6000 }] } };
    const thin = [20, 31, 42, 53, 64, 75];
    const px = Buffer.alloc(W * H, 255);
    for (const r of thin) px.fill(0, r * W, (r + 1) * W);
    const src = path.join(dir, 'thin.v');
    await sharp(px, { raw: { width: W, height: H, channels: 1 } }).toColourspace('b-w').toFile(src);
    const out = path.join(dir, 'thin-depth.v');
    const axis = await resampleToDepth(src, out, basis, () => {});
    const { data } = await sharp(out).toColourspace('b-w').raw().toBuffer({ resolveWithObject: true });
    const map = createDepthViewMap(basis, axis);
    for (const r of thin) {
      const w = map.toView([10.5, r + 0.5])[1];
      let darkest = 255;
      for (let j = Math.floor(w) - 2; j <= Math.floor(w) + 2; j++) darkest = Math.min(darkest, data[j * W + 10]);
      // each line's darkness spread over the ~2.9 image rows a depth row covers (at worst split between two
      // depth rows: 255 · (1 − 0.5 / 2.9) ≈ 211): visible, never skipped (point sampling leaves some at 255)
      expect(darkest, `line at v ${r}`).toBeLessThan(220);
    }
  });

  for (const [name, basis] of cases) {
    it(`${name}: each reflector sits on the engine's depth row within half a pixel`, async () => {
      const src = await decodedImage();
      const out = path.join(dir, `depth-${Math.random().toString(36).slice(2)}.v`);
      const fractions: number[] = [];
      const axis = await resampleToDepth(src, out, basis, (f) => fractions.push(f));
      expect(fractions.at(-1)).toBe(1);
      const { data, info } = await sharp(out).toColourspace('b-w').raw().toBuffer({ resolveWithObject: true });
      expect([info.width, info.height, info.channels]).toEqual([W, H, 1]);
      const map = createDepthViewMap(basis, axis);
      for (const col of [0, 31, 95]) {
        for (const row of LINES) {
          const w = map.toView([col + 0.5, row + 0.5])[1]; // the line's centre in depth-view px
          // the centre of darkness of the output column in a window around it
          let mass = 0;
          let moment = 0;
          let darkest = 255;
          for (let j = Math.max(0, Math.floor(w) - 8); j <= Math.min(H - 1, Math.floor(w) + 8); j++) {
            const val = data[j * W + col];
            darkest = Math.min(darkest, val);
            mass += 255 - val;
            moment += (255 - val) * (j + 0.5);
          }
          expect(darkest).toBeLessThan(60);
          expect(Math.abs(moment / mass - w)).toBeLessThan(0.5);
        }
      }
    });
  }
});
