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
 * Why not `sharp().tile()`: it gives no progress (and is slower here). The
 * image is decoded once by libvips into its uncompressed format on scratch
 * disk; while the decoder is still writing, finished strips of `tileSize`
 * rows are read back, so decoding and tiling run on different cores. Tiles
 * are cut from each strip by libvips and JPEG-encoded on several libuv
 * threads at once (tests/bench/tiles.bench.ts prints both ways). Memory stays
 * bounded: a strip per level, the strips of tiles in flight, and the preview
 * level.
 */
import fs from 'node:fs';
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
  /** Tile encodings queued at once (they run on the libuv threads; default TILES_IN_FLIGHT). */
  concurrency?: number;
  /** Called with the done fraction 0..1: full-size strips tiled (decoding runs alongside), then the last levels and previews. */
  onProgress?: (fraction: number) => void;
  /** A private local scratch folder (outside `outDir`) for the decoded image. */
  workDir: string;
}

/** Share of the progress given to the full-size strips (the rest: the small levels' last strips, preview, thumbnail). */
const PROGRESS_TILES = 0.97;
/**
 * Tiles queued for encoding at once. More than the libuv threads, so that the
 * threads stay busy while JS halves a strip; cheap, since a queued tile only
 * refers to its strip (tests/bench/tiles.bench.ts: 16 beats 4 by ~15 %).
 */
export const TILES_IN_FLIGHT = 16;
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
export function halve(src: Uint8Array, w: number, h: number, ch: number): Buffer {
  const out = Buffer.allocUnsafe(((w + 1) >> 1) * ((h + 1) >> 1) * ch);
  halveInto(src, w, h, ch, out, 0);
  return out;
}

/**
 * `halve` writing into `dst` from byte `at`. Loops specialised for one and
 * three channels (no per-pixel edge tests; the odd last column is done apart);
 * greyscale works on 32-bit words, about three times as fast as a byte loop.
 */
const LANES = 0x00ff00ff;
export function halveInto(src: Uint8Array, w: number, h: number, ch: number, dst: Uint8Array, at: number): void {
  const ow = (w + 1) >> 1;
  const oh = (h + 1) >> 1;
  const pairs = w >> 1; // output columns made of two source columns
  const rb = w * ch;
  if (dst.length < at + ow * oh * ch) throw new Error('halveInto: destination too small');
  const sv = new DataView(src.buffer, src.byteOffset, src.byteLength);
  const dv = new DataView(dst.buffer, dst.byteOffset, dst.byteLength);
  for (let j = 0; j < oh; j++) {
    let a = 2 * j * rb; // upper source row
    let b = 2 * j + 1 < h ? a + rb : a; // lower source row (repeated at an odd bottom edge)
    let o = at + j * ow * ch;
    if (ch === 1) {
      // four output pixels at a time: two 32-bit words per source row, pixel pairs summed in 16-bit lanes
      let i = 0;
      for (; i + 4 <= pairs; i += 4, a += 8, b += 8, o += 4) {
        const x0 = sv.getUint32(a, true);
        const y0 = sv.getUint32(b, true);
        const x1 = sv.getUint32(a + 4, true);
        const y1 = sv.getUint32(b + 4, true);
        const s0 = (x0 & LANES) + ((x0 >>> 8) & LANES) + (y0 & LANES) + ((y0 >>> 8) & LANES) + 0x00020002;
        const s1 = (x1 & LANES) + ((x1 >>> 8) & LANES) + (y1 & LANES) + ((y1 >>> 8) & LANES) + 0x00020002;
        dv.setUint32(o, ((s0 >>> 2) & 0xff) | ((s0 >>> 10) & 0xff00) | ((s1 << 14) & 0xff0000) | ((s1 << 6) & 0xff000000), true);
      }
      for (; i < pairs; i++, a += 2, b += 2) dst[o++] = (src[a] + src[a + 1] + src[b] + src[b + 1] + 2) >> 2;
      if (w & 1) dst[o] = (src[a] + src[b] + 1) >> 1;
    } else if (ch === 3) {
      for (let i = 0; i < pairs; i++, a += 6, b += 6, o += 3) {
        dst[o] = (src[a] + src[a + 3] + src[b] + src[b + 3] + 2) >> 2;
        dst[o + 1] = (src[a + 1] + src[a + 4] + src[b + 1] + src[b + 4] + 2) >> 2;
        dst[o + 2] = (src[a + 2] + src[a + 5] + src[b + 2] + src[b + 5] + 2) >> 2;
      }
      if (w & 1) for (let k = 0; k < 3; k++) dst[o + k] = (src[a + k] + src[b + k] + 1) >> 1;
    } else {
      for (let i = 0; i < pairs; i++, a += 2 * ch, b += 2 * ch) {
        for (let k = 0; k < ch; k++) dst[o++] = (src[a + k] + src[a + ch + k] + src[b + k] + src[b + ch + k] + 2) >> 2;
      }
      if (w & 1) for (let k = 0; k < ch; k++) dst[o++] = (src[a + k] + src[b + k] + 1) >> 1;
    }
  }
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

/**
 * One pyramid level: collects rows into a strip of `tileSize` rows, writes its
 * tiles, feeds the level below. A strip is never reused: its tiles are cut
 * from it by libvips (no copies in JS) while they wait in the pool, and a new
 * one is allocated for the next rows.
 */
class LevelWriter {
  private strip: Buffer | null = null;
  private rows = 0; // rows in the strip
  private stripRow = 0; // tile row index of the strip being filled
  private readonly stripRows: number;
  private readonly rowBytes: number;
  capture: Buffer | null = null;
  private capturedRows = 0;

  constructor(
    readonly level: TileLevel,
    private readonly s: Shared,
    readonly next: LevelWriter | null,
  ) {
    this.rowBytes = level.width * s.channels;
    this.stripRows = Math.min(s.tileSize, level.height);
  }

  /** Take a whole strip of the full-size level (`rows` rows, the buffer is kept). */
  async addStrip(strip: Buffer, rows: number) {
    if (this.rows !== 0 || rows !== Math.min(this.stripRows, this.level.height - this.stripRow * this.s.tileSize)) {
      throw new Error('pyramid: strips out of step');
    }
    this.strip = strip;
    this.rows = rows;
    await this.flush();
  }

  /** Take the 2×2 average of `rows` rows of the level above (`src`, `srcWidth` wide). */
  private async addHalfOf(src: Buffer, srcWidth: number, rows: number) {
    const out = (rows + 1) >> 1;
    if (this.rows + out > this.stripRows) throw new Error('pyramid: strips out of step');
    this.strip ??= Buffer.allocUnsafe(this.stripRows * this.rowBytes);
    halveInto(src, srcWidth, rows, this.s.channels, this.strip, this.rows * this.rowBytes);
    this.rows += out;
    if (this.rows === this.stripRows) await this.flush();
  }

  private async flush() {
    const strip = this.strip;
    const rows = this.rows;
    if (!strip || rows === 0) return;
    this.strip = null;
    this.rows = 0;
    const { tileSize: T, channels: ch, pool, jpeg } = this.s;
    const { width, z } = this.level;
    const dir = path.join(this.s.outDir, 'tiles', String(z));
    if (this.stripRow === 0) await fsp.mkdir(dir, { recursive: true });
    const raw = { width, height: rows, channels: ch as 1 | 3 };
    const space = ch === 1 ? 'b-w' : 'srgb'; // keep greyscale tiles single-channel (sharp would widen them to sRGB)
    for (let x = 0; x * T < width; x++) {
      const tw = Math.min(T, width - x * T);
      const file = path.join(dir, `${x}_${this.stripRow}.${TILE_EXT}`);
      await pool.add(() => {
        let img = sharp(strip, { raw });
        if (tw !== width) img = img.extract({ left: x * T, top: 0, width: tw, height: rows });
        return img.toColourspace(space).jpeg(jpeg).toFile(file);
      });
      this.s.tileCount++;
    }
    if (this.capture) {
      strip.copy(this.capture, this.capturedRows * this.rowBytes, 0, rows * this.rowBytes);
      this.capturedRows += rows;
    }
    this.stripRow++;
    if (this.next) await this.next.addHalfOf(strip, width, rows);
  }

  async finish() {
    await this.flush();
    if (this.stripRow !== this.level.rows) throw new Error(`pyramid: level ${this.level.z} incomplete`);
    if (this.capturedRows && this.capturedRows !== this.level.height) throw new Error('pyramid: preview level incomplete');
    if (this.next) await this.next.finish();
  }
}


interface PyramidRun {
  width: number;
  height: number;
  channels: 1 | 3;
  tileSize: number;
  levels: TileLevel[];
  shared: Shared;
  top: LevelWriter;
  source: LevelWriter;
  preview: { width: number; height: number };
  thumbnail: { width: number; height: number };
}

/** The level writers (full size first) and the capture of the level that gives preview and thumbnail. */
function startPyramid(width: number, height: number, channels: 1 | 3, tileSize: number, outDir: string, opts: Pick<BuildOptions, 'quality' | 'concurrency'>): PyramidRun {
  const levels = pyramidLevels(width, height, tileSize);
  const shared: Shared = {
    outDir,
    tileSize,
    channels,
    pool: new Pool(Math.max(1, opts.concurrency ?? TILES_IN_FLIGHT)),
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
  return { width, height, channels, tileSize, levels, shared, top, source, preview, thumbnail };
}

/** After the last full-size strip: the small levels, preview, thumbnail and pyramid.json. */
async function finishPyramid(p: PyramidRun, outDir: string, opts: Pick<BuildOptions, 'onProgress'>): Promise<PyramidResult> {
  const { width, height, channels, tileSize, levels, shared, top, source, preview, thumbnail } = p;
  await top.finish();
  await shared.pool.drain();

  const raw = { width: source.level.width, height: source.level.height, channels: channels as 1 | 3 };
  const space = channels === 1 ? 'b-w' : 'srgb';
  for (const [name, size, quality] of [['preview.jpg', preview, 85], ['thumbnail.jpg', thumbnail, 80]] as const) {
    await sharp(source.capture!, { raw })
      .resize(size.width, size.height, { fit: 'fill' })
      .toColourspace(space)
      .jpeg({ quality })
      .toFile(path.join(outDir, name));
  }
  opts.onProgress?.(1);

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

/** Rows of an image made by the caller (e.g. rendered SEG-Y amplitudes), `channels` bytes a pixel. */
export interface StripSource {
  width: number;
  height: number;
  channels: 1 | 3;
  /** Rows `y` to `y + rows − 1`, row after row (width × rows × channels bytes); called in order. */
  readStrip(y: number, rows: number): Promise<Buffer>;
}

/** The same pyramid as `buildPyramid`, from strips the caller renders (no decoding). */
export async function buildPyramidFromStrips(src: StripSource, outDir: string, opts: Omit<BuildOptions, 'limitInputPixels' | 'workDir'>): Promise<PyramidResult> {
  const tileSize = opts.tileSize ?? TILE_SIZE;
  const p = startPyramid(src.width, src.height, src.channels, tileSize, outDir, opts);
  const rowBytes = src.width * src.channels;
  for (let y = 0; y < src.height; y += tileSize) {
    const rows = Math.min(tileSize, src.height - y);
    const strip = await src.readStrip(y, rows);
    if (strip.length !== rows * rowBytes) throw new Error(`pyramid: strip at row ${y} has ${strip.length} bytes, expected ${rows * rowBytes}`);
    await p.top.addStrip(strip, rows);
    opts.onProgress?.(PROGRESS_TILES * ((y + rows) / src.height));
  }
  return finishPyramid(p, outDir, opts);
}

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

/**
 * Decode `srcPath` once and write the pyramid, preview and thumbnail into
 * `outDir` (which must exist and be empty). Throws on a damaged or oversized
 * image; the caller removes `outDir` then.
 */
export async function buildPyramid(srcPath: string, outDir: string, opts: BuildOptions): Promise<PyramidResult> {
  const tileSize = opts.tileSize ?? TILE_SIZE;
  if (!(Number.isInteger(tileSize) && tileSize >= 2 && tileSize % 2 === 0)) throw new Error(`tileSize: must be an even integer ≥ 2, got ${tileSize}`);
  const meta = await sharp(srcPath, { limitInputPixels: opts.limitInputPixels }).metadata();
  const width = meta.width;
  const height = meta.height;
  if (!width || !height) throw new Error('the image has no size');
  if (width * height > opts.limitInputPixels) {
    throw new Error(`the image has ${width} × ${height} pixels, over the limit of ${opts.limitInputPixels}`);
  }
  const grey = meta.space === 'b-w' || meta.space === 'grey16';
  const channels = grey ? 1 : 3;
  const p = startPyramid(width, height, channels, tileSize, outDir, opts);
  const top = p.top;

  // libvips decodes once into its uncompressed format on local scratch disk
  // (streamed: memory stays bounded for huge images) and writes it top to
  // bottom; the strips are tiled as soon as their rows are on disk, so
  // decoding (one thread) and tiling (the others) overlap.
  const decoded = path.join(opts.workDir, `decoded-${process.pid}-${Date.now()}.v`);
  let decodeEnded = false;
  let decodeError: unknown = null;
  let decoder = sharp(srcPath, { limitInputPixels: opts.limitInputPixels, sequentialRead: true });
  if (meta.hasAlpha) decoder = decoder.flatten({ background: '#ffffff' });
  const decoding = decoder
    .toColourspace(grey ? 'b-w' : 'srgb')
    .toFile(decoded)
    .then(
      () => void (decodeEnded = true),
      (e) => void ((decodeError = e), (decodeEnded = true)),
    );
  let pause = 2;
  /** Wait until the decoded file holds `bytes` bytes; throws if decoding failed or stopped short. */
  const decodedUpTo = async (bytes: number) => {
    for (;;) {
      const ended = decodeEnded; // read before the size: an ended decoder has written everything
      if (decodeError) throw decodeError;
      // a synchronous stat (microseconds) does not queue behind the tile encodes on the libuv pool
      const size = fs.statSync(decoded, { throwIfNoEntry: false })?.size ?? 0;
      if (size >= bytes) return;
      if (ended) throw new Error('the decoded image ended early');
      await Promise.race([sleep(pause), decoding]);
      pause = Math.min(20, pause * 2);
    }
  };
  try {
    await decodedUpTo(VIPS_HEADER_BYTES);
    const fh = await fsp.open(decoded, 'r');
    let reading: Promise<Buffer> | null = null;
    try {
      const header = Buffer.alloc(VIPS_HEADER_BYTES);
      await fh.read(header, 0, VIPS_HEADER_BYTES, 0);
      checkVipsHeader(header, width, height, channels);
      const rowBytes = width * channels;
      const readStrip = async (y: number) => {
        const want = Math.min(tileSize, height - y) * rowBytes;
        const at = VIPS_HEADER_BYTES + y * rowBytes;
        await decodedUpTo(at + want);
        pause = 2;
        const strip = Buffer.allocUnsafe(want);
        const { bytesRead } = await fh.read(strip, 0, want, at);
        if (bytesRead !== want) throw new Error('the decoded image ended early');
        return strip;
      };
      reading = readStrip(0);
      for (let y = 0; y < height; y += tileSize) {
        const rows = Math.min(tileSize, height - y);
        if (!reading) throw new Error('pyramid: strips out of step');
        const strip = await reading;
        reading = y + tileSize < height ? readStrip(y + tileSize) : null; // the next strip loads while this one is tiled
        reading?.catch(() => {}); // handled when awaited; not an unhandled rejection meanwhile
        await top.addStrip(strip, rows);
        opts.onProgress?.(PROGRESS_TILES * ((y + rows) / height));
      }
    } finally {
      await reading?.catch(() => {});
      await fh.close();
    }
    await decoding;
    if (decodeError) throw decodeError;
  } finally {
    await decoding; // never remove the file under a running decoder
    await fsp.rm(decoded, { force: true });
  }
  return finishPyramid(p, outDir, opts);
}
