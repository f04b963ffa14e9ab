/**
 * Drawing helpers of the interpretation overlays.
 *
 * Lines are Konva.Line nodes in image pixels (the stage carries the view
 * transform) with `strokeScaleEnabled: false`, so widths stay constant on
 * screen. Small markers (Margin pins, Termination stamps, labels, vertex
 * handles) are painted by ONE Konva.Shape per layer whose scene function
 * switches to screen pixels: their size never changes with zoom, nothing is
 * rebuilt while panning or zooming, and markers off screen are skipped.
 */
import type Konva from 'konva';
import { markRaw } from 'vue';
import { CANVAS_ACCENTS, TERMINATION_INITIAL, TERMINATION_STAMP } from '../palette';
import type { Pt, Side, TerminationType } from '../model';

export const FONT = "'IBM Plex Sans', system-ui, sans-serif";
export const OUTLINE = '#14191E';

const flatCache = new WeakMap<readonly Pt[], number[]>();

/**
 * `[u0, v0, u1, v1, …]` for Konva, cached per points array (the editor shares
 * untouched arrays between states, so an unchanged line keeps the very same
 * array and Konva is not touched). Marked raw so Vue never walks it.
 */
export function flatPoints(pts: readonly Pt[]): number[] {
  let f = flatCache.get(pts);
  if (!f) {
    f = new Array(pts.length * 2);
    for (let i = 0; i < pts.length; i++) {
      f[2 * i] = pts[i][0];
      f[2 * i + 1] = pts[i][1];
    }
    markRaw(f);
    flatCache.set(pts, f);
  }
  return f;
}

const lodCache = new WeakMap<readonly Pt[], Map<number, number[]>>();

/**
 * Level of detail for drawing a long polyline zoomed out: with `bucket`
 * image px per screen px (a power of two ≥ 2), keep the ends and every
 * vertex that lies at least `bucket` image px (about one to two screen px)
 * from the last kept one along u or v; the rest cannot be told apart on
 * screen. Cached per points array and bucket; bucket < 2 returns every vertex.
 */
export function lodPoints(pts: readonly Pt[], bucket: number): number[] {
  if (!(bucket >= 2) || pts.length < 3) return flatPoints(pts);
  let byBucket = lodCache.get(pts);
  if (!byBucket) {
    byBucket = new Map();
    lodCache.set(pts, byBucket);
  }
  let f = byBucket.get(bucket);
  if (!f) {
    f = [pts[0][0], pts[0][1]];
    let lu = pts[0][0];
    let lv = pts[0][1];
    const n = pts.length;
    for (let i = 1; i < n - 1; i++) {
      const p = pts[i];
      if (Math.abs(p[0] - lu) >= bucket || Math.abs(p[1] - lv) >= bucket) {
        f.push(p[0], p[1]);
        lu = p[0];
        lv = p[1];
      }
    }
    f.push(pts[n - 1][0], pts[n - 1][1]);
    markRaw(f);
    byBucket.set(bucket, f);
  }
  return f;
}

/** Image px per screen px rounded down to a power of two (1 when zoomed in to 50 % or more). */
export function lodBucket(scale: number): number {
  if (!(scale > 0) || scale >= 0.5) return 1;
  return 2 ** Math.floor(Math.log2(1 / scale));
}

export type ToScreen = (p: readonly number[]) => [number, number];

export interface ScreenFrame {
  c: CanvasRenderingContext2D;
  toScreen: ToScreen;
  /** Stage size in CSS px (for culling). */
  width: number;
  height: number;
  /** True when a screen point lies within `margin` px of the stage. */
  visible(x: number, y: number, margin?: number): boolean;
}

/** A Konva `sceneFunc` that hands `draw` a 2D context in screen CSS pixels. */
export function screenSpace(draw: (f: ScreenFrame) => void): (ctx: Konva.Context, shape: Konva.Shape) => void {
  return (ctx, shape) => {
    const c = ctx._context;
    const m = shape.getAbsoluteTransform().getMatrix();
    const pr = ctx.canvas.getPixelRatio();
    const stage = shape.getStage();
    const width = stage?.width() ?? 0;
    const height = stage?.height() ?? 0;
    c.save();
    c.setTransform(pr, 0, 0, pr, 0, 0);
    draw({
      c,
      toScreen: (p) => [m[0] * p[0] + m[2] * p[1] + m[4], m[1] * p[0] + m[3] * p[1] + m[5]],
      width,
      height,
      visible: (x, y, margin = 40) => x > -margin && y > -margin && x < width + margin && y < height + margin,
    });
    c.restore();
  };
}

/**
 * Margin pin (Cayline's own marker): a short post rising from the pin with a
 * square flag turned toward the outside of the buildup (left pin → flag to
 * the left), a dot at the pin itself; cycle colour with a dark outline.
 */
export function drawMarginPin(c: CanvasRenderingContext2D, x: number, y: number, side: Side, colour: string, opts: { alpha?: number; selected?: boolean } = {}): void {
  const dir = side === 'left' ? -1 : 1;
  c.save();
  c.globalAlpha = opts.alpha ?? 1;
  c.lineJoin = 'round';
  c.lineCap = 'round';
  if (opts.selected) {
    c.beginPath();
    c.arc(x, y - 8, 13, 0, Math.PI * 2);
    c.strokeStyle = CANVAS_ACCENTS.selection;
    c.lineWidth = 2;
    c.setLineDash([3, 3]);
    c.stroke();
    c.setLineDash([]);
  }
  // post
  c.beginPath();
  c.moveTo(x, y);
  c.lineTo(x, y - 17);
  c.strokeStyle = OUTLINE;
  c.lineWidth = 4;
  c.stroke();
  c.strokeStyle = colour;
  c.lineWidth = 2;
  c.stroke();
  // flag: a right-angled pennant hung from the top of the post
  c.beginPath();
  c.moveTo(x, y - 17);
  c.lineTo(x + dir * 9, y - 17);
  c.lineTo(x, y - 10);
  c.closePath();
  c.fillStyle = colour;
  c.fill();
  c.strokeStyle = OUTLINE;
  c.lineWidth = 1.2;
  c.stroke();
  // foot
  c.beginPath();
  c.arc(x, y, 3, 0, Math.PI * 2);
  c.fillStyle = colour;
  c.fill();
  c.strokeStyle = OUTLINE;
  c.lineWidth = 1.2;
  c.stroke();
  c.restore();
}

/**
 * Termination stamp: a small half-arrow pointing at the termination (the
 * tip sits on it), coming in from the side `from`; its one barb lies on the
 * side of the surface the reflection ends against (below for onlap and
 * downlap, above for toplap and truncation). White with a dark outline, the
 * type's initial beside the tail.
 */
export function drawStamp(
  c: CanvasRenderingContext2D,
  x: number,
  y: number,
  type: TerminationType,
  from: Side,
  opts: { alpha?: number; selected?: boolean } = {},
): void {
  const S = TERMINATION_STAMP;
  const len = S.sizePx;
  const back = from === 'left' ? -1 : 1; // tail direction
  const barb = type === 'onlap' || type === 'downlap' ? 1 : -1; // +1 = below (screen y down)
  const tailX = x + back * len;
  c.save();
  c.globalAlpha = opts.alpha ?? 1;
  c.lineJoin = 'round';
  c.lineCap = 'round';
  if (opts.selected) {
    c.beginPath();
    c.arc(x + (back * len) / 2, y, len * 0.9, 0, Math.PI * 2);
    c.strokeStyle = S.selectedStroke;
    c.lineWidth = 2;
    c.setLineDash([3, 3]);
    c.stroke();
    c.setLineDash([]);
  }
  const path = () => {
    c.beginPath();
    c.moveTo(tailX, y);
    c.lineTo(x, y);
    c.lineTo(x + back * 7, y + barb * 6);
    c.lineTo(x + back * 6, y);
  };
  path();
  c.strokeStyle = S.stroke;
  c.lineWidth = S.strokeWidth + 2.5;
  c.stroke();
  path();
  c.closePath();
  c.fillStyle = S.fill;
  c.fill();
  c.beginPath();
  c.moveTo(tailX, y);
  c.lineTo(x, y);
  c.strokeStyle = S.fill;
  c.lineWidth = 1.6;
  c.stroke();
  // initial beside the tail
  c.font = `600 ${S.labelFontSize}px ${FONT}`;
  c.textBaseline = 'middle';
  c.textAlign = from === 'left' ? 'right' : 'left';
  const tx = tailX + back * 3;
  const ty = y - barb * 1;
  c.lineWidth = S.labelStrokeWidth;
  c.strokeStyle = S.labelStroke;
  c.strokeText(TERMINATION_INITIAL[type], tx, ty);
  c.fillStyle = S.labelFill;
  c.fillText(TERMINATION_INITIAL[type], tx, ty);
  c.restore();
}

/**
 * Several Termination stamps merged at this zoom: a white rounded square with
 * a dark outline, a small half-arrow and the count (zoom in to see them apart).
 */
export function drawStampCluster(c: CanvasRenderingContext2D, x: number, y: number, count: number): void {
  const S = TERMINATION_STAMP;
  const text = String(count);
  c.save();
  c.font = `700 11px ${FONT}`;
  const w = Math.max(24, c.measureText(text).width + 18);
  const h = 16;
  c.beginPath();
  c.roundRect(x - w / 2, y - h / 2, w, h, 4);
  c.fillStyle = S.fill;
  c.fill();
  c.strokeStyle = S.stroke;
  c.lineWidth = 1.5;
  c.stroke();
  // the half-arrow of a stamp, small, left of the count
  c.beginPath();
  c.moveTo(x - w / 2 + 4, y);
  c.lineTo(x - w / 2 + 11, y);
  c.lineTo(x - w / 2 + 8, y + 3);
  c.strokeStyle = S.stroke;
  c.lineWidth = 1.4;
  c.stroke();
  c.fillStyle = S.stroke;
  c.textAlign = 'left';
  c.textBaseline = 'middle';
  c.fillText(text, x - w / 2 + 13, y + 0.5);
  c.restore();
}

/** A text label with a dark outline (readable on seismic). */
export function drawLabel(c: CanvasRenderingContext2D, text: string, x: number, y: number, colour: string, opts: { align?: CanvasTextAlign; size?: number } = {}): void {
  c.save();
  c.font = `600 ${opts.size ?? 12}px ${FONT}`;
  c.textAlign = opts.align ?? 'center';
  c.textBaseline = 'middle';
  c.lineJoin = 'round';
  c.lineWidth = 3.5;
  c.strokeStyle = OUTLINE;
  c.strokeText(text, x, y);
  c.fillStyle = colour;
  c.fillText(text, x, y);
  c.restore();
}

/** A label on a dark rounded box (the Ruler's reading, tool hints). */
export function drawBoxLabel(c: CanvasRenderingContext2D, text: string, x: number, y: number, opts: { colour?: string; border?: string } = {}): void {
  c.save();
  c.font = `500 12px ${FONT}`;
  const w = c.measureText(text).width + 14;
  const h = 22;
  const bx = x - w / 2;
  const by = y - h / 2;
  c.beginPath();
  c.roundRect(bx, by, w, h, 5);
  c.fillStyle = 'rgba(20, 25, 30, 0.88)';
  c.fill();
  c.strokeStyle = opts.border ?? 'rgba(255,255,255,0.25)';
  c.lineWidth = 1;
  c.stroke();
  c.fillStyle = opts.colour ?? '#F2F5F7';
  c.textAlign = 'center';
  c.textBaseline = 'middle';
  c.fillText(text, x, y + 0.5);
  c.restore();
}

/** Square vertex handles, the `active` one filled with the selection colour. */
export function drawHandles(f: ScreenFrame, pts: readonly Pt[], colour: string, active: number | undefined): void {
  const { c } = f;
  c.save();
  c.lineWidth = 1.2;
  c.strokeStyle = OUTLINE;
  c.fillStyle = '#FFFFFF';
  let lastX = NaN;
  let lastY = NaN;
  for (let i = 0; i < pts.length; i++) {
    const [x, y] = f.toScreen(pts[i]);
    if (!f.visible(x, y, 8)) continue;
    // Dense lines zoomed out: skip handles closer than 7 px to the last one drawn (zoom in to grab them).
    if (i !== active && i !== 0 && i !== pts.length - 1 && Math.abs(x - lastX) < 7 && Math.abs(y - lastY) < 7) continue;
    lastX = x;
    lastY = y;
    const s = i === active ? 5 : 3.5;
    c.beginPath();
    c.rect(x - s, y - s, 2 * s, 2 * s);
    c.fillStyle = i === active ? CANVAS_ACCENTS.selection : i === 0 || i === pts.length - 1 ? colour : '#FFFFFF';
    c.fill();
    c.stroke();
  }
  c.restore();
}

/** A ring at a screen point (snap target, hovered object). */
export function drawRing(c: CanvasRenderingContext2D, x: number, y: number, r: number, colour: string, dashed = false): void {
  c.save();
  c.beginPath();
  c.arc(x, y, r, 0, Math.PI * 2);
  c.strokeStyle = OUTLINE;
  c.lineWidth = 3.5;
  c.stroke();
  c.strokeStyle = colour;
  c.lineWidth = 1.8;
  if (dashed) c.setLineDash([3, 2]);
  c.stroke();
  c.restore();
}
