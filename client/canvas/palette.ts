/**
 * Colours of the interpretation canvas and of the panels that explain it.
 *
 * Cycle colours: the colour-blind-safe set of Okabe & Ito (2008), "Color
 * Universal Design", hex values as published there. Its black does not
 * read on the dark slate surround of the canvas, so the canvas uses a light
 * grey in its place (`OKABE_ITO_CANVAS`); the light panels keep the original.
 */
import { palette } from '../theme';
import type { BuildupClass } from '../../shared/measure/classify';
import type { TerminationType } from '../../shared/editor/model';

/** Okabe & Ito (2008), in their published order. */
export const OKABE_ITO = {
  orange: '#E69F00',
  skyBlue: '#56B4E9',
  bluishGreen: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  reddishPurple: '#CC79A7',
  black: '#000000',
} as const;

/** Stand-in for black on the dark canvas surround. */
export const CANVAS_LIGHT_GREY = '#C8CDD2';

/** Cycle colours for light backgrounds (panels, plots, reports): oldest cycle first. */
export const CYCLE_COLOURS: readonly string[] = Object.freeze(Object.values(OKABE_ITO));

/** Cycle colours on the dark canvas: the same order, black replaced by a light grey. */
export const CYCLE_COLOURS_CANVAS: readonly string[] = Object.freeze(
  CYCLE_COLOURS.map((c) => (c === OKABE_ITO.black ? CANVAS_LIGHT_GREY : c)),
);

export type Surface = 'light' | 'canvas';

/**
 * Colour of the cycle at 0-based position `index0` (0 = oldest), cycling
 * through the eight colours. `surface: 'canvas'` swaps black for a light grey.
 */
export function cycleColour(index0: number, surface: Surface = 'light'): string {
  if (!Number.isInteger(index0) || index0 < 0) throw new RangeError(`cycleColour: index0 must be an integer ≥ 0 (got ${index0})`);
  const set = surface === 'canvas' ? CYCLE_COLOURS_CANVAS : CYCLE_COLOURS;
  return set[index0 % set.length];
}

/** Base of a buildup: a warm off-white on the canvas, slate ink on light panels (neither is a cycle colour). */
export const BASE_COLOUR = { canvas: '#F4EBDD', light: '#3D4A55' } as const;

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

/** Human labels of the classes (sentence case). */
export const CLASS_LABEL: Readonly<Record<BuildupClass, string>> = Object.freeze({
  drowned: 'Drowned',
  aggrading: 'Aggrading',
  prograding: 'Prograding',
  backstepping: 'Backstepping',
  downstepping: 'Downstepping',
});

/**
 * Termination stamps: small half-arrows pointing at the termination, white
 * with a dark outline, with the type's initial beside them (product brief).
 */
export const TERMINATION_STAMP = Object.freeze({
  fill: '#FFFFFF',
  stroke: '#14191E',
  strokeWidth: 1.5,
  /** Length of the half-arrow in screen pixels (constant under zoom). */
  sizePx: 14,
  labelFontSize: 11,
  labelFill: '#FFFFFF',
  labelStroke: '#14191E',
  labelStrokeWidth: 2.5,
  selectedStroke: palette.sand,
});

/** The initial beside a Termination stamp (two letters where toplap and truncation would share a T). */
export const TERMINATION_INITIAL: Readonly<Record<TerminationType, string>> = Object.freeze({
  onlap: 'O',
  downlap: 'D',
  toplap: 'Tp',
  truncation: 'Tr',
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
