/**
 * The crop of a section around a buildup, composited by sharp from the tile
 * pyramid (server/services/tiles.service.ts: `tiles/<z>/<x>_<y>.jpg`, level
 * `maxLevel` full size, each lower level halved rounding up): the coarsest
 * level that still gives the drawn width is read, only the tiles under the
 * crop are decoded, then the region is cut out and resized to the drawn size
 * (vertical stretch included). The interpretation overlay (shared/report/overlay.ts)
 * is composited on top for the PNG export; the PDF draws it as vectors.
 */
import sharp, { type OutputInfo } from 'sharp';
import type { Section } from '../models/section';
import type { FileStore } from '../storage/fileStore';
import { pyramidLevels, TILE_EXT } from '../services/tiles.service';
import { sectionKeys } from '../storage/keys';

export interface CropRequest {
  u0: number;
  v0: number;
  width: number;
  height: number;
}

/** Raw RGB pixels, row by row (what sharp's `raw()` gives). */
export interface RawImage {
  data: Buffer;
  width: number;
  height: number;
  channels: 3;
}

/** sharp on a raw RGB image. */
export function fromRaw(img: RawImage) {
  return sharp(img.data, { raw: { width: img.width, height: img.height, channels: img.channels } });
}

/**
 * The crop as raw RGB pixels of `width` × `height` (already stretched). Kept
 * raw so the JPEG for the PDF and the marked-up PNG are each encoded once,
 * without decoding an intermediate file.
 */
export async function compositeCrop(store: FileStore, section: Section, crop: CropRequest, out: { width: number; height: number }): Promise<RawImage> {
  if (!section.pyramid) throw new Error('compositeCrop: the section has no tile pyramid');
  const tileSize = section.pyramid.tileSize;
  const levels = pyramidLevels(section.width, section.height, tileSize);
  const full = levels[levels.length - 1];
  // the coarsest level whose copy of the crop is at least as wide and tall as the drawing (or the full image)
  let level = full;
  for (const l of levels) {
    const f = l.width / full.width;
    const g = l.height / full.height;
    if (crop.width * f >= Math.min(out.width, crop.width) && crop.height * g >= Math.min(out.height, crop.height)) {
      level = l;
      break;
    }
  }
  const fx = level.width / full.width;
  const fy = level.height / full.height;
  const lu0 = Math.max(0, Math.floor(crop.u0 * fx));
  const lv0 = Math.max(0, Math.floor(crop.v0 * fy));
  const lu1 = Math.min(level.width, Math.max(lu0 + 1, Math.ceil((crop.u0 + crop.width) * fx)));
  const lv1 = Math.min(level.height, Math.max(lv0 + 1, Math.ceil((crop.v0 + crop.height) * fy)));
  const c0 = Math.floor(lu0 / tileSize);
  const c1 = Math.floor((lu1 - 1) / tileSize);
  const r0 = Math.floor(lv0 / tileSize);
  const r1 = Math.floor((lv1 - 1) / tileSize);
  const root = sectionKeys(section.storageKey).pyramid;
  // the region of the level under the crop, filled tile by tile: each tile is decoded on its own (in
  // parallel on libuv's threads) and its rows under the crop copied in; one resize afterwards. (One sharp
  // composite of every tile on a canvas blends each layer over the whole canvas: several times slower.)
  const rw = lu1 - lu0;
  const rh = lv1 - lv0;
  const region = Buffer.alloc(rw * rh * 3, 0x80); // mid grey under any pixel no tile covers (none in a whole pyramid)
  const cells: { c: number; r: number }[] = [];
  for (let r = r0; r <= r1; r++) for (let c = c0; c <= c1; c++) cells.push({ c, r });
  await Promise.all(
    cells.map(async ({ c, r }) => {
      const copy = await store.localCopy(`${root}/tiles/${level.z}/${c}_${r}.${TILE_EXT}`);
      let tile: { data: Buffer; info: OutputInfo };
      try {
        tile = await sharp(copy.path).removeAlpha().toColourspace('srgb').raw().toBuffer({ resolveWithObject: true });
      } finally {
        await copy.release();
      }
      blit(tile.data, tile.info, c * tileSize, r * tileSize, region, lu0, lv0, rw, rh);
    }),
  );
  const resized = await sharp(region, { raw: { width: rw, height: rh, channels: 3 } })
    .resize(out.width, out.height, { fit: 'fill', kernel: 'lanczos3' })
    .raw()
    .toBuffer({ resolveWithObject: true });
  return { data: resized.data, width: resized.info.width, height: resized.info.height, channels: 3 };
}

/**
 * Copy the part of a decoded tile (placed at `tx`, `ty` of the level) that
 * falls inside the region `rw` × `rh` at `u0`, `v0` of the level. A tile with
 * one channel (grey) is spread to three.
 */
export function blit(data: Buffer, info: { width: number; height: number; channels: number }, tx: number, ty: number, region: Buffer, u0: number, v0: number, rw: number, rh: number) {
  const x0 = Math.max(tx, u0);
  const x1 = Math.min(tx + info.width, u0 + rw);
  const y0 = Math.max(ty, v0);
  const y1 = Math.min(ty + info.height, v0 + rh);
  if (x1 <= x0 || y1 <= y0) return;
  const ch = info.channels;
  for (let y = y0; y < y1; y++) {
    const src = ((y - ty) * info.width + (x0 - tx)) * ch;
    const dst = ((y - v0) * rw + (x0 - u0)) * 3;
    if (ch === 3) data.copy(region, dst, src, src + (x1 - x0) * 3);
    else
      for (let i = 0, n = x1 - x0; i < n; i++) {
        const g = data[src + i * ch];
        region[dst + 3 * i] = g;
        region[dst + 3 * i + 1] = g;
        region[dst + 3 * i + 2] = g;
      }
  }
}

/**
 * The crop with the overlay SVG composited on top, as an opaque RGB PNG. The
 * composite gives an alpha channel (the overlay's), all opaque over the
 * crop; dropping it makes the file RGB, and deflating three channels instead
 * of four took a half to a third of the time (about 40 against 95 ms for a
 * 1400 × 400 crop).
 */
export async function markedUpPng(crop: RawImage, overlay: string): Promise<Buffer> {
  return fromRaw(crop)
    .composite([{ input: Buffer.from(overlay), left: 0, top: 0 }])
    .removeAlpha()
    .png({ compressionLevel: 6 })
    .toBuffer();
}
