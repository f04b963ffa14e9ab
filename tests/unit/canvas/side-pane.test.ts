import { describe, expect, it } from 'vitest';
import { READINGS_WIDE, SIDE_DEFAULT, SIDE_MIN, STAGE_MIN, sideWidthFor } from '../../../client/composables/useSidePane';

// ReadingsPanel's per-cycle columns: 50 + 90 + 86 + 68 + 150 + 150 + 84 + 112 + 110 + 104 (rates) px
const TABLE_WITH_RATES = 1004;
const PANE_PADDING = 2 * 12 + 1; // the pane's padding and its border

describe('side pane width', () => {
  it('the wide Readings hold the whole per-cycle table on a 1440 px screen (page padding included)', () => {
    const work = 1440 - 2 * 24; // the app shell's padding around the page
    const w = sideWidthFor(READINGS_WIDE, work);
    expect(w - PANE_PADDING).toBeGreaterThanOrEqual(TABLE_WITH_RATES);
    expect(work - 52 - w).toBeGreaterThanOrEqual(STAGE_MIN); // and the canvas keeps some room
  });
  it('never leaves the canvas less than STAGE_MIN nor the pane less than SIDE_MIN', () => {
    expect(sideWidthFor(5000, 1200)).toBe(1200 - 52 - STAGE_MIN);
    expect(sideWidthFor(10, 1200)).toBe(SIDE_MIN);
    expect(sideWidthFor(SIDE_DEFAULT, 1440)).toBe(SIDE_DEFAULT);
    expect(sideWidthFor(800, 500)).toBe(SIDE_MIN); // a tiny window: the pane keeps its minimum
  });
});
