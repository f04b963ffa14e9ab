/**
 * The crop of a section around a buildup, composited by sharp from the tile
 * pyramid (server/services/tiles.service.ts: `tiles/<z>/<x>_<y>.jpg`, level
 * `maxLevel` full size, each lower level halved rounding up): the coarsest
 * level that still gives the drawn width is read, only the tiles under the
 * crop are decoded, then the region is cut out and resized to the drawn size
 * (vertical stretch included). The interpretation overlay (shared/report/overlay.ts)
 * is composited on top for the PNG export; the PDF draws it as vectors.
 */
import sharp, { type OverlayOptions } from 'sharp';
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
  const canvasW = Math.min(level.width, (c1 + 1) * tileSize) - c0 * tileSize;
  const canvasH = Math.min(level.height, (r1 + 1) * tileSize) - r0 * tileSize;
  const root = sectionKeys(section.storageKey).pyramid;
  const layers: OverlayOptions[] = [];
  const releases: (() => Promise<void>)[] = [];
  try {
    for (let r = r0; r <= r1; r++) {
      for (let c = c0; c <= c1; c++) {
        const copy = await store.localCopy(`${root}/tiles/${level.z}/${c}_${r}.${TILE_EXT}`);
        releases.push(copy.release);
        layers.push({ input: copy.path, left: (c - c0) * tileSize, top: (r - r0) * tileSize });
      }
    }
    const { data, info } = await sharp({ create: { width: canvasW, height: canvasH, channels: 3, background: '#808080' } })
      .composite(layers)
      .raw()
      .toBuffer({ resolveWithObject: true });
    const resized = await sharp(data, { raw: { width: info.width, height: info.height, channels: info.channels as 3 } })
      .extract({ left: lu0 - c0 * tileSize, top: lv0 - r0 * tileSize, width: lu1 - lu0, height: lv1 - lv0 })
      .resize(out.width, out.height, { fit: 'fill', kernel: 'lanczos3' })
      .removeAlpha()
      .raw()
      .toBuffer({ resolveWithObject: true });
    return { data: resized.data, width: resized.info.width, height: resized.info.height, channels: 3 };
  } finally {
    for (const release of releases) await release();
  }
}

/** The crop with the overlay SVG composited on top, as PNG. */
export async function markedUpPng(crop: RawImage, overlay: string): Promise<Buffer> {
  return fromRaw(crop)
    .composite([{ input: Buffer.from(overlay), left: 0, top: 0 }])
    .png({ compressionLevel: 6 })
    .toBuffer();
}
