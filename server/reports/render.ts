/**
 * Everything a report job writes into its scratch folder: `report.pdf`,
 * `crop.png` (the marked-up crop) and `crop.svg` (the same crop embedded as
 * JPEG under the vector overlay). Runs inside the job, never in a request.
 */
import fsp from 'node:fs/promises';
import path from 'node:path';
import sharp from 'sharp';
import type { Buildup } from '../models/buildup';
import type { Section } from '../models/section';
import type { BuildupReportRow } from '../models/report';
import type { FileStore } from '../storage/fileStore';
import { assembleReport } from '../services/report.service';
import { measureBuildup } from '../services/buildup.service';
import { compositeCrop, markedUpPng } from './crop';
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
  const progress = input.onProgress ?? (() => {});
  const unit = isLengthUnit(row.unit) ? row.unit : 'm';
  const system = { id: row.requestedById ?? 0, role: 'admin' };
  const report = await assembleReport(buildup, section, () => measureBuildup(system, buildup.id), { unit, stretch: row.stretch });
  progress(0.1);
  const figures: CropFigure[] = [];
  if (report.crop) {
    const crop = report.crop;
    const views: { title: string; stretch: number }[] = [{ title: `Section around the buildup (vertical stretch ${Number(crop.stretch.toPrecision(3))}×, ${formatVE(crop.ve)})`, stretch: crop.stretch }];
    const ts = crop.trueScaleStretch;
    if (ts && Number.isFinite(ts) && Math.abs(ts / crop.stretch - 1) > 0.05) views.push({ title: 'The same crop at true scale (VE 1)', stretch: ts });
    for (const [i, v] of views.entries()) {
      const size = drawnSize(crop, v.stretch, CROP_DRAWN_WIDTH, CROP_MAX_HEIGHT);
      const png = await compositeCrop(store, section, crop, size);
      const ve = crop.intrinsicVE === null ? null : crop.intrinsicVE * v.stretch;
      const cap = caption(crop, v.stretch, ve, unit);
      const overlay = overlaySvg(report.geometry, { crop, size, measurement: report.measurement, notePins: report.notePins });
      // JPEG into the PDF: pdfkit copies its bytes as they are, where a PNG would be decoded and recompressed in JavaScript
      const jpeg = await sharp(png).jpeg({ quality: 88 }).toBuffer();
      figures.push({ title: v.title, caption: cap, image: jpeg, overlay, width: size.width, height: size.height });
      if (i === 0) {
        // the exports: the marked-up crop alone, with its VE stated on it
        const labelled = overlaySvg(report.geometry, { crop, size, measurement: report.measurement, notePins: report.notePins, caption: `${report.title.buildup} · ${formatVE(ve)} · stretch ${Number(v.stretch.toPrecision(3))}×` });
        await fsp.writeFile(path.join(outDir, 'crop.png'), await markedUpPng(png, labelled));
        const svg = overlaySvg(report.geometry, {
          crop,
          size,
          measurement: report.measurement,
          notePins: report.notePins,
          caption: `${report.title.buildup} · ${formatVE(ve)} · stretch ${Number(v.stretch.toPrecision(3))}×`,
          backgroundHref: `data:image/jpeg;base64,${jpeg.toString('base64')}`,
        });
        await fsp.writeFile(path.join(outDir, 'crop.svg'), `<?xml version="1.0" encoding="UTF-8"?>\n${svg}\n`);
      }
      progress(0.15 + 0.15 * (i + 1));
    }
  }
  const pdfPath = path.join(outDir, 'report.pdf');
  const { pages } = await writeReportPdfOffLoop({ report, figures, paper: row.paper as Paper, onProgress: (f) => progress(0.45 + 0.5 * f) }, pdfPath);
  const st = await fsp.stat(pdfPath);
  return { pdfBytes: st.size, pages };
}
