/**
 * The pyramid job's SEG-Y side: a `segy` section's tiles are rendered from
 * its upload's stored amplitudes with the section's render settings (ramp,
 * clip percentile, AGC) instead of decoding an image. Runs inside the
 * section-pyramid job (pyramid.job.ts), so progress, ownership, crash
 * recovery and the atomic publish are the image pyramid's.
 */
import { Section } from '../models/section';
import { SegyUpload } from '../models/segy';
import type { FileStore } from '../storage/fileStore';
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
