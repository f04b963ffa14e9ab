import type { BuildupClass } from './measure/classify';
import type { TerminationType } from './editor/model';
/**
 * Colours shared by the browser and the server's reports (PDF, SVG/PNG
 * exports), so that a plot or an overlay looks the same on the page and on
 * paper.
 *
 * Cycle colours: the colour-blind-safe set of Okabe & Ito (2008), "Color
 * Universal Design", hex values as published there. Its black does not
 * read on the dark slate surround of the canvas, so the canvas uses a light
 * grey in its place (`OKABE_ITO_CANVAS`); the light panels keep the original.
 */

/** The house palette (client/theme.ts re-exports it as `palette`). */
export const HOUSE_PALETTE = {
  lagoon: '#2a9d8f',
  lagoonHover: '#35b1a2',
  lagoonPressed: '#218074',
  lagoonSuppl: '#3fbcad',
  coral: '#e76f51',
  coralHover: '#ec8668',
  coralPressed: '#cc5a3d',
  coralSuppl: '#ee8e74',
  sand: '#e9c46a',
  sandSoft: '#fbf3dc',
  ink: '#1f2a33',
  inkMuted: '#5b6874',
  line: '#e3e8ec',
  page: '#f5f7f8',
  canvasSurround: '#1d232a',
  info: '#4f7fa3',
} as const;

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
  selectedStroke: HOUSE_PALETTE.sand,
});

/** The initial beside a Termination stamp (two letters where toplap and truncation would share a T). */
export const TERMINATION_INITIAL: Readonly<Record<TerminationType, string>> = Object.freeze({
  onlap: 'O',
  downlap: 'D',
  toplap: 'Tp',
  truncation: 'Tr',
});
