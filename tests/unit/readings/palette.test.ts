import { describe, expect, it } from 'vitest';
import {
  CANVAS_LIGHT_GREY,
  CLASS_BADGE,
  OKABE_ITO,
  TERMINATION_INITIAL,
  TERMINATION_STAMP,
  contrastRatio,
  cycleColour,
  relativeLuminance,
} from '../../../client/canvas/palette';

describe('cycle colours', () => {
  it('are the Okabe–Ito colours, oldest first, cycling after eight', () => {
    // Okabe & Ito (2008), Color Universal Design: the eight colours in their published order
    const published = ['#E69F00', '#56B4E9', '#009E73', '#F0E442', '#0072B2', '#D55E00', '#CC79A7', '#000000'];
    expect(Array.from({ length: 8 }, (_, i) => cycleColour(i))).toEqual(published);
    expect(cycleColour(8)).toBe(published[0]);
    expect(cycleColour(13)).toBe(published[5]);
  });

  it('swap black for a light grey on the dark canvas only', () => {
    expect(cycleColour(7, 'canvas')).toBe(CANVAS_LIGHT_GREY);
    expect(cycleColour(15, 'canvas')).toBe(CANVAS_LIGHT_GREY);
    expect(cycleColour(0, 'canvas')).toBe(OKABE_ITO.orange);
    // the grey must read on the slate surround (#1d232a, product brief) at least as well as the palette's blue
    expect(contrastRatio(CANVAS_LIGHT_GREY, '#1d232a')).toBeGreaterThan(contrastRatio(OKABE_ITO.blue, '#1d232a'));
  });

  it('refuse a bad index', () => {
    expect(() => cycleColour(-1)).toThrow(/index0/);
    expect(() => cycleColour(1.5)).toThrow(/index0/);
  });
});

describe('contrast helpers', () => {
  it('match the WCAG 2.x reference points', () => {
    // WCAG 2.1 definitions: white has luminance 1, black 0, their contrast is 21:1
    expect(relativeLuminance('#FFFFFF')).toBeCloseTo(1, 12);
    expect(relativeLuminance('#000000')).toBe(0);
    expect(contrastRatio('#FFFFFF', '#000000')).toBeCloseTo(21, 10);
    // #777777 on white is the well-known borderline grey, 4.48:1 (from memory)
    expect(contrastRatio('#777777', '#FFFFFF')).toBeCloseTo(4.48, 2);
    expect(() => relativeLuminance('teal')).toThrow(/#rrggbb/);
  });
});

describe('classification badges', () => {
  it('drowned is coral; every badge text reaches WCAG AA contrast (4.5:1) on its fill', () => {
    expect(CLASS_BADGE.drowned.fill.toLowerCase()).toBe('#e76f51');
    for (const [cls, c] of Object.entries(CLASS_BADGE)) {
      expect(contrastRatio(c.text, c.fill), cls).toBeGreaterThanOrEqual(4.5);
    }
  });

  it('use five different fills', () => {
    const fills = Object.values(CLASS_BADGE).map((c) => c.fill.toLowerCase());
    expect(new Set(fills).size).toBe(fills.length);
  });
});

describe('termination stamps', () => {
  it('are white with a dark outline and have distinct initials', () => {
    expect(TERMINATION_STAMP.fill).toBe('#FFFFFF');
    expect(contrastRatio(TERMINATION_STAMP.fill, TERMINATION_STAMP.stroke)).toBeGreaterThan(15);
    const initials = Object.values(TERMINATION_INITIAL);
    expect(new Set(initials).size).toBe(4);
  });
});
