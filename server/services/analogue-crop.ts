/**
 * A crop of the marked-up section for a promoted analogue: the tiles of the
 * pyramid level where the buildup's box (padded) fits in 1200 × 800 px,
 * composed with sharp, the traced base, tops, flanks and Margin pins drawn on
 * top as SVG, encoded as JPEG. Null when the section's tiles are not ready.
 */
import sharp, { type OverlayOptions } from 'sharp';
import { ctx } from '../context';
import { fileStoreFor } from '../storage/fileStore';
import { sectionKeys } from '../storage/keys';
import { pyramidLevels, TILE_EXT } from './tiles.service';
import type { Section } from '../models/section';
import type { BuildupGeometry } from '../../shared/editor/model';

const MAX_W = 1200;
const MAX_H = 800;

async function readAll(stream: NodeJS.ReadableStream): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const c of stream) chunks.push(Buffer.isBuffer(c) ? c : Buffer.from(c as string));
  return Buffer.concat(chunks);
}

export async function cropBuildup(section: Section, g: BuildupGeometry): Promise<Buffer | null> {
  if (section.status !== 'ready' || !section.pyramid) return null;
  const pts: [number, number][] = [...g.base];
  for (const c of g.cycles) {
    pts.push(...c.top, ...(c.flankLeft ?? []), ...(c.flankRight ?? []));
    if (c.marginLeft) pts.push(c.marginLeft);
    if (c.marginRight) pts.push(c.marginRight);
  }
  if (pts.length < 2) return null;
  const xs = pts.map((p) => p[0]);
  const ys = pts.map((p) => p[1]);
  const W = section.width;
  const H = section.height;
  const padX = Math.max(50, 0.15 * (Math.max(...xs) - Math.min(...xs)));
  const padY = Math.max(50, 0.25 * (Math.max(...ys) - Math.min(...ys)));
  const x0 = Math.max(0, Math.floor(Math.min(...xs) - padX));
  const y0 = Math.max(0, Math.floor(Math.min(...ys) - padY));
  const x1 = Math.min(W, Math.ceil(Math.max(...xs) + padX));
  const y1 = Math.min(H, Math.ceil(Math.max(...ys) + padY));
  if (x1 <= x0 || y1 <= y0) return null;
  const tileSize = section.pyramid.tileSize;
  const levels = pyramidLevels(W, H, tileSize);
  const maxZ = levels.length - 1;
  let k = 0;
  while ((x1 - x0) / 2 ** k > MAX_W || (y1 - y0) / 2 ** k > MAX_H) k++;
  const level = levels[maxZ - k];
  const f = 2 ** k;
  const lx0 = Math.floor(x0 / f);
  const ly0 = Math.floor(y0 / f);
  const lx1 = Math.min(level.width, Math.ceil(x1 / f));
  const ly1 = Math.min(level.height, Math.ceil(y1 / f));
  const cw = lx1 - lx0;
  const ch = ly1 - ly0;
  const store = fileStoreFor(ctx().config.storageDir);
  const prefix = `${sectionKeys(section.storageKey).pyramid}/tiles/${level.z}`;
  const layers: OverlayOptions[] = [];
  for (let ty = Math.floor(ly0 / tileSize); ty <= Math.floor((ly1 - 1) / tileSize); ty++) {
    for (let tx = Math.floor(lx0 / tileSize); tx <= Math.floor((lx1 - 1) / tileSize); tx++) {
      const obj = await store.get(`${prefix}/${tx}_${ty}.${TILE_EXT}`);
      if (!obj) return null;
      const buf = await readAll(obj.stream);
      // the part of this tile inside the crop
      const left = Math.max(lx0, tx * tileSize);
      const top = Math.max(ly0, ty * tileSize);
      const meta = await sharp(buf).metadata();
      const right = Math.min(lx1, tx * tileSize + (meta.width ?? tileSize));
      const bottom = Math.min(ly1, ty * tileSize + (meta.height ?? tileSize));
      if (right <= left || bottom <= top) continue;
      const part = await sharp(buf)
        .extract({ left: left - tx * tileSize, top: top - ty * tileSize, width: right - left, height: bottom - top })
        .toBuffer();
      layers.push({ input: part, left: left - lx0, top: top - ly0 });
    }
  }
  const path = (line: readonly [number, number][]) =>
    line.length < 2 ? '' : 'M' + line.map(([u, v]) => `${((u / f) - lx0).toFixed(1)},${((v / f) - ly0).toFixed(1)}`).join(' L');
  const stroke = Math.max(2, Math.round(Math.min(cw, ch) / 250));
  const lines: string[] = [`<path d="${path(g.base)}" stroke="#4a3aff" stroke-width="${stroke}" fill="none"/>`];
  for (const c of g.cycles) {
    lines.push(`<path d="${path(c.top)}" stroke="#ffb000" stroke-width="${stroke}" fill="none"/>`);
    for (const fl of [c.flankLeft, c.flankRight]) if (fl?.length) lines.push(`<path d="${path(fl)}" stroke="#ffb000" stroke-width="${stroke}" stroke-dasharray="${3 * stroke},${2 * stroke}" fill="none"/>`);
    for (const m of [c.marginLeft, c.marginRight]) if (m) lines.push(`<circle cx="${(m[0] / f - lx0).toFixed(1)}" cy="${(m[1] / f - ly0).toFixed(1)}" r="${2 * stroke}" fill="#e0245e"/>`);
  }
  layers.push({ input: Buffer.from(`<svg xmlns="http://www.w3.org/2000/svg" width="${cw}" height="${ch}">${lines.join('')}</svg>`), left: 0, top: 0 });
  return sharp({ create: { width: cw, height: ch, channels: 3, background: { r: 255, g: 255, b: 255 } } })
    .composite(layers)
    .jpeg({ quality: 85 })
    .toBuffer();
}
