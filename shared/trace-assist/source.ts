/**
 * Where trace assist reads the picture: a signed amplitude per image pixel.
 *
 * Pure TypeScript (no DOM): it runs in the browser's Web Worker and in the
 * unit tests alike. Coordinates are image pixels `[u, v]`; pixel (i, j) covers
 * `[i, i + 1) × [j, j + 1)`, so its centre is `(i + ½, j + ½)`.
 *
 * Two kinds of source plug in through one interface:
 * - `GreySource`: the 8-bit grey of the full-resolution image (tiles); the
 *   section's polarity says whether a positive amplitude is shown dark (the
 *   demo sections' note: "an increase of acoustic impedance downward is a
 *   positive amplitude, shown dark") or bright.
 * - `FloatSource`: true amplitudes (e.g. a window of a SEG-Y section's
 *   samples), scaled by a clip value.
 */

/** Which part of the wavelet a trace follows. */
export const PHASES = ['peak', 'trough', 'zero'] as const;
export type Phase = (typeof PHASES)[number];

/** How grey maps to amplitude. */
export const POLARITIES = ['darkPositive', 'brightPositive'] as const;
export type Polarity = (typeof POLARITIES)[number];

export interface AmplitudeSource {
  readonly width: number;
  readonly height: number;
  /**
   * Fill `out[(y − y0)·w + (x − x0)]` for the `w × h` pixel block at integer
   * `(x0, y0)` with the signed amplitude (positive = peak, roughly −1…1); NaN
   * where the image has no pixel (outside, or a tile not loaded).
   */
  readPatch(x0: number, y0: number, w: number, h: number, out?: Float32Array): Float32Array;
}

function patchOut(w: number, h: number, out?: Float32Array): Float32Array {
  if (!Number.isInteger(w) || !Number.isInteger(h) || w < 0 || h < 0) throw new Error('readPatch: w and h must be integers ≥ 0');
  if (out && out.length >= w * h) return out;
  return new Float32Array(w * h);
}

/** Amplitude of a grey value: mid-grey (128) is zero. */
export function greyToAmplitude(g: number, polarity: Polarity): number {
  const a = (128 - g) / 127;
  return polarity === 'darkPositive' ? a : -a;
}

/** A whole grey image in memory (one byte per pixel, row-major). */
export class GreySource implements AmplitudeSource {
  private readonly lut = new Float32Array(256);
  constructor(
    readonly grey: Uint8Array | Uint8ClampedArray,
    readonly width: number,
    readonly height: number,
    readonly polarity: Polarity = 'darkPositive',
  ) {
    if (grey.length < width * height) throw new Error('GreySource: grey must hold width × height bytes');
    for (let g = 0; g < 256; g++) this.lut[g] = greyToAmplitude(g, polarity);
  }

  readPatch(x0: number, y0: number, w: number, h: number, out?: Float32Array): Float32Array {
    const o = patchOut(w, h, out);
    const { width, height, grey, lut } = this;
    for (let y = 0; y < h; y++) {
      const v = y0 + y;
      const row = y * w;
      if (v < 0 || v >= height) {
        o.fill(NaN, row, row + w);
        continue;
      }
      const src = v * width;
      for (let x = 0; x < w; x++) {
        const u = x0 + x;
        o[row + x] = u < 0 || u >= width ? NaN : lut[grey[src + u]];
      }
    }
    return o;
  }
}

/**
 * True amplitudes of a window of the section (`data` row-major, `w × h`, its
 * top-left pixel at `(originU, originV)` of the image), divided by `clip`.
 * This is the plug for a SEG-Y amplitude window.
 */
export class FloatSource implements AmplitudeSource {
  constructor(
    readonly data: Float32Array | Float64Array,
    readonly windowWidth: number,
    readonly windowHeight: number,
    readonly width: number,
    readonly height: number,
    readonly clip = 1,
    readonly originU = 0,
    readonly originV = 0,
  ) {
    if (data.length < windowWidth * windowHeight) throw new Error('FloatSource: data must hold windowWidth × windowHeight values');
    if (!(clip > 0)) throw new Error('FloatSource: clip must be > 0');
  }

  readPatch(x0: number, y0: number, w: number, h: number, out?: Float32Array): Float32Array {
    const o = patchOut(w, h, out);
    const k = 1 / this.clip;
    for (let y = 0; y < h; y++) {
      const j = y0 + y - this.originV;
      for (let x = 0; x < w; x++) {
        const i = x0 + x - this.originU;
        o[y * w + x] =
          j < 0 || j >= this.windowHeight || i < 0 || i >= this.windowWidth ? NaN : this.data[j * this.windowWidth + i] * k;
      }
    }
    return o;
  }
}

/**
 * One tile of the full-resolution level, placed in image pixels: its grey
 * bytes, or (a SEG-Y section) its true amplitudes, row-major, used as they
 * are (the phase scores normalise by the patch, so no clip is needed).
 */
export interface GreyTile {
  x: number;
  y: number;
  width: number;
  height: number;
  grey?: Uint8Array | Uint8ClampedArray;
  amplitude?: Float32Array;
}

/**
 * The full-resolution tiles that are loaded, as one source (what the Web
 * Worker holds): grey tiles of the image, or blocks of true amplitudes. Pixels of tiles not loaded read NaN. Tiles may overlap
 * (Deep Zoom overlap): the first tile holding a pixel answers.
 */
export class TiledGreySource implements AmplitudeSource {
  private readonly tiles = new Map<string, GreyTile>();
  private readonly lut = new Float32Array(256);
  constructor(
    readonly width: number,
    readonly height: number,
    readonly tileSpan: number,
    readonly polarity: Polarity = 'darkPositive',
  ) {
    for (let g = 0; g < 256; g++) this.lut[g] = greyToAmplitude(g, polarity);
  }

  /** Key of the tile grid cell holding pixel (u, v). */
  private static key(c: number, r: number): string {
    return `${c}/${r}`;
  }

  /** Add a tile; `col`, `row` are its grid position (tile span `tileSpan` px, overlap allowed). */
  put(col: number, row: number, tile: GreyTile): void {
    const n = tile.width * tile.height;
    if (tile.amplitude ? tile.amplitude.length < n : !tile.grey || tile.grey.length < n)
      throw new Error('TiledGreySource.put: a tile needs width × height grey bytes or amplitudes');
    this.tiles.set(TiledGreySource.key(col, row), tile);
  }

  has(col: number, row: number): boolean {
    return this.tiles.has(TiledGreySource.key(col, row));
  }

  get size(): number {
    return this.tiles.size;
  }

  /** Keep at most `max` tiles: the ones in `keep` first, the others in insertion order (oldest dropped). */
  trim(max: number, keep: Set<string> = new Set()): void {
    if (this.tiles.size <= max) return;
    for (const k of [...this.tiles.keys()]) {
      if (this.tiles.size <= max) break;
      if (!keep.has(k)) this.tiles.delete(k);
    }
  }

  readPatch(x0: number, y0: number, w: number, h: number, out?: Float32Array): Float32Array {
    const o = patchOut(w, h, out);
    o.fill(NaN, 0, w * h);
    const span = this.tileSpan;
    const c0 = Math.floor(Math.max(0, x0) / span);
    const c1 = Math.floor(Math.min(this.width - 1, x0 + w - 1) / span);
    const r0 = Math.floor(Math.max(0, y0) / span);
    const r1 = Math.floor(Math.min(this.height - 1, y0 + h - 1) / span);
    for (let r = r0; r <= r1; r++) {
      for (let c = c0; c <= c1; c++) {
        const t = this.tiles.get(TiledGreySource.key(c, r));
        if (!t) continue;
        // The tile's own cell (without overlap), clipped to the patch.
        const ux0 = Math.max(x0, c * span, t.x);
        const ux1 = Math.min(x0 + w, (c + 1) * span, t.x + t.width, this.width);
        const vy0 = Math.max(y0, r * span, t.y);
        const vy1 = Math.min(y0 + h, (r + 1) * span, t.y + t.height, this.height);
        for (let v = vy0; v < vy1; v++) {
          const src = (v - t.y) * t.width - t.x;
          const dst = (v - y0) * w - x0;
          if (t.amplitude) for (let u = ux0; u < ux1; u++) o[dst + u] = t.amplitude[src + u];
          else for (let u = ux0; u < ux1; u++) o[dst + u] = this.lut[t.grey![src + u]];
        }
      }
    }
    return o;
  }
}
