import { describe, expect, it } from 'vitest';
import {
  chooseLevel,
  clampPan,
  deepZoomMaxLevel,
  fitView,
  imageToScreen,
  levelGrid,
  levelSize,
  parentTile,
  screenToImage,
  tileCount,
  tilePlacement,
  useViewport,
  visibleRect,
  visibleTileRange,
  wheelPixels,
  wheelZoomFactor,
  zoomAround,
  type Pyramid,
  type View,
} from '../../client/canvas/viewport';

// A 3000 × 1200 section in 256 px tiles without overlap; max level ceil(log2 3000) = 12.
const pyr: Pyramid = { width: 3000, height: 1200, tileSize: 256, overlap: 0, maxLevel: 12, minLevel: 0 };

describe('screen ↔ image', () => {
  it('are inverse of each other', () => {
    const v: View = { scale: 0.37, x: -120.5, y: 44 };
    for (const p of [[0, 0], [1234.5, 678.25], [-10, 5000]] as [number, number][]) {
      const back = screenToImage(v, imageToScreen(v, p));
      expect(back[0]).toBeCloseTo(p[0], 9);
      expect(back[1]).toBeCloseTo(p[1], 9);
    }
    // screen = image · scale + offset, written out once
    expect(imageToScreen(v, [100, 200])).toEqual([100 * 0.37 - 120.5, 200 * 0.37 + 44]);
  });
});

describe('zoomAround', () => {
  it('keeps the image point under the cursor where it was', () => {
    const views: View[] = [
      { scale: 1, x: 0, y: 0 },
      { scale: 0.25, x: 300, y: -40 },
      { scale: 3.7, x: -5000, y: -900 },
    ];
    const anchors: [number, number][] = [[0, 0], [412, 233], [1439, 899]];
    for (const v of views) {
      for (const a of anchors) {
        for (const factor of [1.25, 0.8, 7, 0.01]) {
          const before = screenToImage(v, a);
          const next = zoomAround(v, a, factor);
          expect(next.scale).toBeCloseTo(v.scale * factor, 12);
          const after = screenToImage(next, a);
          expect(after[0]).toBeCloseTo(before[0], 6);
          expect(after[1]).toBeCloseTo(before[1], 6);
        }
      }
    }
  });

  it('clamps the scale but still keeps the anchor fixed', () => {
    const v: View = { scale: 2, x: 10, y: 20 };
    const next = zoomAround(v, [500, 300], 100, 0.1, 8);
    expect(next.scale).toBe(8);
    const a = screenToImage(v, [500, 300]);
    const b = screenToImage(next, [500, 300]);
    expect(b[0]).toBeCloseTo(a[0], 9);
    expect(b[1]).toBeCloseTo(a[1], 9);
  });

  it('a wheel notch up zooms in, down zooms out, and the two cancel', () => {
    expect(wheelZoomFactor(-100)).toBeGreaterThan(1);
    expect(wheelZoomFactor(100)).toBeLessThan(1);
    expect(wheelZoomFactor(-100) * wheelZoomFactor(100)).toBeCloseTo(1, 12);
  });

  it('one wheel notch is a gentle step (×1.1–1.2) whatever delta the browser reports for it', () => {
    // notch sizes seen from browsers: 3 lines, 53 px, 100 px, 120 px, 240 px, one page
    for (const px of [wheelPixels(3, 1), 53, 100, 120, 240, wheelPixels(1, 2)]) {
      expect(wheelZoomFactor(-px)).toBeGreaterThanOrEqual(1.1);
      expect(wheelZoomFactor(-px)).toBeLessThanOrEqual(1.2);
      expect(1 / wheelZoomFactor(px)).toBeGreaterThanOrEqual(1.1);
      expect(1 / wheelZoomFactor(px)).toBeLessThanOrEqual(1.2);
    }
    // six notches from 14 % stay far from 1,600 % (they reached it before)
    let scale = 0.14;
    for (let i = 0; i < 6; i++) scale *= wheelZoomFactor(-240);
    expect(scale).toBeLessThan(0.14 * 1.2 ** 6);
    expect(scale).toBeGreaterThan(0.14 * 1.1 ** 6);
  });

  it('trackpad scrolling zooms in proportion: a notch worth of pixels makes one notch', () => {
    let f = 1;
    for (let i = 0; i < 10; i++) f *= wheelZoomFactor(-5);
    expect(f).toBeCloseTo(wheelZoomFactor(-100), 9);
    expect(wheelZoomFactor(0)).toBe(1);
  });

  it('a trackpad pinch (ctrl + wheel) zooms with the fingers and keeps the point under the cursor fixed', () => {
    expect(wheelZoomFactor(-10, true)).toBeCloseTo(Math.exp(0.1), 12);
    expect(wheelZoomFactor(10, true) * wheelZoomFactor(-10, true)).toBeCloseTo(1, 12);
    expect(wheelZoomFactor(-1000, true)).toBeLessThan(1.7); // one event never jumps
    let v: View = { scale: 0.3, x: 40, y: -20, stretchY: 2.5 };
    const cursor = [612, 333];
    const under = screenToImage(v, cursor);
    for (const d of [-3, -8, -2, 5, -12, -6]) v = zoomAround(v, cursor, wheelZoomFactor(d, true), 0.05, 16);
    expect(v.scale).toBeGreaterThan(0.3);
    const after = screenToImage(v, cursor);
    expect(after[0]).toBeCloseTo(under[0], 9);
    expect(after[1]).toBeCloseTo(under[1], 9);
  });
});

describe('fit and pan limits', () => {
  it('fits a wide image to the box width and centres it vertically', () => {
    const v = fitView({ width: 3000, height: 1200 }, { width: 1000, height: 800 }, 20);
    expect(v.scale).toBeCloseTo(960 / 3000, 12);
    expect(v.x).toBeCloseTo(20, 9);
    const bottom = imageToScreen(v, [3000, 1200]);
    expect(v.y).toBeCloseTo(800 - bottom[1], 9); // equal margins above and below
  });

  it('never lets the image leave the box entirely', () => {
    const img = { width: 3000, height: 1200 };
    const box = { width: 800, height: 600 };
    const far = clampPan({ scale: 1, x: 99999, y: -99999 }, img, box, 80);
    expect(far.x).toBe(800 - 80);
    expect(far.y).toBe(80 - 1200);
    const inside = { scale: 1, x: -100, y: -50 };
    expect(clampPan(inside, img, box, 80)).toEqual(inside);
  });
});

describe('pyramid levels', () => {
  it('has Deep Zoom level sizes (halving, rounded up)', () => {
    // Deep Zoom layout as written by sharp's .tile() (libvips dzsave): level n is ceil(full / 2^(max − n)),
    // max = ceil(log2(max side)); checked against sharp's own output for a 3000 × 1200 image (8: 188 × 75).
    expect(deepZoomMaxLevel(3000, 1200)).toBe(12);
    expect(deepZoomMaxLevel(4096, 10)).toBe(12);
    expect(deepZoomMaxLevel(4097, 10)).toBe(13);
    expect(levelSize(pyr, 12)).toEqual({ width: 3000, height: 1200 });
    expect(levelSize(pyr, 11)).toEqual({ width: 1500, height: 600 });
    expect(levelSize(pyr, 10)).toEqual({ width: 750, height: 300 });
    expect(levelSize(pyr, 9)).toEqual({ width: 375, height: 150 });
    expect(levelSize(pyr, 8)).toEqual({ width: 188, height: 75 });
    expect(levelSize(pyr, 0)).toEqual({ width: 1, height: 1 });
    expect(levelGrid(pyr, 12)).toEqual({ cols: 12, rows: 5 });
    expect(levelGrid(pyr, 9)).toEqual({ cols: 2, rows: 1 });
  });

  it('picks the coarsest level that still gives one level pixel per device pixel', () => {
    expect(chooseLevel(pyr, 1)).toBe(12);
    expect(chooseLevel(pyr, 4)).toBe(12); // never past full resolution
    expect(chooseLevel(pyr, 0.5)).toBe(11);
    expect(chooseLevel(pyr, 0.3)).toBe(11); // 0.25 < 0.3 ≤ 0.5
    expect(chooseLevel(pyr, 0.25)).toBe(10);
    expect(chooseLevel(pyr, 0.26)).toBe(10); // within the slack: a hair over 0.25 stays on level 10
    expect(chooseLevel(pyr, 0.3, 2)).toBe(12); // 0.6 device px per image px needs full resolution
    expect(chooseLevel(pyr, 1e-9)).toBe(0);
    expect(chooseLevel({ ...pyr, minLevel: 8 }, 1e-3)).toBe(8);
    // Without slack: the chosen level has ≥ 1 level pixel per screen pixel, and the next coarser one would not.
    for (const s of [0.011, 0.07, 0.13, 0.49, 0.51, 0.9]) {
      const L = chooseLevel(pyr, s, 1, 0);
      expect(2 ** (L - pyr.maxLevel)).toBeGreaterThanOrEqual(s - 1e-12);
      if (L > pyr.minLevel) expect(2 ** (L - 1 - pyr.maxLevel)).toBeLessThan(s);
    }
  });

  it('lists only the tiles that intersect the view', () => {
    // Full resolution, 1:1, a 1000 × 500 box at the origin: columns 0–3 (0..1023 px), rows 0–1 (0..511 px).
    const rect = visibleRect({ scale: 1, x: 0, y: 0 }, { width: 1000, height: 500 });
    const r = visibleTileRange(pyr, 12, rect);
    expect(r).toMatchObject({ col0: 0, col1: 3, row0: 0, row1: 1, empty: false });
    expect(tileCount(r)).toBe(8);

    // Panned to image x 2000–3000 (past the right edge at 3000), y 1000–1500 (past the bottom).
    const r2 = visibleTileRange(pyr, 12, visibleRect({ scale: 1, x: -2000, y: -1000 }, { width: 1200, height: 500 }));
    expect(r2).toMatchObject({ col0: 7, col1: 11, row0: 3, row1: 4 });

    // Level 10 (factor 4): one tile spans 1024 image px; the whole image is 3 × 2 tiles.
    const whole = visibleTileRange(pyr, 10, { x0: -50, y0: -50, x1: 5000, y1: 5000 });
    expect(whole).toMatchObject({ col0: 0, col1: 2, row0: 0, row1: 1 });

    // A prefetch margin grows the range but stays inside the grid.
    const m = visibleTileRange(pyr, 12, { x0: 600, y0: 300, x1: 700, y1: 400 }, 1);
    expect(m).toMatchObject({ col0: 1, col1: 3, row0: 0, row1: 2 });

    // Looking beside the image: nothing to load.
    expect(visibleTileRange(pyr, 12, { x0: 3100, y0: 0, x1: 3500, y1: 400 }).empty).toBe(true);
    expect(tileCount(visibleTileRange(pyr, 12, { x0: -500, y0: -500, x1: -1, y1: -1 }))).toBe(0);
  });

  it('places tiles on their image-pixel footprint, overlap included', () => {
    expect(tilePlacement(pyr, 12, 0, 0)).toMatchObject({ x: 0, y: 0, width: 256, height: 256 });
    // Last column at full resolution: 3000 − 11·256 = 184 px wide; last row 1200 − 4·256 = 176 px.
    expect(tilePlacement(pyr, 12, 11, 4)).toMatchObject({ x: 2816, y: 1024, width: 184, height: 176 });
    // Level 10, factor 4: tile (2, 1) covers level px 512–750 × 256–300 → image 2048–3000 × 1024–1200.
    expect(tilePlacement(pyr, 10, 2, 1)).toMatchObject({ x: 2048, y: 1024, width: 952, height: 176 });
    // With a 1 px overlap an inner tile reaches one level pixel into each neighbour.
    const ov = { ...pyr, overlap: 1 };
    expect(tilePlacement(ov, 12, 1, 1)).toMatchObject({ x: 255, y: 255, width: 258, height: 258 });
    expect(tilePlacement(ov, 12, 0, 0)).toMatchObject({ x: 0, y: 0, width: 257, height: 257 });
    expect(tilePlacement(ov, 11, 1, 0)).toMatchObject({ x: 510, y: 0, width: 516, height: 514 });
    // Neighbouring tiles without overlap share their edge exactly: no gaps, no double cover.
    for (let c = 0; c < 11; c++) {
      const a = tilePlacement(pyr, 12, c, 2);
      const b = tilePlacement(pyr, 12, c + 1, 2);
      expect(a.x + a.width).toBe(b.x);
    }
    expect(parentTile(pyr, 12, 7, 3)).toEqual({ level: 11, col: 3, row: 1 });
    expect(parentTile(pyr, 0, 0, 0)).toBeNull();
  });
});

describe('useViewport', () => {
  it('fits on first size, zooms about the cursor and keeps the image in reach', () => {
    const vp = useViewport({ image: { width: 3000, height: 1200 }, maxScale: 8 });
    vp.setBox(1000, 600);
    expect(vp.ready.value).toBe(true);
    expect(vp.view.scale).toBeCloseTo(vp.fitScale.value, 12);

    const cursor: [number, number] = [700, 310];
    const under = vp.screenToImage(cursor);
    vp.zoomAt(cursor, 3);
    const after = vp.screenToImage(cursor);
    expect(after[0]).toBeCloseTo(under[0], 6);
    expect(after[1]).toBeCloseTo(under[1], 6);

    vp.zoomAt(cursor, 1e6);
    expect(vp.view.scale).toBe(8);
    vp.zoomAt(cursor, 1e-9);
    expect(vp.view.scale).toBeCloseTo(vp.minScale.value, 12);

    vp.fit();
    vp.panBy(1e6, 0);
    expect(vp.imageToScreen([0, 0])[0]).toBeLessThanOrEqual(1000 - 80 + 1e-9);
  });
});
