/**
 * The marked-up crop of a report as SVG: the interpretation of one buildup
 * (base, cycle tops in the cycle colours, Margin pins, flanks labelled with
 * their true angles, Termination stamps) drawn over a crop of the section.
 * The report page draws it over the section's preview, the server over a
 * crop composited from the tile pyramid (PNG and SVG exports, PDF), so both
 * show the same drawing. Pure string building; every text is escaped.
 */
import type { BuildupMeasurement } from '../measure/index';
import type { BuildupGeometry, CycleGeometry, Pt } from '../editor/model';
import { BASE_COLOUR, TERMINATION_INITIAL, TERMINATION_STAMP, cycleColour } from '../palette';
import { STRETCH_MAX, STRETCH_MIN, type ReportCrop } from './report';

/** Escape text for SVG/XML content and attribute values. */
export function xmlEscape(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&apos;' })[c]!);
}

const r1 = (v: number) => Math.round(v * 10) / 10;

/** Pixel bounding box of everything traced (base, tops, pins, flanks, stamps); null when nothing is. */
export function geometryBounds(g: BuildupGeometry): { u0: number; v0: number; u1: number; v1: number } | null {
  const pts: Pt[] = [...g.base, ...g.terminations.map((t) => t.at)];
  for (const c of g.cycles) {
    pts.push(...c.top, ...(c.flankLeft ?? []), ...(c.flankRight ?? []));
    if (c.marginLeft) pts.push(c.marginLeft);
    if (c.marginRight) pts.push(c.marginRight);
  }
  const ok = pts.filter((p) => Array.isArray(p) && Number.isFinite(p[0]) && Number.isFinite(p[1]));
  if (!ok.length) return null;
  let [u0, v0, u1, v1] = [Infinity, Infinity, -Infinity, -Infinity];
  for (const [u, v] of ok) {
    u0 = Math.min(u0, u);
    v0 = Math.min(v0, v);
    u1 = Math.max(u1, u);
    v1 = Math.max(v1, v);
  }
  return { u0, v0, u1, v1 };
}

/**
 * The crop window: the traced geometry with a margin of `pad` (fraction of
 * its size, at least 24 px) on every side, clamped to the image; the whole
 * image when nothing is traced. Integer pixels, at least 1 × 1.
 */
export function cropWindow(g: BuildupGeometry, imageWidth: number, imageHeight: number, pad = 0.2): { u0: number; v0: number; width: number; height: number } {
  const b = geometryBounds(g);
  if (!b) return { u0: 0, v0: 0, width: imageWidth, height: imageHeight };
  const pu = Math.max(24, (b.u1 - b.u0) * pad);
  const pv = Math.max(24, (b.v1 - b.v0) * pad);
  const u0 = Math.max(0, Math.floor(b.u0 - pu));
  const v0 = Math.max(0, Math.floor(b.v0 - pv));
  const u1 = Math.min(imageWidth, Math.ceil(b.u1 + pu));
  const v1 = Math.min(imageHeight, Math.ceil(b.v1 + pv));
  return { u0, v0, width: Math.max(1, u1 - u0), height: Math.max(1, v1 - v0) };
}

/** Clamp a requested stretch to the editor's range; NaN or missing gives 1. */
export function clampStretch(s: unknown): number {
  const n = typeof s === 'number' ? s : Number(s);
  if (!Number.isFinite(n) || n <= 0) return 1;
  return Math.min(STRETCH_MAX, Math.max(STRETCH_MIN, n));
}

/**
 * Output size of a crop drawn `width` px wide with vertical stretch
 * `stretch` (image px drawn `stretch` times taller than wide). The height is
 * capped at `maxHeight` by narrowing the drawing; at least 1 px each way.
 */
export function drawnSize(crop: Pick<ReportCrop, 'width' | 'height'>, stretch: number, width: number, maxHeight = Infinity): { width: number; height: number; sx: number; sy: number } {
  let sx = width / crop.width;
  if (crop.height * sx * stretch > maxHeight) sx = maxHeight / (crop.height * stretch);
  const sy = sx * stretch;
  return { width: Math.max(1, Math.round(crop.width * sx)), height: Math.max(1, Math.round(crop.height * sy)), sx, sy };
}

/** "VE ≈ 2.4×" (two significant digits below 10), or "VE unknown". */
export function formatVE(ve: number | null): string {
  if (ve === null || !Number.isFinite(ve)) return 'VE unknown';
  return `VE ≈ ${ve >= 10 ? ve.toFixed(0) : ve.toFixed(1)}×`;
}

export interface OverlayOptions {
  crop: Pick<ReportCrop, 'u0' | 'v0' | 'width' | 'height'>;
  /** Output size and scale factors (from drawnSize). */
  size: { width: number; height: number; sx: number; sy: number };
  measurement?: BuildupMeasurement | null;
  /** A background image drawn under the overlay (a data: or blob: URL), filling the output unless `backgroundBox` places it. */
  backgroundHref?: string | null;
  /** Where the background goes in output units (e.g. the whole section's preview, shifted so the crop shows). */
  backgroundBox?: { x: number; y: number; width: number; height: number } | null;
  /** A caption line at the bottom-left (VE, scale), drawn on a light band. */
  caption?: string | null;
  /** Font family name of the labels. */
  fontFamily?: string;
  /** Note pins to draw (image pixels): a numbered tag, greyed when resolved. */
  notePins?: { number: number; at: [number, number]; resolved: boolean }[];
}

/** Indices (0-based, in the geometry) of the cycles the engine measured: complete cycles, oldest first (shared/editor/model.ts). */
function measuredCycleIndices(cycles: readonly CycleGeometry[]): number[] {
  const out: number[] = [];
  cycles.forEach((c, i) => {
    if (c.top.length >= 2 && c.marginLeft && c.marginRight) out.push(i);
  });
  return out;
}

/**
 * The overlay SVG of a crop: a complete `<svg>` document of `size.width` ×
 * `size.height` user units. Lines get a dark halo so that they read on grey
 * and on red-blue seismic alike.
 */
export function overlaySvg(g: BuildupGeometry, o: OverlayOptions): string {
  const { crop, size } = o;
  const font = xmlEscape(o.fontFamily ?? "'IBM Plex Sans', sans-serif");
  const X = (u: number) => r1((u - crop.u0) * size.sx);
  const Y = (v: number) => r1((v - crop.v0) * size.sy);
  const pts = (line: readonly Pt[]) => line.map(([u, v]) => `${X(u)},${Y(v)}`).join(' ');
  const halo = 'stroke="#14191E" stroke-opacity="0.75" stroke-linejoin="round" stroke-linecap="round"';
  const out: string[] = [];
  out.push(
    `<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" width="${size.width}" height="${size.height}" viewBox="0 0 ${size.width} ${size.height}" font-family="${font}">`,
  );
  if (o.backgroundHref) {
    const b = o.backgroundBox ?? { x: 0, y: 0, width: size.width, height: size.height };
    const href = xmlEscape(o.backgroundHref);
    out.push(`<image x="${r1(b.x)}" y="${r1(b.y)}" width="${r1(b.width)}" height="${r1(b.height)}" preserveAspectRatio="none" href="${href}" xlink:href="${href}"/>`);
  }
  const line = (l: readonly Pt[], colour: string, width: number, dash = '', cls = '') => {
    if (l.length < 2) return;
    const d = dash ? ` stroke-dasharray="${dash}"` : '';
    out.push(`<polyline class="${cls}" points="${pts(l)}" fill="none" ${halo} stroke-width="${width + 2}"${d}/>`);
    out.push(`<polyline class="${cls}" points="${pts(l)}" fill="none" stroke="${colour}" stroke-width="${width}" stroke-linejoin="round" stroke-linecap="round"${d}/>`);
  };
  const label = (x: number, y: number, text: string, colour = '#FFFFFF', anchor = 'start', fontSize = 11) => {
    out.push(
      `<text x="${r1(x)}" y="${r1(y)}" font-size="${fontSize}" text-anchor="${anchor}" fill="${colour}" stroke="#14191E" stroke-width="2.5" paint-order="stroke" stroke-linejoin="round">${xmlEscape(text)}</text>`,
    );
  };

  line(g.base, BASE_COLOUR.canvas, 2, '', 'base');
  const measured = measuredCycleIndices(g.cycles);
  g.cycles.forEach((c, i) => {
    const colour = cycleColour(i, 'canvas');
    line(c.top, colour, 2.2, '', `top top-${i + 1}`);
    const m = o.measurement?.cycles[measured.indexOf(i)] ?? null;
    for (const side of ['Left', 'Right'] as const) {
      const flank = side === 'Left' ? c.flankLeft : c.flankRight;
      if (!flank || flank.length < 2) continue;
      line(flank, colour, 1.6, '5 3', `flank flank-${side.toLowerCase()}-${i + 1}`);
      const angle = m ? (side === 'Left' ? m.left.flankAngleDeg : m.right.flankAngleDeg) : null;
      if (angle != null) {
        const mid = flank[Math.floor(flank.length / 2)];
        label(X(mid[0]) + (side === 'Left' ? -6 : 6), Y(mid[1]), `${angle.toFixed(1)}°`, colour, side === 'Left' ? 'end' : 'start');
      }
    }
    for (const [side, pin] of [
      ['L', c.marginLeft],
      ['R', c.marginRight],
    ] as const) {
      if (!pin) continue;
      out.push(`<circle class="margin-pin" cx="${X(pin[0])}" cy="${Y(pin[1])}" r="4.5" fill="${colour}" stroke="#14191E" stroke-width="1.5"/>`);
      label(X(pin[0]) + (side === 'L' ? -7 : 7), Y(pin[1]) - 6, `${side}${i + 1}`, '#FFFFFF', side === 'L' ? 'end' : 'start');
    }
  });
  for (const t of g.terminations) {
    const x = X(t.at[0]);
    const y = Y(t.at[1]);
    const s = TERMINATION_STAMP.sizePx * 0.75; // a little smaller than on the canvas: a report crop shows the whole buildup
    // half-arrow pointing at the termination from the upper left
    out.push(
      `<path class="stamp" d="M${r1(x)},${r1(y)} L${r1(x - s)},${r1(y - s * 0.45)} L${r1(x - s * 0.7)},${r1(y)} Z" fill="${TERMINATION_STAMP.fill}" stroke="${TERMINATION_STAMP.stroke}" stroke-width="${TERMINATION_STAMP.strokeWidth}" stroke-linejoin="round"/>`,
    );
    label(x - s - 2, y - s * 0.45, TERMINATION_INITIAL[t.type], TERMINATION_STAMP.labelFill, 'end', 8);
  }
  for (const p of o.notePins ?? []) {
    const x = X(p.at[0]);
    const y = Y(p.at[1]);
    const text = String(p.number);
    const w = 10 + text.length * 6.5;
    const fill = p.resolved ? '#8a949c' : '#e9c46a';
    // a tag on a short stem, its point at the pinned pixel
    out.push(`<path class="note-pin" d="M${r1(x)},${r1(y)} l0,-7" stroke="#14191E" stroke-width="1.5"/>`);
    out.push(`<rect class="note-pin" x="${r1(x - w / 2)}" y="${r1(y - 23)}" width="${r1(w)}" height="16" rx="3" fill="${fill}" stroke="#14191E" stroke-width="1"/>`);
    out.push(`<text x="${r1(x)}" y="${r1(y - 11)}" font-size="10" text-anchor="middle" fill="#14191E">${xmlEscape(text)}</text>`);
  }
  if (o.caption) {
    const w = Math.min(size.width, 14 + o.caption.length * 6.2);
    out.push(`<rect x="0" y="${size.height - 20}" width="${r1(w)}" height="20" fill="#FFFFFF" fill-opacity="0.85"/>`);
    out.push(`<text x="6" y="${size.height - 6}" font-size="11" fill="#1f2a33">${xmlEscape(o.caption)}</text>`);
  }
  out.push('</svg>');
  return out.join('\n');
}
