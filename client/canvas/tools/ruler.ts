/**
 * Ruler tool: distance and TRUE angle between two points, both converted to
 * the depth domain by the shared engine (`rulerReading`, measurement-spec).
 *
 * click, click   first and second point (snapped to nearby vertices); while
 *                the second point follows the pointer the reading is live
 * click again    start a new measurement
 * Esc            clear
 *
 * The depth context comes from `context()`: build it with `rulerContext()`.
 * With the `buildup` velocity model the conversion depends on the traced
 * buildups (their envelope), which is costly to prepare per pointer move, so
 * the reading then appears when the second point is placed.
 */
import { lengthLabel, toDisplayLength, type LengthUnit } from '../../../shared/units';
import { rulerReading, type RulerReading } from '../../../shared/measure/index';
import type { Pt } from '../geometry';
import { isMeasurable, toInterpretationInput, type CalibrationTie, type EditorBuildup, type VelocityModel, type VerticalDomain } from '../model';
import { BaseTool, tidy } from './base';
import type { ToolEnv, ToolKey, ToolPointer } from './types';

/** The context `rulerReading(context, a, b)` takes, with image-pixel points. */
export interface RulerContext {
  verticalDomain: VerticalDomain;
  coordinates: 'pixels';
  calibration: CalibrationTie[];
  velocity?: VelocityModel;
  buildups?: ReturnType<typeof toInterpretationInput>['buildups'];
}

/**
 * Build the Ruler's depth context from the section's Ties, vertical domain
 * and velocity model. The measurable buildups are included only for the
 * `buildup` velocity model (which needs their envelope); null when the
 * section has fewer than 2 Ties.
 */
export function rulerContext(opts: {
  ties: readonly CalibrationTie[];
  verticalDomain: VerticalDomain;
  velocity?: VelocityModel | null;
  buildups?: readonly EditorBuildup[];
}): RulerContext | null {
  if (opts.ties.length < 2) return null;
  const ctx: RulerContext = { verticalDomain: opts.verticalDomain, coordinates: 'pixels', calibration: opts.ties.map((t) => ({ px: t.px, world: t.world })) };
  if (opts.velocity) ctx.velocity = opts.velocity;
  if (opts.velocity?.kind === 'buildup' && opts.buildups) {
    const ok = opts.buildups.filter((b) => isMeasurable(b, opts.ties));
    if (ok.length)
      ctx.buildups = toInterpretationInput(ok, { calibrationTies: ctx.calibration, verticalDomain: ctx.verticalDomain, velocity: opts.velocity }).buildups;
  }
  return ctx;
}

export interface RulerOptions {
  /** The current depth context, or null when the section is not tied. */
  context?: () => RulerContext | null;
}

export class RulerTool extends BaseTool {
  readonly id = 'ruler' as const;
  private a: Pt | null = null;
  private b: Pt | null = null;
  private fixed = false;
  private reading: RulerReading | null = null;
  private message: string | undefined;

  constructor(
    env: ToolEnv,
    private readonly opts: RulerOptions = {},
  ) {
    super(env);
  }

  /** The last complete reading (after the second click), or null. */
  get result(): RulerReading | null {
    return this.fixed ? this.reading : null;
  }

  private publish(): void {
    this.setPreview({
      kind: 'ruler',
      a: this.a,
      b: this.b,
      fixed: this.fixed,
      reading: this.reading,
      ...(this.message ? { message: this.message } : {}),
    });
  }

  private read(final: boolean): void {
    this.reading = null;
    this.message = undefined;
    if (!this.a || !this.b) return;
    const ctx = this.opts.context?.() ?? null;
    if (!ctx) {
      this.message = 'Tie the section (2+ Ties) to read metres and true angles.';
      return;
    }
    if (!final && ctx.velocity?.kind === 'buildup') return;
    try {
      this.reading = rulerReading(ctx, this.a, this.b);
    } catch (e) {
      this.message = e instanceof Error ? e.message : String(e);
    }
  }

  private point(e: ToolPointer): Pt {
    const s = this.snapPoint(e.image, e.scale);
    return s.hit ? s.point : tidy(s.point);
  }

  click(e: ToolPointer): boolean {
    const p = this.point(e);
    if (!this.a || this.fixed) {
      this.a = p;
      this.b = null;
      this.fixed = false;
      this.reading = null;
      this.message = undefined;
    } else {
      this.b = p;
      this.fixed = true;
      this.read(true);
    }
    this.publish();
    return true;
  }

  pointerMove(e: ToolPointer): boolean {
    if (!this.a || this.fixed) return false;
    this.b = this.point(e);
    this.read(false);
    this.publish();
    return false;
  }

  protected hasUnfinished(): boolean {
    return this.a !== null;
  }

  protected dropUnfinished(): void {
    this.a = this.b = null;
    this.fixed = false;
    this.reading = null;
    this.message = undefined;
  }

  protected showIdle(): void {
    this.publish();
  }
}

/** "1,234 m · 12.3° true" style label of a reading; lengths in `unit` (metres or international feet), the angle unchanged. */
export function formatRuler(r: RulerReading, locale?: string, unit: LengthUnit = 'm'): string {
  const dist = toDisplayLength(r.distanceM, unit);
  const dz = toDisplayLength(r.dzM, unit);
  const m = new Intl.NumberFormat(locale, { maximumFractionDigits: dist < 100 ? 1 : 0 });
  const d = new Intl.NumberFormat(locale, { minimumFractionDigits: 1, maximumFractionDigits: 1 });
  const u = lengthLabel(unit);
  return `${m.format(dist)} ${u} · ${d.format(r.angleDeg)}° true · Δz ${dz >= 0 ? '+' : '−'}${m.format(Math.abs(dz))} ${u}`;
}
