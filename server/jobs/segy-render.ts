/**
 * The pyramid job's SEG-Y side: a `segy` section's tiles are rendered from
 * its upload's stored amplitudes with the section's render settings (ramp,
 * clip percentile, AGC) instead of decoding an image. Runs inside the
 * section-pyramid job (pyramid.job.ts), so progress, ownership, crash
 * recovery and the atomic publish are the image pyramid's.
 */
import fsp from 'node:fs/promises';
import path from 'node:path';
import sharp from 'sharp';
import { Section } from '../models/section';
import { SegyUpload } from '../models/segy';
import { randomName, type FileStore } from '../storage/fileStore';
import { buildPyramidFromStrips, type PyramidResult } from '../services/tiles.service';
import { openRender, readSelection, segyKeys } from '../segy/section-data';
import { renderSettingsSchema } from '../../shared/schemas/segy';

export async function renderSegyPyramid(store: FileStore, section: Section, outDir: string, onProgress: (fraction: number) => void): Promise<PyramidResult> {
  const upload = await SegyUpload.findByPk(section.segyUploadId!);
  if (!upload) throw new Error('the SEG-Y upload of this section is gone');
  const selection = await readSelection(store, section.storageKey, section.segySelection?.kind !== 'line');
  const settings = renderSettingsSchema.parse(section.renderSettings ?? {});
  const y = upload.header.y;
  const src = await store.localCopy(segyKeys(upload.storageKey).amplitudes);
  try {
    const r = await openRender({
      amplitudesPath: src.path,
      ns: upload.samplesPerTrace,
      selection,
      width: section.width,
      settings,
      intervalMs: y.domain === 'time' ? y.step : null,
      onProgress: (f) => onProgress(f),
    });
    try {
      return await buildPyramidFromStrips(r.strips, outDir, { onProgress: (f) => onProgress(0.3 + 0.7 * f) });
    } finally {
      await r.close();
    }
  } finally {
    await src.release();
  }
}

/**
 * A SEG-Y section as one image file (uncompressed TIFF, rendered with its
 * current settings) in `workDir`, for jobs that resample the whole image
 * (the depth view, jobs/depth.job.ts) where an image section has its stored
 * original. Memory: the whole rendered image (width × height × channels
 * bytes, at most `upload.maxInputPixels` × 3) while sharp writes it.
 */
export async function segyImageCopy(store: FileStore, section: Section, workDir: string): Promise<{ path: string; release(): Promise<void> }> {
  const upload = await SegyUpload.findByPk(section.segyUploadId!);
  if (!upload) throw new Error('the SEG-Y upload of this section is gone');
  const selection = await readSelection(store, section.storageKey, section.segySelection?.kind !== 'line');
  const settings = renderSettingsSchema.parse(section.renderSettings ?? {});
  const y = upload.header.y;
  const src = await store.localCopy(segyKeys(upload.storageKey).amplitudes);
  const file = path.join(workDir, `segy-image-${randomName(6)}.tif`);
  try {
    const r = await openRender({ amplitudesPath: src.path, ns: upload.samplesPerTrace, selection, width: section.width, settings, intervalMs: y.domain === 'time' ? y.step : null });
    try {
      const { width, height, channels } = r.strips;
      const image = Buffer.allocUnsafe(width * height * channels);
      for (let row = 0; row < height; row += 512) {
        const rows = Math.min(512, height - row);
        (await r.strips.readStrip(row, rows)).copy(image, row * width * channels);
      }
      await sharp(image, { raw: { width, height, channels } }).toColourspace(channels === 1 ? 'b-w' : 'srgb').tiff({ compression: 'none' }).toFile(file);
    } finally {
      await r.close();
    }
  } finally {
    await src.release();
  }
  return { path: file, release: () => fsp.rm(file, { force: true }) };
}
