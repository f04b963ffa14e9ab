/**
 * Everything a report job writes into its scratch folder: `report.pdf`,
 * `crop.png` (the marked-up crop) and `crop.svg` (the same crop embedded as
 * JPEG under the vector overlay). Runs inside the job, never in a request.
 */
import fsp from 'node:fs/promises';
import path from 'node:path';
import type { Buildup } from '../models/buildup';
import type { Section } from '../models/section';
import type { BuildupReportRow } from '../models/report';
import type { FileStore } from '../storage/fileStore';
import { assembleReport } from '../services/report.service';
import { measureBuildup } from '../services/buildup.service';
import { compositeCrop, fromRaw, markedUpPng } from './crop';
import type { CropFigure } from './pdf';
import { writeReportPdfOffLoop } from './pdf-thread';
import { drawnSize, formatVE, overlaySvg } from '../../shared/report/overlay';
import { isLengthUnit } from '../../shared/units';
import type { Paper, ReportCrop } from '../../shared/report/report';

/** Drawn width of the crop (px); the PDF scales it into the page. */
export const CROP_DRAWN_WIDTH = 1400;
const CROP_MAX_HEIGHT = 1400;

export interface RenderInput {
  buildup: Buildup;
  section: Section;
  row: BuildupReportRow;
  store: FileStore;
  outDir: string;
  onProgress?: (fraction: number) => void;
}

function caption(crop: ReportCrop, stretch: number, ve: number | null, unit: string) {
  return `Crop u ${crop.u0}–${crop.u0 + crop.width} px, v ${crop.v0}–${crop.v0 + crop.height} px · vertical stretch ${Number(stretch.toPrecision(3))}× · ${formatVE(ve)} at the crest · lengths in ${unit}`;
}

/**
 * The report of `row`'s buildup with its choices. The measurement comes from
 * the same cache as GET /measurements; the job reads it as an admin would
 * (access was checked when the report was asked for).
 */
export async function renderReportFiles(input: RenderInput): Promise<{ pdfBytes: number; pages: number }> {
  const { buildup, section, row, store, outDir } = input;
  let shown = 0; // the crops and the PDF thread report alongside each other: the bar only moves forward
  const progress = (f: number) => {
    if (f > shown) input.onProgress?.((shown = f));
  };
  const unit = isLengthUnit(row.unit) ? row.unit : 'm';
  const system = { id: row.requestedById ?? 0, role: 'admin' };
  const report = await assembleReport(buildup, section, () => measureBuildup(system, buildup.id), { unit, stretch: row.stretch });
  progress(0.1);
  let exportsWritten: Promise<unknown> = Promise.resolve(); // the crop exports, written while the PDF is built
  const crop = report.crop;
  const views: { title: string; stretch: number }[] = [];
  if (crop) {
    views.push({ title: `Section around the buildup (vertical stretch ${Number(crop.stretch.toPrecision(3))}×, ${formatVE(crop.ve)})`, stretch: crop.stretch });
    const ts = crop.trueScaleStretch;
    if (ts && Number.isFinite(ts) && Math.abs(ts / crop.stretch - 1) > 0.05) views.push({ title: 'The same crop at true scale (VE 1)', stretch: ts });
  }
  // the views in parallel: sharp's work runs on libuv's threads, off the event loop, while the PDF thread
  // begins the document (fonts, title block, the plots as SVG) and waits for them where they are drawn
  let done = 0;
  const figures: Promise<CropFigure[]> = Promise.all(
    views.map(async (v, i) => {
      const c = crop!;
      const size = drawnSize(c, v.stretch, CROP_DRAWN_WIDTH, CROP_MAX_HEIGHT);
      const pixels = await compositeCrop(store, section, c, size);
      const ve = c.intrinsicVE === null ? null : c.intrinsicVE * v.stretch;
      const cap = caption(c, v.stretch, ve, unit);
      const overlay = overlaySvg(report.geometry, { crop: c, size, measurement: report.measurement, notePins: report.notePins });
      // JPEG into the PDF: pdfkit copies its bytes as they are, where a PNG would be decoded and recompressed in JavaScript
      const jpeg = await fromRaw(pixels).jpeg({ quality: 88 }).toBuffer();
      if (i === 0) {
        // the exports: the marked-up crop alone, with its VE stated on it
        const label = `${report.title.buildup} · ${formatVE(ve)} · stretch ${Number(v.stretch.toPrecision(3))}×`;
        const labelled = overlaySvg(report.geometry, { crop: c, size, measurement: report.measurement, notePins: report.notePins, caption: label });
        const svg = overlaySvg(report.geometry, {
          crop: c,
          size,
          measurement: report.measurement,
          notePins: report.notePins,
          caption: label,
          backgroundHref: `data:image/jpeg;base64,${jpeg.toString('base64')}`,
        });
        exportsWritten = Promise.all([
          markedUpPng(pixels, labelled).then((png) => fsp.writeFile(path.join(outDir, 'crop.png'), png)),
          fsp.writeFile(path.join(outDir, 'crop.svg'), `<?xml version="1.0" encoding="UTF-8"?>\n${svg}\n`),
        ]);
        exportsWritten.catch(() => {}); // awaited below, once the crops are made
      }
      progress(0.15 + 0.3 * (++done / views.length));
      return { title: v.title, caption: cap, image: jpeg, overlay, width: size.width, height: size.height } satisfies CropFigure;
    }),
  );
  const pdfPath = path.join(outDir, 'report.pdf');
  const pdf = writeReportPdfOffLoop({ report, figures, paper: row.paper as Paper, onProgress: (f) => progress(0.45 + 0.5 * f) }, pdfPath);
  pdf.catch(() => {}); // a failed crop fails the PDF too: the crop's own error is the one thrown
  await figures;
  const [{ pages }] = await Promise.all([pdf, exportsWritten]);
  const st = await fsp.stat(pdfPath);
  return { pdfBytes: st.size, pages };
}
