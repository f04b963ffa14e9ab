/**
 * Colours of the interpretation canvas and of the panels that explain it.
 *
 * Cycle colours (defined in shared/palette.ts, used by the server's reports too): the colour-blind-safe set of Okabe & Ito (2008), "Color
 * Universal Design", hex values as published there. Its black does not
 * read on the dark slate surround of the canvas, so the canvas uses a light
 * grey in its place (`OKABE_ITO_CANVAS`); the light panels keep the original.
 */
import { palette } from '../theme';
import type { BuildupClass } from '../../shared/measure/classify';
import type { TerminationType } from '../../shared/editor/model';

export { OKABE_ITO, CANVAS_LIGHT_GREY, CYCLE_COLOURS, CYCLE_COLOURS_CANVAS, cycleColour, BASE_COLOUR, type Surface, CLASS_LABEL, TERMINATION_STAMP, TERMINATION_INITIAL } from '../../shared/palette';

/** Selection halo and snapping hints on the canvas. */
export const CANVAS_ACCENTS = {
  surround: palette.canvasSurround,
  selection: palette.sand,
  hover: '#FFFFFF',
} as const;

export interface BadgeColours {
  /** Pill fill. */
  fill: string;
  /** Text and icon on the fill. */
  text: string;
  /** Thin outline. */
  border: string;
}

/**
 * Classification badge colours. Drowned uses the house coral; the others
 * are house or Okabe–Ito colours that stay apart from each other and from
 * coral. Text colours were picked for a WCAG 2.x contrast ratio ≥ 4.5
 * against their fill (checked in tests/unit/readings/palette.test.ts).
 */
export const CLASS_BADGE: Readonly<Record<BuildupClass, BadgeColours>> = Object.freeze({
  drowned: { fill: palette.coral, text: '#1F140F', border: '#C4532F' },
  aggrading: { fill: palette.lagoon, text: '#0B2B27', border: '#1E7A6F' },
  prograding: { fill: palette.sand, text: '#2B2410', border: '#C9A44A' },
  backstepping: { fill: '#0072B2', text: '#FFFFFF', border: '#005A8C' },
  downstepping: { fill: '#5B6874', text: '#FFFFFF', border: '#45505A' },
});

/** Relative luminance of an sRGB hex colour (WCAG 2.x definition). */
export function relativeLuminance(hex: string): number {
  const m = /^#?([0-9a-f]{6})$/i.exec(hex.trim());
  if (!m) throw new Error(`relativeLuminance: "${hex}" is not a #rrggbb colour`);
  const n = parseInt(m[1], 16);
  const ch = [(n >> 16) & 255, (n >> 8) & 255, n & 255].map((c) => {
    const s = c / 255;
    return s <= 0.03928 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
  });
  return 0.2126 * ch[0] + 0.7152 * ch[1] + 0.0722 * ch[2];
}

/** WCAG 2.x contrast ratio of two colours (1 to 21). */
export function contrastRatio(a: string, b: string): number {
  const la = relativeLuminance(a);
  const lb = relativeLuminance(b);
  return (Math.max(la, lb) + 0.05) / (Math.min(la, lb) + 0.05);
}
