/**
 * Vertical exaggeration (VE) of the displayed section.
 *
 * VE = (vertical scale) / (horizontal scale) = (screen px per metre of
 * depth) / (screen px per metre along the line). For an image drawn with a
 * vertical stretch `s` (screen px per image px vertically ÷ horizontally):
 *
 *   VE = s · (metres per image px along the line) / (metres of depth per image px)
 *
 * measured locally at the cursor through the shared engine's depth
 * converter (calibration + velocity model), because in two-way time the
 * metres of depth per pixel change with the velocity at that depth.
 * Displayed angles relate to true ones by tan(apparent) = VE · tan(true)
 * (Groshong 2006, eq. 6.3; shared/measure/exaggeration.ts).
 */
import { createDepthConverter, type DepthConverter } from '../../../shared/measure/index';
import type { Pt } from '../geometry';
import type { RulerContext } from './ruler';

/**
 * The intrinsic VE of the image at `at` (image px), i.e. with no extra
 * stretch: horizontal metres per pixel over vertical metres of depth per
 * pixel, by central differences of ±`h` pixels. Null where it is undefined
 * (no calibration, zero depth change).
 */
export function intrinsicVE(conv: DepthConverter, at: Pt, h = 1): number | null {
  const [u, v] = at;
  const l = conv.toDepth([u - h, v]);
  const r = conv.toDepth([u + h, v]);
  const t = conv.toDepth([u, v - h]);
  const b = conv.toDepth([u, v + h]);
  const mH = Math.hypot(r[0] - l[0], r[1] - l[1]) / (2 * h);
  const mV = Math.hypot(b[0] - t[0], b[1] - t[1]) / (2 * h);
  if (!(mV > 0) || !Number.isFinite(mH) || !Number.isFinite(mV)) return null;
  return mH / mV;
}

/** The VE a person sees at `at`: intrinsic VE times the display's vertical stretch. */
export function displayedVE(conv: DepthConverter, at: Pt, stretch = 1): number | null {
  const ve = intrinsicVE(conv, at);
  return ve === null ? null : ve * stretch;
}

/** Cached converter for a context object (contexts are rebuilt when their inputs change). */
const converters = new WeakMap<object, DepthConverter>();
export function converterFor(ctx: RulerContext): DepthConverter {
  let c = converters.get(ctx);
  if (!c) {
    c = createDepthConverter(ctx);
    converters.set(ctx, c);
  }
  return c;
}

/** "VE ≈ 4.8×" (two significant digits), or "VE —" when unknown. */
export function formatVE(ve: number | null): string {
  if (ve === null || !Number.isFinite(ve)) return 'VE —';
  const digits = ve >= 10 ? 0 : 1;
  return `VE ≈ ${ve.toFixed(digits)}×`;
}

export const VE_STRETCH_MIN = 0.25;
export const VE_STRETCH_MAX = 8;

/**
 * The VE control model: the vertical stretch of the display, set directly or
 * from a wanted VE at a reference point. Plain state; the page applies
 * `stretch` as the image's vertical scale factor.
 */
export class ExaggerationControl {
  private _stretch = 1;
  private listeners = new Set<(s: number) => void>();

  get stretch(): number {
    return this._stretch;
  }

  onChange(fn: (s: number) => void): () => void {
    this.listeners.add(fn);
    return () => this.listeners.delete(fn);
  }

  /** Set the stretch, clamped to [0.25, 8]. Returns the value used. */
  setStretch(s: number): number {
    if (!Number.isFinite(s) || s <= 0) throw new Error('ExaggerationControl.setStretch: stretch must be a finite number > 0');
    const next = Math.min(VE_STRETCH_MAX, Math.max(VE_STRETCH_MIN, s));
    if (next !== this._stretch) {
      this._stretch = next;
      for (const fn of this.listeners) fn(next);
    }
    return next;
  }

  /** Choose the stretch that shows VE `target` where the image's own VE is `intrinsic` (1 = true scale). */
  setVE(target: number, intrinsic: number): number {
    if (!Number.isFinite(target) || target <= 0) throw new Error('ExaggerationControl.setVE: target must be a finite number > 0');
    if (!Number.isFinite(intrinsic) || intrinsic <= 0) throw new Error('ExaggerationControl.setVE: intrinsic must be a finite number > 0');
    return this.setStretch(target / intrinsic);
  }

  reset(): void {
    this.setStretch(1);
  }
}
