/**
 * The report's crop (server/reports/crop.ts `compositeCrop`): cut from the
 * tile pyramid, it must show what the same region of the original image
 * shows, resized the same way. The reference is computed independently of
 * the pyramid: sharp's own extract + resize (lanczos3) on the original
 * image. The tiles are JPEG (quality 90 by default), so the two may differ by
 * the format's loss: the mean absolute difference per channel is held under
 * 2 of 255 and the largest under 8 (measured here: 0.4–0.9 and 3–5; a tile
 * column copied one pixel off already shows 9–11, a misplaced tile or
 * swapped channels far more).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { blit, compositeCrop, markedUpPng } from '../../../server/reports/crop';
import { buildPyramid } from '../../../server/services/tiles.service';
import { LocalFileStore } from '../../../server/storage/fileStore';
import { sectionKeys } from '../../../server/storage/keys';
import type { Section } from '../../../server/models/section';

const W = 1300;
const H = 700;
const TILE = 256;

/**
 * An asymmetric test image without hard edges (which JPEG would blur): red
 * along u, green along v, blue a slow wave, and on all three a ripple of
 * about 25 px, so that a crop shifted by a single pixel is told apart.
 */
function pixels(channels: 1 | 3): Buffer {
  const b = Buffer.alloc(W * H * channels);
  for (let v = 0; v < H; v++)
    for (let u = 0; u < W; u++) {
      const i = (v * W + u) * channels;
      const ripple = 30 * Math.sin(u / 4) * Math.cos(v / 4);
      const r = Math.round(30 + (195 * u) / (W - 1) + ripple);
      const g = Math.round(30 + (195 * v) / (H - 1) + ripple);
      const bl = Math.round(127.5 + 70 * Math.sin(u / 90) * Math.cos(v / 70) + ripple);
      if (channels === 3) {
        b[i] = r;
        b[i + 1] = g;
        b[i + 2] = bl;
      } else b[i] = Math.round((r + g + bl) / 3);
    }
  return b;
}

let dir: string;
const store = () => new LocalFileStore(dir);

async function makeSection(key: string, channels: 1 | 3): Promise<{ section: Section; original: string }> {
  const original = path.join(dir, `${key}.png`);
  await sharp(pixels(channels), { raw: { width: W, height: H, channels } }).png().toFile(original);
  const out = path.join(dir, sectionKeys(key).pyramid);
  fs.mkdirSync(out, { recursive: true });
  const work = fs.mkdtempSync(path.join(dir, 'work-'));
  await buildPyramid(original, out, { limitInputPixels: 1e8, tileSize: TILE, workDir: work });
  const section = { width: W, height: H, storageKey: key, pyramid: { tileSize: TILE } } as unknown as Section;
  return { section, original };
}

async function reference(original: string, crop: { u0: number; v0: number; width: number; height: number }, size: { width: number; height: number }) {
  const { data } = await sharp(original)
    .toColourspace('srgb')
    .extract({ left: crop.u0, top: crop.v0, width: crop.width, height: crop.height })
    .resize(size.width, size.height, { fit: 'fill', kernel: 'lanczos3' })
    .removeAlpha()
    .raw()
    .toBuffer({ resolveWithObject: true });
  return data;
}

function compare(a: Buffer, b: Buffer) {
  expect(a.length).toBe(b.length);
  let sum = 0;
  let worst = 0;
  for (let i = 0; i < a.length; i++) {
    const d = Math.abs(a[i] - b[i]);
    sum += d;
    if (d > worst) worst = d;
  }
  return { mean: sum / a.length, worst };
}

/** The crop against the independent reference: mean difference under 2 of 255, largest under 8 (see the head of this file). */
async function expectLikeOriginal(got: { data: Buffer }, original: string, crop: { u0: number; v0: number; width: number; height: number }, size: { width: number; height: number }) {
  const d = compare(got.data, await reference(original, crop, size));
  expect(d.mean).toBeLessThan(2);
  expect(d.worst).toBeLessThan(8);
}

beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-crop-'));
});
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

describe('compositeCrop', () => {
  it('a crop across tile seams at full size matches the original region', async () => {
    const { section, original } = await makeSection('rgb', 3);
    // crosses the tile seams at u 256, 512, 768 and v 256, 512
    const crop = { u0: 200, v0: 130, width: 700, height: 450 };
    const size = { width: 700, height: 450 };
    const got = await compositeCrop(store(), section, crop, size);
    expect([got.width, got.height, got.channels, got.data.length]).toEqual([700, 450, 3, 700 * 450 * 3]);
    await expectLikeOriginal(got, original, crop, size);
  });

  it('a shrunk, stretched crop is read from a coarser level and still matches', async () => {
    const { section, original } = await makeSection('rgb2', 3);
    const crop = { u0: 0, v0: 40, width: 1300, height: 600 };
    const size = { width: 400, height: 300 }; // a quarter across, half down: level 2 of the pyramid is enough across
    const got = await compositeCrop(store(), section, crop, size);
    await expectLikeOriginal(got, original, crop, size);
  });

  it('a grey (one channel) pyramid gives three equal channels', async () => {
    const { section, original } = await makeSection('grey', 1);
    const crop = { u0: 250, v0: 250, width: 300, height: 200 };
    const size = { width: 300, height: 200 };
    const got = await compositeCrop(store(), section, crop, size);
    expect(got.channels).toBe(3);
    for (let i = 0; i < got.data.length; i += 3 * 997) {
      expect(got.data[i + 1]).toBe(got.data[i]);
      expect(got.data[i + 2]).toBe(got.data[i]);
    }
    await expectLikeOriginal(got, original, crop, size);
  });

  it('a missing tile fails the crop (no silent grey patch in a report)', async () => {
    const { section } = await makeSection('holes', 3);
    fs.rmSync(path.join(dir, sectionKeys('holes').pyramid, 'tiles', String(Math.ceil(Math.log2(W))), '1_1.jpg'));
    await expect(compositeCrop(store(), section, { u0: 200, v0: 200, width: 200, height: 200 }, { width: 200, height: 200 })).rejects.toThrow();
  });
});

describe('markedUpPng', () => {
  it('is an opaque RGB PNG: the crop where the overlay is clear, the overlay colour where it draws', async () => {
    const width = 60;
    const height = 40;
    const data = Buffer.alloc(width * height * 3);
    for (let i = 0; i < width * height; i++) data.set([200, 180, 40], 3 * i);
    const overlay = `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}"><rect x="10" y="10" width="20" height="10" fill="#1d3a6e"/></svg>`;
    const png = await markedUpPng({ data, width, height, channels: 3 }, overlay);
    const meta = await sharp(png).metadata();
    expect([meta.format, meta.width, meta.height, meta.channels, meta.hasAlpha]).toEqual(['png', width, height, 3, false]);
    const back = await sharp(png).raw().toBuffer();
    const at = (u: number, v: number) => Array.from(back.subarray(3 * (v * width + u), 3 * (v * width + u) + 3));
    expect(at(2, 2)).toEqual([200, 180, 40]); // crop untouched outside the overlay's shapes
    expect(at(20, 15)).toEqual([0x1d, 0x3a, 0x6e]); // inside the rectangle: its fill, lossless
    expect(at(45, 35)).toEqual([200, 180, 40]);
  });
});

describe('blit', () => {
  it('copies only the overlap of a tile and the region, row by row', () => {
    // a 4 × 3 RGB tile at (2, 1) of the level; region 4 × 4 at (3, 0): overlap u 3..5, v 1..3
    const tile = Buffer.from(Array.from({ length: 4 * 3 * 3 }, (_, i) => i + 1));
    const region = Buffer.alloc(4 * 4 * 3);
    blit(tile, { width: 4, height: 3, channels: 3 }, 2, 1, region, 3, 0, 4, 4);
    const px = (u: number, v: number) => [...region.subarray((v * 4 + u) * 3, (v * 4 + u) * 3 + 3)];
    expect(px(0, 0)).toEqual([0, 0, 0]); // row 0 of the region is above the tile
    expect(px(0, 1)).toEqual([4, 5, 6]); // tile (1, 0)
    expect(px(2, 3)).toEqual([4 * 3 * 2 + 3 * 3 + 1, 4 * 3 * 2 + 3 * 3 + 2, 4 * 3 * 2 + 3 * 3 + 3]); // tile (3, 2)
    expect(px(3, 2)).toEqual([0, 0, 0]); // u 6 is right of the tile
  });
});
