/**
 * Geometry summary and self-calibration of a SEG-Y line from its headers.
 *
 * - 2D or 3D: 3D when both inline and crossline (trace header 189–192,
 *   193–196 or their overrides) take more than one value. A file declared 3D,
 *   or whose trace positions cover an area (the path runs back and forth:
 *   length > 3 × the diagonal of its bounding box and the lesser principal
 *   spread > 1/4 of the greater), without inline/crossline values is refused.
 * - x: cumulative distance between consecutive trace positions, in the
 *   file's length unit (measurement system 3255–3256: 1 = m, 2 = ft). The
 *   coordinate scalar (71–72) multiplies when positive and divides when
 *   negative (0 = 1) (SEG-Y rev 1, trace header bytes 71–72). Positions come
 *   from CDP X/Y (181–188), else source X/Y (73–80), else group X/Y (81–88),
 *   else CDP number (21–24) × a spacing the person gives.
 * - y: delay recording time (109–110, times the time scalar 215–216 where
 *   set) + sample index × sample interval. Time data: TWT in ms (interval in
 *   µs / 1000). Depth data (the caller says so, or a textual header states a
 *   depth domain): metres or feet as the measurement system says, the
 *   interval in those units (SEG-Y rev 2.0, binary header 3217–3218).
 */
import { SegyError } from './errors';
import { OVERRIDABLE_DEFAULTS, type OverridableField } from './fields';
import type { SegyFileHeader } from './reader';

export type PositionSource = 'cdp' | 'source' | 'group' | 'cdpNumber';

/** Collects the few header values per trace that the summary needs (40 bytes a trace). */
export class GeometryCollector {
  count = 0;
  private cap = 1024;
  cdp = new Float64Array(this.cap);
  inline = new Float64Array(this.cap);
  crossline = new Float64Array(this.cap);
  /** Scaled coordinates, pairs per source: cdp, source, group. */
  xy = { cdp: new Float64Array(2 * this.cap), source: new Float64Array(2 * this.cap), group: new Float64Array(2 * this.cap) };
  firstDelayMs = 0;
  firstTraceInterval = 0;
  coordinateUnits = 0;

  add(h: Record<string, number>): void {
    if (this.count === this.cap) this.grow();
    const i = this.count++;
    if (i === 0) {
      const ts = h.timeScalar;
      this.firstDelayMs = ts > 0 ? h.delayRecordingTime * ts : ts < 0 ? h.delayRecordingTime / -ts : h.delayRecordingTime;
      this.firstTraceInterval = h.sampleInterval;
      this.coordinateUnits = h.coordinateUnits;
    }
    const s = h.coordinateScalar;
    const scale = (v: number) => (s > 0 ? v * s : s < 0 ? v / -s : v);
    this.cdp[i] = h.cdp;
    this.inline[i] = h.inline;
    this.crossline[i] = h.crossline;
    this.xy.cdp[2 * i] = scale(h.cdpX); this.xy.cdp[2 * i + 1] = scale(h.cdpY);
    this.xy.source[2 * i] = scale(h.sourceX); this.xy.source[2 * i + 1] = scale(h.sourceY);
    this.xy.group[2 * i] = scale(h.groupX); this.xy.group[2 * i + 1] = scale(h.groupY);
  }

  private grow() {
    this.cap *= 2;
    const g = (a: Float64Array, k = 1) => { const b = new Float64Array(k * this.cap); b.set(a); return b; };
    this.cdp = g(this.cdp); this.inline = g(this.inline); this.crossline = g(this.crossline);
    this.xy = { cdp: g(this.xy.cdp, 2), source: g(this.xy.source, 2), group: g(this.xy.group, 2) };
  }
}

export interface Range { min: number; max: number; count: number }
export interface GeometryOptions {
  /** 'auto' (default) detects; '3d' demands inline/crossline values. */
  dimension?: 'auto' | '2d' | '3d';
  /** Spacing between CDP numbers (file length unit), used when no trace has coordinates. */
  cdpSpacing?: number;
  domain?: 'auto' | 'time' | 'depth';
  /** The overridden positions in force (only for naming them in messages). */
  overrides?: Partial<Record<OverridableField, number>>;
}

export interface GeometrySummary {
  dimension: '2d' | '3d';
  traces: number;
  inline: Range | null;
  crossline: Range | null;
  cdp: Range;
  positionSource: PositionSource;
  lengthUnit: 'm' | 'ft';
  /** Cumulative distance per trace, starting at 0 (file length unit). */
  x: Float64Array;
  /** Position of each trace end (scaled file coordinates; CDP number × spacing along x for 'cdpNumber'). */
  lineEnds: { first: [number, number]; last: [number, number] };
  y: { domain: 'time' | 'depth'; unit: 'ms' | 'm' | 'ft'; start: number; step: number; samples: number };
}

function range(a: Float64Array, n: number): Range {
  let min = Infinity; let max = -Infinity;
  const seen = new Set<number>();
  for (let i = 0; i < n; i++) { const v = a[i]; if (v < min) min = v; if (v > max) max = v; seen.add(v); }
  return { min, max, count: seen.size };
}

function hasPositions(p: Float64Array, n: number): boolean {
  for (let i = 1; i < n; i++) if (p[2 * i] !== p[0] || p[2 * i + 1] !== p[1]) return true;
  return false;
}

/** Whether positions cover an area rather than follow a line (see the module comment). */
function coversArea(p: Float64Array, n: number): boolean {
  if (n < 9) return false;
  let mx = 0; let my = 0; let minX = Infinity; let maxX = -Infinity; let minY = Infinity; let maxY = -Infinity; let path = 0;
  for (let i = 0; i < n; i++) {
    const x = p[2 * i]; const y = p[2 * i + 1];
    mx += x; my += y;
    minX = Math.min(minX, x); maxX = Math.max(maxX, x); minY = Math.min(minY, y); maxY = Math.max(maxY, y);
    if (i) path += Math.hypot(x - p[2 * i - 2], y - p[2 * i - 1]);
  }
  mx /= n; my /= n;
  let sxx = 0; let syy = 0; let sxy = 0;
  for (let i = 0; i < n; i++) { const dx = p[2 * i] - mx; const dy = p[2 * i + 1] - my; sxx += dx * dx; syy += dy * dy; sxy += dx * dy; }
  const tr = (sxx + syy) / 2; const d = Math.sqrt(((sxx - syy) / 2) ** 2 + sxy * sxy);
  const major = tr + d; const minor = Math.max(0, tr - d);
  return path > 3 * Math.hypot(maxX - minX, maxY - minY) && Math.sqrt(minor) > 0.25 * Math.sqrt(major);
}

const DEPTH_TEXT = /DOMAIN\s*[:=]?\s*DEPTH|\bDEPTH\s+(DOMAIN|MIGRAT|SECTION|CONVERTED|DATA)/i;

export function summariseGeometry(header: SegyFileHeader, g: GeometryCollector, opts: GeometryOptions = {}): GeometrySummary {
  const n = g.count;
  if (n === 0) throw new SegyError('segy_no_traces', 'samplesPerTrace', 'bytes 3221–3222', 'the file has headers but no traces');
  const il = range(g.inline, n);
  const xl = range(g.crossline, n);
  const ilPos = opts.overrides?.inline ?? OVERRIDABLE_DEFAULTS.inline;
  const xlPos = opts.overrides?.crossline ?? OVERRIDABLE_DEFAULTS.crossline;
  const ilXlMissing = () => new SegyError('segy_no_inline_crossline', 'inline', `trace header bytes ${ilPos}–${ilPos + 3} and ${xlPos}–${xlPos + 3}`,
    `a 3D file needs inline and crossline numbers; here inline takes ${il.count} value(s) (${il.min}–${il.max}) and crossline ${xl.count} (${xl.min}–${xl.max}). Give their byte positions if the file keeps them elsewhere`,
    { crossline: `trace header bytes ${xlPos}–${xlPos + 3}` });
  const is3d = il.count > 1 && xl.count > 1;
  if (opts.dimension === '3d' && !is3d) throw ilXlMissing();

  let source: PositionSource = 'cdpNumber';
  let pos: Float64Array | null = null;
  for (const s of ['cdp', 'source', 'group'] as const) if (hasPositions(g.xy[s], n)) { source = s; pos = g.xy[s]; break; }
  if (!is3d && opts.dimension !== '2d' && pos && coversArea(pos, n)) throw ilXlMissing();
  if (g.coordinateUnits >= 2 && pos) {
    throw new SegyError('segy_unsupported', 'coordinateUnits', 'trace header bytes 89–90', `coordinates in unit code ${g.coordinateUnits} (2 = arc seconds, 3 = degrees, 4 = DMS) cannot be used as distances; give a CDP spacing instead`);
  }
  const x = new Float64Array(n);
  let first: [number, number];
  let last: [number, number];
  if (pos) {
    for (let i = 1; i < n; i++) x[i] = x[i - 1] + Math.hypot(pos[2 * i] - pos[2 * i - 2], pos[2 * i + 1] - pos[2 * i - 1]);
    first = [pos[0], pos[1]];
    last = [pos[2 * n - 2], pos[2 * n - 1]];
  } else {
    const sp = opts.cdpSpacing;
    if (!(sp !== undefined && sp > 0 && Number.isFinite(sp))) {
      throw new SegyError('segy_no_positions', 'cdpX', 'trace header bytes 181–188', 'no trace has coordinates (CDP X/Y 181–188, source X/Y 73–80 and group X/Y 81–88 are all constant); give the CDP spacing to place traces by CDP number (21–24)');
    }
    for (let i = 0; i < n; i++) x[i] = Math.abs(g.cdp[i] - g.cdp[0]) * sp;
    first = [0, 0];
    last = [x[n - 1], 0];
  }
  const lengthUnit: 'm' | 'ft' = header.binary.measurementSystem === 2 ? 'ft' : 'm';
  const texts = [header.textual, ...header.extendedTextual].join('\n');
  const domain = opts.domain && opts.domain !== 'auto' ? opts.domain : DEPTH_TEXT.test(texts) ? 'depth' : 'time';
  const dt = header.sampleInterval;
  const y = domain === 'time'
    ? { domain, unit: 'ms' as const, start: g.firstDelayMs, step: dt / 1000, samples: header.samplesPerTrace }
    : { domain, unit: lengthUnit, start: g.firstDelayMs, step: dt, samples: header.samplesPerTrace };
  return {
    dimension: is3d ? '3d' : '2d', traces: n,
    inline: il.max !== 0 || il.min !== 0 ? il : null, crossline: xl.max !== 0 || xl.min !== 0 ? xl : null,
    cdp: range(g.cdp, n), positionSource: source, lengthUnit, x, lineEnds: { first, last }, y,
  };
}
