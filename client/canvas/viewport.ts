/**
 * Viewport of a section image: pure math plus the `useViewport()` composable.
 *
 * Coordinates:
 * - image pixels `[u, v]`: `u` to the right, `v` down, (0, 0) at the image's
 *   top-left corner; the unit of every stored interpretation record.
 * - screen pixels: CSS pixels inside the stage's box, (0, 0) at its top-left.
 *
 * A view is `{ scale, x, y, stretchY? }`: `screen = (u · scale + x,
 * v · scale · stretchY + y)`, i.e. `scale` is screen pixels per image pixel
 * across, `stretchY` (default 1) an extra vertical stretch of the display
 * (vertical exaggeration), and `(x, y)` is where the image origin lands on
 * screen. The stage applies exactly this transform, so overlay layers draw
 * in image pixels and every coordinate handed out stays in true image pixels.
 *
 * Tile pyramid (the server's Deep Zoom style layout): level `maxLevel` is the
 * full-resolution image; each level below halves both sides (rounded up), so
 * level `L` is `ceil(width / 2^(maxLevel − L))` wide. Tiles are `tileSize`
 * square in level pixels, plus `overlap` pixels on every side that has a
 * neighbour.
 */
import { computed, reactive, readonly, ref, watch, type MaybeRefOrGetter, toValue } from 'vue';

export type { Pt } from './model';
import type { Pt } from './model';

export interface View {
  /** Screen pixels per image pixel. */
  scale: number;
  /** Screen position of the image origin. */
  x: number;
  y: number;
  /** Display stretch of the vertical axis (screen px per image px down = scale · stretchY); 1 when absent. */
  stretchY?: number;
}

/** The vertical display stretch of a view (1 when unset). */
export function stretchOf(v: View): number {
  const s = v.stretchY;
  return s !== undefined && s > 0 && Number.isFinite(s) ? s : 1;
}

export interface Size {
  width: number;
  height: number;
}

/** An axis-aligned rectangle in image pixels, `[x0, x1) × [y0, y1)`. */
export interface Rect {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

export interface Pyramid {
  /** Full-resolution image size in pixels. */
  width: number;
  height: number;
  tileSize: number;
  /** Extra pixels on each side of a tile that has a neighbour there (Deep Zoom `Overlap`). */
  overlap: number;
  /** Index of the full-resolution level. */
  maxLevel: number;
  /** Lowest level that exists on the server (0 for a full Deep Zoom pyramid). */
  minLevel: number;
}

/** Inclusive tile index range at one level; `empty` when nothing is visible. */
export interface TileRange {
  level: number;
  col0: number;
  col1: number;
  row0: number;
  row1: number;
  empty: boolean;
}

/** Where a tile's pixels go, in image pixels (what the stage draws in). */
export interface TilePlacement {
  level: number;
  col: number;
  row: number;
  x: number;
  y: number;
  width: number;
  height: number;
}

export function imageToScreen(v: View, p: readonly number[]): Pt {
  return [p[0] * v.scale + v.x, p[1] * v.scale * stretchOf(v) + v.y];
}

export function screenToImage(v: View, p: readonly number[]): Pt {
  return [(p[0] - v.x) / v.scale, (p[1] - v.y) / (v.scale * stretchOf(v))];
}

/** Put the stretch `sy` on a view when it is not 1 (views without a stretch stay `{ scale, x, y }`). */
function withStretch(v: View, sy: number): View {
  return sy === 1 ? v : { ...v, stretchY: sy };
}

export function clamp(n: number, lo: number, hi: number): number {
  return Math.min(hi, Math.max(lo, n));
}

/**
 * Zoom by `factor` so that the image point under `anchor` (screen pixels)
 * stays under it. The scale is clamped to `[minScale, maxScale]`.
 */
export function zoomAround(v: View, anchor: readonly number[], factor: number, minScale = 0, maxScale = Infinity): View {
  const scale = clamp(v.scale * factor, minScale, maxScale);
  return zoomTo(v, anchor, scale);
}

/** Set the scale to `scale` keeping the image point under `anchor` fixed. */
export function zoomTo(v: View, anchor: readonly number[], scale: number): View {
  const [u, w] = screenToImage(v, anchor);
  const sy = stretchOf(v);
  return withStretch({ scale, x: anchor[0] - u * scale, y: anchor[1] - w * scale * sy }, sy);
}

/**
 * The view that shows the whole image centred in the box with `padding`
 * screen pixels around it, drawn with the vertical display stretch `stretchY`.
 */
export function fitView(image: Size, box: Size, padding = 16, stretchY = 1): View {
  const sy = stretchY > 0 && Number.isFinite(stretchY) ? stretchY : 1;
  const aw = Math.max(1, box.width - 2 * padding);
  const ah = Math.max(1, box.height - 2 * padding);
  const scale = Math.min(aw / Math.max(1, image.width), ah / Math.max(1, image.height * sy));
  return withStretch(
    {
      scale,
      x: (box.width - image.width * scale) / 2,
      y: (box.height - image.height * scale * sy) / 2,
    },
    sy,
  );
}

/**
 * Keep at least `keep` screen pixels of the image inside the box (or the whole
 * image when it is smaller), so panning can never lose the image.
 */
export function clampPan(v: View, image: Size, box: Size, keep = 80): View {
  const sy = stretchOf(v);
  const w = image.width * v.scale;
  const h = image.height * v.scale * sy;
  const kx = Math.min(keep, w);
  const ky = Math.min(keep, h);
  return withStretch(
    {
      scale: v.scale,
      x: clamp(v.x, kx - w, box.width - kx),
      y: clamp(v.y, ky - h, box.height - ky),
    },
    sy,
  );
}

/** The part of the image plane the box shows, in image pixels (may extend past the image). */
export function visibleRect(v: View, box: Size): Rect {
  const [x0, y0] = screenToImage(v, [0, 0]);
  const [x1, y1] = screenToImage(v, [box.width, box.height]);
  return { x0, y0, x1, y1 };
}

/** Downsampling of a level relative to full resolution (1 at `maxLevel`, 2 one below, …). */
export function levelFactor(p: Pyramid, level: number): number {
  return 2 ** (p.maxLevel - level);
}

/** Size of a level in its own pixels. */
export function levelSize(p: Pyramid, level: number): Size {
  const f = levelFactor(p, level);
  return { width: Math.max(1, Math.ceil(p.width / f)), height: Math.max(1, Math.ceil(p.height / f)) };
}

/** Number of tile columns and rows at a level. */
export function levelGrid(p: Pyramid, level: number): { cols: number; rows: number } {
  const s = levelSize(p, level);
  return { cols: Math.ceil(s.width / p.tileSize), rows: Math.ceil(s.height / p.tileSize) };
}

/** `ceil(log2(max(width, height)))`: the full-resolution level of a complete Deep Zoom pyramid. */
export function deepZoomMaxLevel(width: number, height: number): number {
  return Math.ceil(Math.log2(Math.max(1, width, height)));
}

/**
 * The level to draw at `scale` (screen px per image px) on a display with
 * `pixelRatio` device pixels per CSS pixel: the coarsest level that still has
 * at least one level pixel per device pixel, i.e. the smallest `L` with
 * `2^(L − maxLevel) ≥ scale · pixelRatio`, clamped to the pyramid.
 * `slack` (in octaves) tolerates a level that is a little too coarse, so a
 * scale just above a power of two does not fetch four times as many tiles.
 */
export function chooseLevel(p: Pyramid, scale: number, pixelRatio = 1, slack = 0.1): number {
  const s = scale * pixelRatio;
  if (!(s > 0) || !Number.isFinite(s)) return p.minLevel;
  const want = p.maxLevel + Math.ceil(Math.log2(s) - slack);
  return clamp(want, p.minLevel, p.maxLevel);
}

/**
 * Tiles of `level` that intersect `rect` (image pixels), grown by `margin`
 * tiles on every side (prefetch) and clipped to the level's grid.
 */
export function visibleTileRange(p: Pyramid, level: number, rect: Rect, margin = 0): TileRange {
  const f = levelFactor(p, level);
  const { cols, rows } = levelGrid(p, level);
  const span = p.tileSize * f; // image pixels per tile
  const col0 = Math.max(0, Math.floor(Math.max(0, rect.x0) / span) - margin);
  const row0 = Math.max(0, Math.floor(Math.max(0, rect.y0) / span) - margin);
  const col1 = Math.min(cols - 1, Math.ceil(Math.min(p.width, rect.x1) / span) - 1 + margin);
  const row1 = Math.min(rows - 1, Math.ceil(Math.min(p.height, rect.y1) / span) - 1 + margin);
  const empty = rect.x1 <= 0 || rect.y1 <= 0 || rect.x0 >= p.width || rect.y0 >= p.height || col1 < col0 || row1 < row0;
  return { level, col0, col1, row0, row1, empty };
}

/** Number of tiles in a range (0 when empty). */
export function tileCount(r: TileRange): number {
  return r.empty ? 0 : (r.col1 - r.col0 + 1) * (r.row1 - r.row0 + 1);
}

/**
 * Where the pixels of tile (col, row) of `level` belong in image pixels,
 * including its overlap, so a tile image of that many pixels is drawn 1:1
 * onto its footprint.
 */
export function tilePlacement(p: Pyramid, level: number, col: number, row: number): TilePlacement {
  const f = levelFactor(p, level);
  const s = levelSize(p, level);
  const lx0 = Math.max(0, col * p.tileSize - p.overlap);
  const ly0 = Math.max(0, row * p.tileSize - p.overlap);
  const lx1 = Math.min(s.width, (col + 1) * p.tileSize + p.overlap);
  const ly1 = Math.min(s.height, (row + 1) * p.tileSize + p.overlap);
  // The last column/row of a level may stand for less than `f` full-resolution pixels.
  const x = lx0 * f;
  const y = ly0 * f;
  return {
    level,
    col,
    row,
    x,
    y,
    width: Math.min(p.width, lx1 * f) - x,
    height: Math.min(p.height, ly1 * f) - y,
  };
}

/** The tile one level down (coarser) that covers tile (col, row), or null below `minLevel`. */
export function parentTile(p: Pyramid, level: number, col: number, row: number): { level: number; col: number; row: number } | null {
  if (level <= p.minLevel) return null;
  return { level: level - 1, col: Math.floor(col / 2), row: Math.floor(row / 2) };
}

/** Wheel delta in pixels whatever the event's `deltaMode` (lines ≈ 40 px, pages ≈ 800 px). */
export function wheelPixels(deltaY: number, deltaMode: number): number {
  if (deltaMode === 1) return deltaY * 40;
  if (deltaMode === 2) return deltaY * 800;
  return deltaY;
}

/** Zoom of one mouse-wheel notch (Cayline's choice: a gentle step, about 7 notches per doubling). */
export const WHEEL_NOTCH_FACTOR = 1.15;
/** Wheel deltas of at least this many pixels are one notch of a mouse wheel (browsers report 50–250 px per notch). */
export const WHEEL_NOTCH_PX = 50;
/** Trackpad pinch (ctrl + wheel): zoom factor exp(−delta · rate) per event (common practice for pinch deltas). */
export const PINCH_RATE = 0.01;

/**
 * Zoom factor of one wheel event whose delta is `deltaPixels` (see
 * wheelPixels; negative = away from the user = zoom in).
 *
 * - A mouse notch (|delta| ≥ WHEEL_NOTCH_PX, whatever size the browser and
 *   system report: 53, 100, 120, 240 px…) is exactly one step of
 *   WHEEL_NOTCH_FACTOR, so six notches never take the view further than
 *   1.15⁶ ≈ ×2.3.
 * - Smaller deltas (trackpad two-finger scrolling) zoom in proportion, at the
 *   same rate per pixel, so a notch's worth of scrolling is one notch.
 * - `pinch` (ctrl + wheel, how browsers deliver a trackpad pinch): exp(−delta ·
 *   PINCH_RATE), at most ×1.65 per event.
 */
export function wheelZoomFactor(deltaPixels: number, pinch = false): number {
  if (!deltaPixels || !Number.isFinite(deltaPixels)) return 1;
  if (pinch) return Math.exp(-clamp(deltaPixels, -50, 50) * PINCH_RATE);
  const steps = Math.min(1, Math.abs(deltaPixels) / WHEEL_NOTCH_PX);
  return WHEEL_NOTCH_FACTOR ** (deltaPixels < 0 ? steps : -steps);
}

export interface ViewportOptions {
  /** Full-resolution image size (0 × 0 until known). */
  image: MaybeRefOrGetter<Size>;
  /** Smallest allowed scale as a fraction of the fit scale. Default 0.5. */
  minFitFraction?: number;
  /** Largest scale (screen px per image px). Default 16. */
  maxScale?: number;
  /** Padding around the image when fitting. Default 16. */
  fitPadding?: number;
  /** Vertical display stretch (vertical exaggeration of the display). Default 1. */
  stretchY?: MaybeRefOrGetter<number>;
}

/**
 * Reactive viewport over one image: the state (`view`, `box`) and the
 * operations on it. `SectionStage` creates one and provides it to its slot
 * content; other canvases can create their own.
 */
export function useViewport(options: ViewportOptions) {
  const view = reactive<Required<View>>({ scale: 1, x: 0, y: 0, stretchY: 1 });
  const box = reactive<Size>({ width: 0, height: 0 });
  /** True once the view was fitted (or set) for a known image and box. */
  const ready = ref(false);
  const maxScale = options.maxScale ?? 16;
  const padding = options.fitPadding ?? 16;

  const image = computed(() => toValue(options.image));
  const stretch = computed(() => {
    const s = options.stretchY === undefined ? 1 : Number(toValue(options.stretchY));
    return s > 0 && Number.isFinite(s) ? s : 1;
  });
  view.stretchY = stretch.value;
  const fitScale = computed(() => fitView(image.value, box, padding, stretch.value).scale);
  const minScale = computed(() => Math.min(fitScale.value * (options.minFitFraction ?? 0.5), maxScale));

  function set(next: View): void {
    const scale = clamp(next.scale, minScale.value, maxScale);
    const v = clampPan({ scale, x: next.x, y: next.y, stretchY: view.stretchY }, image.value, box);
    view.scale = v.scale;
    view.x = v.x;
    view.y = v.y;
  }

  function fit(): void {
    if (image.value.width <= 0 || box.width <= 0) return;
    const v = fitView(image.value, box, padding, view.stretchY);
    view.scale = v.scale;
    view.x = v.x;
    view.y = v.y;
    ready.value = true;
  }

  // A new stretch keeps the image point at the box centre where it is.
  watch(stretch, (sy) => {
    if (sy === view.stretchY) return;
    const cy = box.height / 2;
    const v = (cy - view.y) / (view.scale * view.stretchY);
    view.stretchY = sy;
    if (!ready.value) return;
    set({ scale: view.scale, x: view.x, y: cy - v * view.scale * sy });
  });

  /** Resize the box; the first time both image and box are known the view is fitted. */
  function setBox(width: number, height: number): void {
    const center: Pt = [box.width / 2, box.height / 2];
    const hadBox = box.width > 0;
    const anchorImg = screenToImage(view, center);
    box.width = width;
    box.height = height;
    if (!ready.value) {
      fit();
    } else if (hadBox) {
      // Keep the image point at the old centre in the new centre.
      set({ scale: view.scale, x: width / 2 - anchorImg[0] * view.scale, y: height / 2 - anchorImg[1] * view.scale * view.stretchY });
    }
  }

  function zoomAt(anchor: readonly number[], factor: number): void {
    set(zoomAround(view, anchor, factor, minScale.value, maxScale));
  }

  function zoomToScale(anchor: readonly number[], scale: number): void {
    set(zoomTo(view, anchor, clamp(scale, minScale.value, maxScale)));
  }

  function zoomBy(factor: number): void {
    zoomAt([box.width / 2, box.height / 2], factor);
  }

  function panBy(dx: number, dy: number): void {
    set({ scale: view.scale, x: view.x + dx, y: view.y + dy });
  }

  /** Centre the view on an image point, optionally at a new scale. */
  function centerOn(p: readonly number[], scale = view.scale): void {
    const s = clamp(scale, minScale.value, maxScale);
    set({ scale: s, x: box.width / 2 - p[0] * s, y: box.height / 2 - p[1] * s * view.stretchY });
  }

  return {
    view: readonly(view),
    box: readonly(box),
    ready: readonly(ready),
    fitScale,
    minScale,
    maxScale,
    set,
    fit,
    setBox,
    zoomAt,
    zoomToScale,
    zoomBy,
    panBy,
    centerOn,
    imageToScreen: (p: readonly number[]) => imageToScreen(view, p),
    screenToImage: (p: readonly number[]) => screenToImage(view, p),
    visibleRect: () => visibleRect(view, box),
  };
}

export type Viewport = ReturnType<typeof useViewport>;
