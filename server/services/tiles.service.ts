/**
 * Tile pyramids for section images, built level by level in one decoding pass.
 *
 * Layout (Deep Zoom style, like sharp's `.tile({ layout: 'dz' })`): level
 * `maxLevel` is the full image, each lower level halves the one above
 * (rounding up, 2×2 box average, edge pixels repeated), level 0 is 1×1.
 * Tiles are `tileSize` square (smaller at the right and bottom edges), no
 * overlap, JPEG, stored as `tiles/<z>/<x>_<y>.jpg`. Next to them:
 * `preview.jpg` (fits in 2048×2048), `thumbnail.jpg` (fits in 320×320) and
 * `pyramid.json`.
 *
 * Why not `sharp().tile()`: it gives no progress. Here the image is decoded
 * once into libvips' uncompressed format on scratch disk, then read back in
 * strips of `tileSize` rows; tiles are encoded on several libuv threads at
 * once (tests/bench/tiles.bench.ts prints both ways). Memory stays bounded:
 * one strip per level plus the preview level.
 */
import fsp from 'node:fs/promises';
import path from 'node:path';
import sharp, { type JpegOptions } from 'sharp';
import type { TileLevel, TilesDescriptor } from '../../shared/schemas/sections';

export const TILE_SIZE = 512;
export const TILE_FORMAT = 'jpeg' as const;
export const TILE_EXT = 'jpg';
export const PREVIEW_BOX = 2048;
export const THUMBNAIL_BOX = 320;

export interface PyramidResult {
  width: number;
  height: number;
  channels: number;
  tileSize: number;
  overlap: number;
  format: 'jpeg';
  maxLevel: number;
  tileCount: number;
  preview: { width: number; height: number };
  thumbnail: { width: number; height: number };
}

export interface BuildOptions {
  /** sharp's decompression-bomb guard; the build refuses larger images. */
  limitInputPixels: number;
  tileSize?: number;
  quality?: number;
  /** Tile encodings in flight at once (each runs on a libuv thread). */
  concurrency?: number;
  /** Called with the done fraction 0..1 (decoding counts for DECODE_SHARE, then tile strips). */
  onProgress?: (fraction: number) => void;
  /** A private local scratch folder (outside `outDir`) for the decoded image. */
  workDir: string;
}

/** Share of the progress given to decoding (about what it costs next to the tiles, measured). */
export const DECODE_SHARE = 0.3;
const VIPS_HEADER_BYTES = 64;

/** The 64-byte header of libvips' own format: sizes at 4/8/12, band format at 20 (0 = uchar), coding at 24 (0 = none). */
function checkVipsHeader(h: Buffer, width: number, height: number, channels: number) {
  const got = { width: h.readInt32LE(4), height: h.readInt32LE(8), bands: h.readInt32LE(12), format: h.readInt32LE(20), coding: h.readInt32LE(24) };
  if (got.width !== width || got.height !== height || got.bands !== channels || got.format !== 0 || got.coding !== 0) {
    throw new Error(`unexpected decoded layout ${JSON.stringify(got)}`);
  }
}

/** Level sizes from 0 (1×1) to maxLevel (full size), with their tile grid. */
export function pyramidLevels(width: number, height: number, tileSize = TILE_SIZE): TileLevel[] {
  if (!(Number.isInteger(width) && Number.isInteger(height) && width > 0 && height > 0)) {
    throw new Error(`pyramidLevels: bad size ${width} × ${height}`);
  }
  const sizes: [number, number][] = [[width, height]];
  let [w, h] = [width, height];
  while (w > 1 || h > 1) {
    w = Math.ceil(w / 2);
    h = Math.ceil(h / 2);
    sizes.push([w, h]);
  }
  sizes.reverse();
  return sizes.map(([lw, lh], z) => ({ z, width: lw, height: lh, columns: Math.ceil(lw / tileSize), rows: Math.ceil(lh / tileSize) }));
}

export function tilesDescriptor(sectionId: number, width: number, height: number, tileSize: number, overlap: number): TilesDescriptor {
  const levels = pyramidLevels(width, height, tileSize);
  return {
    urlTemplate: `/api/sections/${sectionId}/tiles/{z}/{x}_{y}.${TILE_EXT}`,
    layout: 'dz',
    tileSize,
    overlap,
    format: TILE_FORMAT,
    width,
    height,
    minLevel: 0,
    maxLevel: levels.length - 1,
    levels,
  };
}

/** The largest size that fits in a `box`×`box` square without enlarging. */
export function fitInside(width: number, height: number, box: number): { width: number; height: number } {
  const s = Math.min(1, box / width, box / height);
  return { width: Math.max(1, Math.round(width * s)), height: Math.max(1, Math.round(height * s)) };
}

/** 2×2 box average, output size ceil(w/2) × ceil(h/2), last row/column repeated when odd. */
export function halve(src: Buffer, w: number, h: number, ch: number): Buffer {
  const ow = (w + 1) >> 1;
  const oh = (h + 1) >> 1;
  const out = Buffer.allocUnsafe(ow * oh * ch);
  const rb = w * ch;
  let o = 0;
  for (let j = 0; j < oh; j++) {
    const r0 = 2 * j * rb;
    const r1 = (2 * j + 1 < h ? 2 * j + 1 : 2 * j) * rb;
    for (let i = 0; i < ow; i++) {
      const c0 = 2 * i * ch;
      const c1 = (2 * i + 1 < w ? 2 * i + 1 : 2 * i) * ch;
      for (let k = 0; k < ch; k++) {
        out[o++] = (src[r0 + c0 + k] + src[r0 + c1 + k] + src[r1 + c0 + k] + src[r1 + c1 + k] + 2) >> 2;
      }
    }
  }
  return out;
}

/** At most `limit` promises in flight; the first failure is rethrown. */
class Pool {
  private inFlight = new Set<Promise<unknown>>();
  private failure: unknown = null;
  constructor(private readonly limit: number) {}
  async add(start: () => Promise<unknown>) {
    if (this.failure) throw this.failure;
    while (this.inFlight.size >= this.limit) await Promise.race(this.inFlight);
    if (this.failure) throw this.failure;
    const p: Promise<unknown> = start()
      .catch((e) => {
        this.failure ??= e;
      })
      .finally(() => this.inFlight.delete(p));
    this.inFlight.add(p);
  }
  async drain() {
    await Promise.all(this.inFlight);
    if (this.failure) throw this.failure;
  }
}

interface Shared {
  outDir: string;
  tileSize: number;
  channels: number;
  pool: Pool;
  jpeg: JpegOptions;
  tileCount: number;
}

/** One pyramid level: collects rows into a strip of `tileSize` rows, writes its tiles, feeds the level below. */
class LevelWriter {
  private strip: Buffer;
  private filled = 0; // bytes in the strip
  private stripRow = 0; // tile row index of the strip being filled
  private readonly rowBytes: number;
  capture: Buffer | null = null;
  private capturedRows = 0;

  constructor(
    readonly level: TileLevel,
    private readonly s: Shared,
    readonly next: LevelWriter | null,
  ) {
    this.rowBytes = level.width * s.channels;
    this.strip = Buffer.allocUnsafe(Math.min(s.tileSize, level.height) * this.rowBytes);
  }

  async addBytes(chunk: Buffer) {
    let off = 0;
    while (off < chunk.length) {
      const n = Math.min(chunk.length - off, this.strip.length - this.filled);
      chunk.copy(this.strip, this.filled, off, off + n);
      this.filled += n;
      off += n;
      if (this.filled === this.strip.length) await this.flush();
    }
  }

  private async flush() {
    if (this.filled === 0) return;
    if (this.filled % this.rowBytes !== 0) throw new Error('pyramid: the decoder stopped in the middle of a row');
    const rows = this.filled / this.rowBytes;
    const { tileSize: T, channels: ch, pool } = this.s;
    const { width, z } = this.level;
    const dir = path.join(this.s.outDir, 'tiles', String(z));
    if (this.stripRow === 0) await fsp.mkdir(dir, { recursive: true });
    for (let x = 0; x * T < width; x++) {
      const tw = Math.min(T, width - x * T);
      const tile = Buffer.allocUnsafe(tw * rows * ch);
      for (let r = 0; r < rows; r++) {
        const from = r * this.rowBytes + x * T * ch;
        this.strip.copy(tile, r * tw * ch, from, from + tw * ch);
      }
      const file = path.join(dir, `${x}_${this.stripRow}.${TILE_EXT}`);
      const jpeg = this.s.jpeg;
      const space = ch === 1 ? 'b-w' : 'srgb'; // keep greyscale tiles single-channel (sharp would widen them to sRGB)
      await pool.add(() => sharp(tile, { raw: { width: tw, height: rows, channels: ch as 1 | 3 } }).toColourspace(space).jpeg(jpeg).toFile(file));
      this.s.tileCount++;
    }
    if (this.capture) {
      this.strip.copy(this.capture, this.capturedRows * this.rowBytes, 0, this.filled);
      this.capturedRows += rows;
    }
    const half = this.next ? halve(this.strip.subarray(0, this.filled), width, rows, ch) : null;
    this.filled = 0;
    this.stripRow++;
    if (half) await this.next!.addBytes(half);
  }

  async finish() {
    await this.flush();
    if (this.capturedRows && this.capturedRows !== this.level.height) throw new Error('pyramid: preview level incomplete');
    if (this.next) await this.next.finish();
  }
}

/**
 * Decode `srcPath` once and write the pyramid, preview and thumbnail into
 * `outDir` (which must exist and be empty). Throws on a damaged or oversized
 * image; the caller removes `outDir` then.
 */
export async function buildPyramid(srcPath: string, outDir: string, opts: BuildOptions): Promise<PyramidResult> {
  const tileSize = opts.tileSize ?? TILE_SIZE;
  const meta = await sharp(srcPath, { limitInputPixels: opts.limitInputPixels }).metadata();
  const width = meta.width;
  const height = meta.height;
  if (!width || !height) throw new Error('the image has no size');
  if (width * height > opts.limitInputPixels) {
    throw new Error(`the image has ${width} × ${height} pixels, over the limit of ${opts.limitInputPixels}`);
  }
  const grey = meta.space === 'b-w' || meta.space === 'grey16';
  const channels = grey ? 1 : 3;
  const levels = pyramidLevels(width, height, tileSize);

  const shared: Shared = {
    outDir,
    tileSize,
    channels,
    pool: new Pool(Math.max(1, opts.concurrency ?? 4)),
    // libjpeg-turbo's fast path: no trellis, no progressive scans, standard
    // Huffman tables (optimised tables save ~15 % of the bytes at twice the encode time).
    jpeg: {
      quality: opts.quality ?? 90,
      chromaSubsampling: '4:4:4',
      mozjpeg: false,
      trellisQuantisation: false,
      overshootDeringing: false,
      optimiseScans: false,
      optimiseCoding: false,
    },
    tileCount: 0,
  };
  let writer: LevelWriter | null = null;
  const writers: LevelWriter[] = [];
  for (const level of levels) {
    writer = new LevelWriter(level, shared, writer);
    writers.push(writer);
  }
  writers.reverse(); // writers[0] = full size
  const top = writers[0];

  // The coarsest level still at least as large as the preview gives preview and thumbnail.
  const preview = fitInside(width, height, PREVIEW_BOX);
  const thumbnail = fitInside(width, height, THUMBNAIL_BOX);
  const source = [...writers].reverse().find((w) => w.level.width >= preview.width && w.level.height >= preview.height) ?? top;
  source.capture = Buffer.allocUnsafe(source.level.width * source.level.height * channels);

  // Stage 1: decode once into libvips' uncompressed format on local scratch
  // disk (libvips streams it: memory stays bounded for huge images).
  const decoded = path.join(opts.workDir, `decoded-${process.pid}-${Date.now()}.v`);
  try {
    let decoder = sharp(srcPath, { limitInputPixels: opts.limitInputPixels, sequentialRead: true });
    if (meta.hasAlpha) decoder = decoder.flatten({ background: '#ffffff' });
    await decoder.toColourspace(grey ? 'b-w' : 'srgb').toFile(decoded);
    opts.onProgress?.(DECODE_SHARE);

    // Stage 2: read it in strips of `tileSize` rows; each level writes its tiles and feeds the next.
    const fh = await fsp.open(decoded, 'r');
    try {
      const header = Buffer.alloc(VIPS_HEADER_BYTES);
      await fh.read(header, 0, VIPS_HEADER_BYTES, 0);
      checkVipsHeader(header, width, height, channels);
      const rowBytes = width * channels;
      const strip = Buffer.allocUnsafe(Math.min(tileSize, height) * rowBytes);
      for (let y = 0; y < height; y += tileSize) {
        const rows = Math.min(tileSize, height - y);
        const want = rows * rowBytes;
        const { bytesRead } = await fh.read(strip, 0, want, VIPS_HEADER_BYTES + y * rowBytes);
        if (bytesRead !== want) throw new Error('the decoded image ended early');
        await top.addBytes(strip.subarray(0, want));
        opts.onProgress?.(DECODE_SHARE + (1 - DECODE_SHARE) * ((y + rows) / height));
      }
    } finally {
      await fh.close();
    }
  } finally {
    await fsp.rm(decoded, { force: true });
  }
  await top.finish();
  await shared.pool.drain();

  const raw = { width: source.level.width, height: source.level.height, channels: channels as 1 | 3 };
  const space = channels === 1 ? 'b-w' : 'srgb';
  for (const [name, size, quality] of [['preview.jpg', preview, 85], ['thumbnail.jpg', thumbnail, 80]] as const) {
    await sharp(source.capture, { raw })
      .resize(size.width, size.height, { fit: 'fill' })
      .toColourspace(space)
      .jpeg({ quality })
      .toFile(path.join(outDir, name));
  }

  const result: PyramidResult = {
    width,
    height,
    channels,
    tileSize,
    overlap: 0,
    format: TILE_FORMAT,
    maxLevel: levels.length - 1,
    tileCount: shared.tileCount,
    preview,
    thumbnail,
  };
  await fsp.writeFile(path.join(outDir, 'pyramid.json'), JSON.stringify({ ...result, layout: 'dz', levels }, null, 1));
  return result;
}
