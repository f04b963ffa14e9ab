/**
 * Pure helpers of the buildup report (shared/report/, server/reports/pdf.ts):
 * crop window and drawn size, VE wording, SVG escaping of the overlay, file
 * names, the CSV table's headers and units, and the PDF's text for signs
 * no font subset has.
 */
import { describe, expect, it } from 'vitest';
import { clampStretch, cropWindow, drawnSize, formatVE, overlaySvg, xmlEscape } from '../../../shared/report/overlay';
import { CYCLE_COLUMNS, columnHeader, exportFileName, slug } from '../../../shared/report/report';
import { trajectoryBands } from '../../../shared/report/plots';
import { pdfText } from '../../../server/reports/pdf';
import type { BuildupGeometry } from '../../../shared/editor/model';

const g: BuildupGeometry = {
  base: [
    [100, 400],
    [500, 400],
  ],
  cycles: [{ index: 1, top: [[150, 350], [300, 300], [450, 350]], marginLeft: [150, 350], marginRight: [450, 350] }],
  terminations: [{ type: 'onlap', at: [320, 302] }],
  topIsDrowningSurface: false,
};

describe('crop window and drawing size', () => {
  it('pads the traced geometry by 20 % (at least 24 px) and clamps to the image', () => {
    // geometry spans u 100–500 (400 px), v 300–400 (100 px): pads 80 px and 24 px
    expect(cropWindow(g, 2000, 1000)).toEqual({ u0: 20, v0: 276, width: 560, height: 148 });
    // clamped at the image's edges
    expect(cropWindow(g, 520, 410)).toEqual({ u0: 20, v0: 276, width: 500, height: 134 });
  });
  it('covers the whole image when nothing is traced', () => {
    expect(cropWindow({ base: [], cycles: [], terminations: [], topIsDrowningSurface: false }, 800, 300)).toEqual({ u0: 0, v0: 0, width: 800, height: 300 });
  });
  it('draws the stretch as the ratio of vertical to horizontal scale, narrowing under a height cap', () => {
    const s = drawnSize({ width: 500, height: 100 }, 2, 1000);
    expect(s).toEqual({ width: 1000, height: 400, sx: 2, sy: 4 });
    const capped = drawnSize({ width: 500, height: 100 }, 2, 1000, 200);
    expect(capped.sy / capped.sx).toBe(2);
    expect(capped.height).toBe(200);
    expect(capped.width).toBe(500);
  });
  it('clamps a stretch to the editor range and reads nonsense as 1', () => {
    expect(clampStretch(100)).toBe(8);
    expect(clampStretch(0.01)).toBe(0.25);
    expect(clampStretch('abc')).toBe(1);
    expect(clampStretch(-2)).toBe(1);
  });
  it('states the VE with two significant digits, or unknown', () => {
    expect(formatVE(2.449)).toBe('VE ≈ 2.4×');
    expect(formatVE(12.6)).toBe('VE ≈ 13×');
    expect(formatVE(null)).toBe('VE unknown');
  });
});

describe('overlay SVG', () => {
  it('escapes every text it writes', () => {
    expect(xmlEscape(`<a href="x">&'`)).toBe('&lt;a href=&quot;x&quot;&gt;&amp;&apos;');
    const svg = overlaySvg(g, { crop: { u0: 0, v0: 0, width: 600, height: 500 }, size: { width: 600, height: 500, sx: 1, sy: 1 }, caption: 'Knoll <script>alert(1)</script>' });
    expect(svg).not.toContain('<script>');
    expect(svg).toContain('Knoll &lt;script&gt;');
  });
  it('places points by the crop offset and scale, stamps with their initial', () => {
    const svg = overlaySvg(g, { crop: { u0: 100, v0: 300, width: 400, height: 100 }, size: { width: 800, height: 400, sx: 2, sy: 4 } });
    // the base from (100,400) to (500,400) → (0,400) to (800,400)
    expect(svg).toContain('points="0,400 800,400"');
    expect(svg).toMatch(/class="stamp"/);
    expect(svg).toMatch(/>O<\/text>/);
    expect((svg.match(/class="margin-pin"/g) ?? []).length).toBe(2);
  });
});

describe('file names and CSV headers', () => {
  it('slugs section and buildup into a safe file name', () => {
    expect(exportFileName('TB-11', 'Kestrel Knoll', 'csv')).toBe('tb-11-kestrel-knoll-cycles.csv');
    expect(exportFileName('TB-14', 'Marrow Bank', 'pdf', 'letter')).toBe('tb-14-marrow-bank-report-letter.pdf');
    expect(exportFileName('../../etc', 'Crête "Sud"/2', 'geojson')).toBe('etc-crete-sud-2.geojson');
    expect(slug('///')).toBe('untitled');
  });
  it('puts the unit in every header that has one', () => {
    const headers = (unit: 'm' | 'ft') => CYCLE_COLUMNS.map((c) => columnHeader(c, unit));
    expect(headers('ft')).toContain('Top width (ft)');
    expect(headers('ft')).toContain('Aggradation rate (ft/Myr)');
    expect(headers('m')).toContain('Left flank angle (°)');
    expect(headers('m')).toContain('Cycle');
  });
});

describe('trajectory class bands', () => {
  it('splits at 90° ± the tolerance (measurement contract §5)', () => {
    const b = trajectoryBands(10);
    expect(b.map((x) => x.name)).toEqual(['prograding', 'aggrading', 'backstepping']);
    expect(b[1].from).toBe(80);
    expect(b[1].to).toBe(100);
  });
});

describe('PDF text', () => {
  it('spells out signs no font subset has and keeps the ones a subset has', () => {
    expect(pdfText('1.2 × 10⁹ m³')).toBe('1.2 × 10^9 m³');
    expect(pdfText('VE ≈ 2×')).toBe('VE ~ 2×');
    expect(pdfText('surface → drowned')).toBe('surface -> drowned');
    expect(pdfText('tan θ')).toBe('tan θ');
    expect(pdfText('12.4° −3 m')).toBe('12.4° −3 m');
  });
});
