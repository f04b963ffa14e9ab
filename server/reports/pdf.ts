/**
 * The buildup report as PDF, built with pdfkit: title block, the marked-up
 * crop(s) (the crop as an image, the interpretation as vectors through
 * svg-to-pdfkit), buildup figures with P90/P50/P10, classification with its
 * evidence and drowning signs, the Ledger per cycle, the plots (the same
 * ECharts options as the page, rendered to SVG by ECharts' server-side
 * renderer and drawn as vectors), the velocity model and its sources, the
 * assumptions and the caution. A4 or US Letter, "Page n of N" on every page.
 *
 * Fonts: IBM Plex Sans from the app's own @fontsource package, every script
 * subset of it (pdf-fonts.ts), embedded as subsets; text is written in runs of
 * one subset each and broken into lines by pdf-fonts.ts (`writeRuns`, measured
 * with `heightOfRuns`), so names in Latin, Cyrillic, Greek or Vietnamese
 * letters print as typed. A few signs no subset has (≈, ≥, superscript
 * digits other than ¹²³) are spelled out (`pdfText`).
 */
import fs from 'node:fs';
import PDFDocument from 'pdfkit';
import SVGtoPDF from 'svg-to-pdfkit';
import * as echarts from 'echarts';
import { heightOfRuns, inAnySubset, registerFaces, textWidth, writeRuns, type Face, type RunOptions } from './pdf-fonts';
import { HOUSE_PALETTE } from '../../shared/palette';
import { reportPlots } from '../../shared/report/plots';
import {
  CYCLE_COLUMNS,
  PAPERS,
  buildupFigures,
  classLabel,
  columnHeader,
  columnValue,
  flankRanges,
  type BuildupReport,
  type Paper,
} from '../../shared/report/report';
import { formatNumber, formatScientific, SCIENTIFIC_FROM } from '../../shared/format';
import { lengthsInText, quantityLabel, toDisplayLength, type Quantity } from '../../shared/units';

export { pdfText } from './pdf-fonts';

/** A value of a quantity in the display unit, with its unit. */
export function formatValue(q: Quantity, v: number | null | undefined, unit: BuildupReport['unit'], decimals = 1): string {
  if (v == null || !Number.isFinite(v)) return '—';
  const label = quantityLabel(q, unit);
  if (q === 'ratio') return v === 0 ? '0' : formatNumber(v, Math.abs(v) < 1 ? 3 : 2);
  const text = (q === 'area' || q === 'volume') && Math.abs(v) >= SCIENTIFIC_FROM ? formatScientific(v) : formatNumber(v, q === 'area' || q === 'volume' ? 0 : decimals);
  return q === 'angle' ? `${text}°` : `${text} ${label}`;
}

export interface CropFigure {
  title: string;
  caption: string;
  /** The crop (JPEG or PNG), drawn `width` × `height` px. */
  image: Buffer;
  /** The overlay drawn over it, same size, no background. */
  overlay: string;
  width: number;
  height: number;
}

export interface PdfInput {
  report: BuildupReport;
  /**
   * The crops, or their promise: the document is begun (fonts, title block,
   * the plots rendered to SVG) while the crops are still being composited,
   * and waits for them only where they are drawn.
   */
  figures: CropFigure[] | PromiseLike<CropFigure[]>;
  paper: Paper;
  onProgress?: (fraction: number) => void;
}

const MARGIN = 48;
const INK = HOUSE_PALETTE.ink;
const MUTED = HOUSE_PALETTE.inkMuted;

/** The face the PDF draws an SVG text in: SemiBold for bold (600 and up, as svg-to-pdfkit reads font-weight), else Regular. */
const svgFace = (_family: string, bold: boolean): Face => (bold ? 'plex-semi' : 'plex');

/**
 * ECharts lays labels out (overlap, hidden labels, room for axis names) with
 * the widths of the font the PDF draws them in, read from a CSS font string
 * such as "normal normal 600 12px 'IBM Plex Sans'". Without it, ECharts on
 * the server guesses widths from a table of a generic sans-serif.
 */
export function measurePlotText(text: string, font?: string): { width: number } {
  const f = font ?? '';
  const size = Number(/(\d+(?:\.\d+)?)px/.exec(f)?.[1] ?? 12);
  const bold = /\b(bold|bolder|[6-9]00)\b/.test(f);
  // a character no subset has counts one em, as ECharts' own guess does: zrender takes the width of "国" for the line height
  let ems = 0;
  const drawn = [...(text ?? '')].filter((ch) => (inAnySubset(ch) ? true : (ems++, false))).join('');
  return { width: textWidth(svgFace('', bold), drawn, size) + ems * size };
}
echarts.setPlatformAPI({ measureText: measurePlotText as never });

/** Render one plot option to an SVG string (ECharts SSR). */
export function plotSvg(option: Record<string, unknown>, width: number, height: number): string {
  const chart = echarts.init(null, null, { renderer: 'svg', ssr: true, width, height });
  try {
    chart.setOption(option as echarts.EChartsOption);
    return chart.renderToSVGString();
  } finally {
    chart.dispose();
  }
}

/** Write the report PDF to `file`; resolves with its page count. */
export async function writeReportPdf(input: PdfInput, file: string): Promise<{ pages: number }> {
  const { report, paper } = input;
  const size = PAPERS[paper];
  const doc = new PDFDocument({
    size: [size.width, size.height],
    margins: { top: MARGIN, bottom: MARGIN + 14, left: MARGIN, right: MARGIN },
    bufferPages: true,
    info: {
      // metadata strings go into the PDF as UTF-16 (pdfkit), so names keep every character
      Title: `Buildup report: ${report.title.buildup}`,
      Subject: `${report.title.section} (${report.title.line}, ${report.title.survey})`,
      Creator: `Cayline ${report.title.caylineVersion}`,
      Producer: 'Cayline (pdfkit)',
    },
  });
  // every script subset of both weights, decompressed once per thread (pdf-fonts.ts, woff.ts)
  registerFaces(doc);
  doc.font('plex');
  /** Text in runs of one script subset each (user-typed names in any script the fonts cover). */
  const write = (face: Face, text: string, at: { x: number; y: number } | null, options: RunOptions = {}) => writeRuns(doc, face, text, at, options);
  // collected in memory (a few hundred KiB) and written once: pdfkit emits thousands of small chunks, and a file stream pays a thread-pool round trip for each
  const chunks: Buffer[] = [];
  doc.on('data', (c: Buffer) => chunks.push(c));
  const done = new Promise<void>((resolve, reject) => {
    doc.on('end', () => fs.promises.writeFile(file, Buffer.concat(chunks)).then(resolve, reject));
    doc.on('error', reject);
  });
  const W = size.width - 2 * MARGIN;
  const bottom = () => size.height - MARGIN - 14;
  const ensure = (h: number) => {
    if (doc.y + h > bottom()) doc.addPage();
  };
  const heading = (text: string, fontSize = 12) => {
    ensure(fontSize * 3);
    doc.moveDown(0.6).font('plex-semi').fontSize(fontSize).fillColor(INK);
    write('plex-semi', text, { x: MARGIN, y: doc.y }, { width: W });
    doc.moveDown(0.25);
  };
  const para = (text: string, opts: { fontSize?: number; colour?: string; bullet?: boolean } = {}) => {
    doc.font('plex').fontSize(opts.fontSize ?? 9).fillColor(opts.colour ?? INK);
    if (opts.bullet) {
      ensure(12);
      const y = doc.y;
      doc.text('•', MARGIN + 4, y, { width: 10 });
      write('plex', text, { x: MARGIN + 16, y }, { width: W - 16 });
    } else write('plex', text, { x: MARGIN, y: doc.y }, { width: W });
    doc.moveDown(0.2);
  };
  /** A simple table: header row, rows; column widths as fractions of the width. */
  const table = (headers: string[], rows: string[][], widths: number[], fontSize = 8) => {
    const xs: number[] = [];
    let x = MARGIN;
    for (const w of widths) {
      xs.push(x);
      x += w * W;
    }
    const rowHeight = (cells: string[], font: Face) => {
      doc.font(font).fontSize(fontSize);
      // measured in the same runs and lines as drawn, so a cell in several scripts fits its row
      return Math.max(...cells.map((c, i) => heightOfRuns(doc, font, c, { width: widths[i] * W - 4 }))) + 4;
    };
    const drawRow = (cells: string[], font: Face, fill: string | null) => {
      const h = rowHeight(cells, font);
      ensure(h);
      const y = doc.y;
      if (fill) doc.rect(MARGIN, y, W, h).fill(fill);
      doc.font(font).fontSize(fontSize).fillColor(INK);
      cells.forEach((c, i) => write(font, c, { x: xs[i] + 2, y: y + 2 }, { width: widths[i] * W - 4 }));
      doc.moveTo(MARGIN, y + h).lineTo(MARGIN + W, y + h).lineWidth(0.4).strokeColor(HOUSE_PALETTE.line).stroke();
      doc.y = y + h;
    };
    drawRow(headers, 'plex-semi', '#eef2f4');
    rows.forEach((r) => drawRow(r, 'plex', null));
    doc.x = MARGIN;
    doc.moveDown(0.4);
  };
  const progress = (f: number) => input.onProgress?.(f);

  // ---- title block
  const t = report.title;
  doc.font('plex-semi').fontSize(18).fillColor(INK);
  write('plex-semi', `Buildup report: ${t.buildup}`, { x: MARGIN, y: MARGIN }, { width: W });
  doc.font('plex').fontSize(9).fillColor(MUTED);
  write('plex', `${t.project} · ${t.section}`, null, { width: W });
  doc.moveDown(0.5);
  const signed = t.signedOffBy ? `${t.reviewStateLabel}, by ${t.signedOffBy}${t.signedOffAt ? ` on ${t.signedOffAt.slice(0, 10)}` : ''}${t.signedOffVersion != null ? ` (version ${t.signedOffVersion})` : ''}` : t.reviewStateLabel;
  table(
    ['Item', 'Value'],
    [
      ['Project', t.project],
      ['Section', t.section],
      ['Line', t.line || '—'],
      ['Survey', t.survey || '—'],
      ['Buildup', `${t.buildup} (version ${t.buildupVersion})`],
      ['Interpreter', t.interpreter ?? '—'],
      ['Review state', signed],
      ['Report date', t.date.slice(0, 10)],
      ['Cayline version', t.caylineVersion],
      ['Length unit', report.unit === 'ft' ? 'international foot (0.3048 m)' : 'metre'],
    ],
    [0.28, 0.72],
  );
  const m = report.measurement;
  doc.font('plex-semi').fontSize(13).fillColor(INK);
  write('plex-semi', `Classification: ${classLabel(m)}`, { x: MARGIN, y: doc.y }, { width: W });
  if (m) para(`Height ${formatValue('length', toDisplayLength(m.heightM, report.unit), report.unit)} · base width ${formatValue('length', toDisplayLength(m.baseWidthM, report.unit), report.unit)}`, { fontSize: 10 });
  progress(0.1);

  // the plots as SVG now (ECharts SSR, the largest share of the document's work), before waiting for the crops
  const plotW = Math.floor((W - 12) / 2);
  const plotH = 170;
  const plots = m ? reportPlots(m, report.unit, report.options?.aggradingToleranceDeg ?? 10).map((p) => plotSvg(p.option, plotW, plotH)) : [];
  const figures = await input.figures;

  if (report.missing.length) {
    heading('What is missing before this buildup can be measured');
    for (const item of report.missing) para(item, { bullet: true });
  }

  // ---- crops
  for (const f of figures) {
    heading(f.title);
    const maxH = Math.min(360, bottom() - MARGIN - 60);
    const scale = Math.min(W / f.width, maxH / f.height);
    const w = f.width * scale;
    const h = f.height * scale;
    ensure(h + 30);
    const y = doc.y;
    doc.image(f.image, MARGIN, y, { width: w, height: h });
    SVGtoPDF(doc, f.overlay, MARGIN, y, { width: w, height: h, fontCallback: svgFace, preserveAspectRatio: 'none' });
    doc.rect(MARGIN, y, w, h).lineWidth(0.5).strokeColor(MUTED).stroke();
    doc.x = MARGIN;
    doc.y = y + h + 4;
    para(f.caption, { fontSize: 8, colour: MUTED });
  }
  progress(0.3);

  if (m) {
    // ---- figures
    heading('Buildup figures');
    const figs = buildupFigures(m, report.unit);
    const ranged = !!m.ranges;
    table(
      ranged ? ['Figure', 'Value', 'P90 (low)', 'P50', 'P10 (high)'] : ['Figure', 'Value'],
      figs.map((r) => {
        const row = [r.label, formatValue(r.quantity, r.value, report.unit)];
        if (ranged) row.push(...(r.range ? [r.range.p90, r.range.p50, r.range.p10].map((v) => formatValue(r.quantity, v, report.unit)) : ['', '', '']));
        return row;
      }),
      ranged ? [0.36, 0.16, 0.16, 0.16, 0.16] : [0.5, 0.5],
    );
    const fr = flankRanges(m);
    if (fr.length) {
      table(
        ['Flank angle', 'P90 (low)', 'P50', 'P10 (high)'],
        fr.map((r) => [r.label, ...[r.p90, r.p50, r.p10].map((v) => formatValue('angle', v, report.unit))]),
        [0.4, 0.2, 0.2, 0.2],
      );
    }
    if (m.ranges) para(`Ranges from ${m.ranges.draws} seeded draws of the velocity ranges; P90 is the low value (90 % of draws at or above it), P10 the high one (SPE-PRMS convention).`, { fontSize: 8, colour: MUTED });
    para(m.volumeNote, { fontSize: 8, colour: MUTED });

    // ---- classification
    heading(`Classification: ${classLabel(m)}`);
    for (const e of m.evidence) para(lengthsInText(e, report.unit), { bullet: true });
    heading('Drowning signs', 10);
    if (m.drowningIndicators.length) for (const d of m.drowningIndicators) para(lengthsInText(d.text, report.unit), { bullet: true });
    else para('None found.', { colour: MUTED });
    if (m.asymmetry.hint) para(m.asymmetry.hint, { colour: MUTED });
    progress(0.4);

    // ---- Ledger
    heading('Ledger per cycle');
    const split = [CYCLE_COLUMNS.slice(0, 7), [CYCLE_COLUMNS[0], ...CYCLE_COLUMNS.slice(7)]];
    for (const cols of split) {
      table(
        cols.map((c) => columnHeader(c, report.unit)),
        m.cycles.map((c) =>
          cols.map((col) => {
            const v = columnValue(col, c, report.unit);
            if (v == null) return '—';
            if (typeof v === 'string') return v;
            return col.key === 'cycle' ? String(v) : formatNumber(v, col.decimals);
          }),
        ),
        cols.map(() => 1 / cols.length),
        7.5,
      );
    }
    progress(0.5);

    // ---- plots
    doc.addPage();
    heading('Plots');
    plots.forEach((svg, i) => {
      const col = i % 2;
      if (col === 0) ensure(plotH + 8);
      const y = doc.y;
      SVGtoPDF(doc, svg, MARGIN + col * (plotW + 12), y, { width: plotW, height: plotH, fontCallback: svgFace });
      if (col === 1 || i === plots.length - 1) doc.y = y + plotH + 8;
      else doc.y = y;
      doc.x = MARGIN;
      progress(0.5 + (0.3 * (i + 1)) / plots.length);
    });
  }

  // ---- velocity, assumptions, caution
  heading('Velocity model');
  para(report.velocity.description);
  if (report.velocity.sources.length) {
    para(report.velocity.isDefault ? 'Default model; its sources:' : 'Sources:', { colour: MUTED });
    for (const s of report.velocity.sources) para(s, { bullet: true, fontSize: 8 });
  }
  if (report.assumptions.length) {
    heading('Assumptions');
    for (const a of report.assumptions) para(a, { bullet: true, fontSize: 8.5 });
  }
  heading('Caution');
  ensure(40);
  const cy = doc.y;
  doc.font('plex').fontSize(9);
  const ch = heightOfRuns(doc, 'plex', report.caution, { width: W - 16 }) + 12;
  doc.rect(MARGIN, cy, W, ch).fill(HOUSE_PALETTE.sandSoft);
  doc.fillColor(INK);
  write('plex', report.caution, { x: MARGIN + 8, y: cy + 6 }, { width: W - 16 });
  doc.y = cy + ch;
  progress(0.9);

  // ---- page numbers
  const range = doc.bufferedPageRange();
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i);
    const keep = doc.page.margins.bottom;
    doc.page.margins.bottom = 0;
    doc.font('plex').fontSize(8).fillColor(MUTED);
    write('plex', `${t.buildup} · ${t.section}`, { x: MARGIN, y: size.height - MARGIN + 6 }, { width: W / 2, lineBreak: false });
    doc.text(`Page ${i - range.start + 1} of ${range.count}`, MARGIN + W / 2, size.height - MARGIN + 6, { width: W / 2, align: 'right', lineBreak: false });
    doc.page.margins.bottom = keep;
  }
  doc.end();
  await done;
  return { pages: range.count };
}
