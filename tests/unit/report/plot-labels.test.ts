/**
 * The report PDF's plots (ECharts server-side SVG, drawn by svg-to-pdfkit in
 * IBM Plex Sans): ECharts lays the labels out with the widths of the font
 * the PDF draws them in (server/reports/pdf.ts `measurePlotText`), so on a
 * plot as narrow as the PDF's no two axis labels overlap. Widths are checked
 * against pdfkit's own text measure (`widthOfString`) of the same font.
 * Numbers are invented.
 */
import fs from 'node:fs';
import path from 'node:path';
import PDFDocument from 'pdfkit';
import { describe, expect, it } from 'vitest';
import { measurePlotText, plotSvg } from '../../../server/reports/pdf';
import { registerFaces } from '../../../server/reports/pdf-fonts';
import { reportPlots } from '../../../shared/report/plots';
import type { BuildupMeasurement } from '../../../shared/measure/index';

const FIXTURE = path.join(__dirname, '..', '..', 'fixtures', 'measure', 'out', 'bank-depth.json');

/** A measured bank with its margins moved to 5.4 and 11 km along the line: a 1 000 m tick gives seven labels, "6 000" to "11 000", on a narrow plot. */
function wideBank(): BuildupMeasurement {
  const b = JSON.parse(fs.readFileSync(FIXTURE, 'utf8')).buildups[0] as BuildupMeasurement;
  return {
    ...b,
    cycles: b.cycles.map((c, i) => ({ ...c, marginLeft: [5400 + 20 * i, c.marginLeft[1]], marginRight: [11000 - 20 * i, c.marginRight[1]] })),
  } as BuildupMeasurement;
}

/** The x-axis tick labels of an ECharts SVG: text, centre x, and the row they sit on. */
function xLabels(svg: string) {
  const out: { text: string; x: number; y: number; size: number }[] = [];
  for (const m of svg.matchAll(/<text[^>]*text-anchor="middle"[^>]*style="font-size:(\d+)px[^"]*"[^>]*y="5" transform="translate\(([\d.]+) ([\d.]+)\)"[^>]*>([^<]*)<\/text>/g)) {
    out.push({ size: Number(m[1]), x: Number(m[2]), y: Number(m[3]), text: m[4] });
  }
  // the axis name sits lower than the tick labels; keep the row with most labels
  const rows = new Map<number, typeof out>();
  for (const l of out) rows.set(l.y, [...(rows.get(l.y) ?? []), l]);
  return [...rows.values()].sort((a, b) => b.length - a.length)[0] ?? [];
}

describe('plot labels in the PDF', () => {
  it('measures text as pdfkit does in the same face and size', () => {
    const doc = new PDFDocument({ size: 'A4' });
    registerFaces(doc);
    for (const [text, face, size, css] of [
      ['10 500', 'plex', 10, "10px 'IBM Plex Sans'"],
      ['Margin trajectory', 'plex-semi', 12, "normal normal 600 12px 'IBM Plex Sans'"],
      ['depth (m)', 'plex', 10, "normal normal normal 10px 'IBM Plex Sans'"],
    ] as const) {
      doc.font(face).fontSize(size);
      expect(measurePlotText(text, css).width, text).toBeCloseTo(doc.widthOfString(text), 6);
    }
  });

  it('leaves no two x-axis labels of the margin trajectory overlapping on a plot as narrow as the PDF’s', () => {
    const plot = reportPlots(wideBank(), 'm', 10)[0];
    for (const width of [245, 200, 320]) {
      const labels = xLabels(plotSvg(plot.option, width, 170));
      expect(labels.length, `width ${width}`).toBeGreaterThanOrEqual(2);
      const spans = labels.map((l) => {
        const w = measurePlotText(l.text, `${l.size}px 'IBM Plex Sans'`).width;
        return [l.x - w / 2, l.x + w / 2] as const;
      });
      spans.sort((a, b) => a[0] - b[0]);
      for (let i = 1; i < spans.length; i++) expect(spans[i][0], `width ${width}: ${labels.map((l) => l.text).join(' | ')}`).toBeGreaterThan(spans[i - 1][1]);
    }
  });
});
