/**
 * The demo SEG-Y line, seeded once (app_meta `demo_segy_seeded`): TB-11
 * written as SEG-Y (server/synth/segy.ts) and stored through the same path as
 * an upload (ingest, then `createFromUpload`), so the demo project has a line
 * that calibrates itself from its trace headers, with true amplitudes and a
 * header viewer. Rendered with Cayline's diverging ramp.
 */
import fs from 'node:fs/promises';
import { AppMeta, Project, User } from '../../models/index';
import { Section } from '../../models/section';
import { createFromUpload } from '../../services/segy.service';
import { ingestSegy } from '../../segy/ingest';
import { fileStoreFor } from '../../storage/fileStore';
import { DEMO_SECTIONS } from '../../synth/demo';
import { demoSegy, type DemoSegyOptions } from '../../synth/segy';
import { DEMO_PROJECT } from './demo';
import type { SeedDeps } from './types';
import { segyUploadSchema } from '../../../shared/schemas/segy';

export const SEGY_SEED_KEY = 'demo_segy_seeded';
export const DEMO_SEGY_TITLE = 'TB-11 · Kestrel Knoll (SEG-Y)';

async function* chunks(b: Buffer, size = 1 << 20) {
  for (let i = 0; i < b.length; i += size) yield b.subarray(i, i + size);
}

export async function seedDemoSegy(deps: SeedDeps, opts: DemoSegyOptions = {}): Promise<{ sectionId: number | null }> {
  if (await AppMeta.findByPk(SEGY_SEED_KEY)) return { sectionId: null };
  const project = await Project.findOne({ where: { name: DEMO_PROJECT.name } });
  const interpreter = await User.findOne({ where: { email: 'interpreter@tessel.example' } });
  if (!project || !interpreter) return { sectionId: null };
  if (await Section.findOne({ where: { projectId: project.id, title: DEMO_SEGY_TITLE } })) {
    await AppMeta.create({ key: SEGY_SEED_KEY, value: { at: new Date().toISOString() } });
    return { sectionId: null };
  }
  const def = DEMO_SECTIONS[0];
  const made = demoSegy(def, opts);
  const dir = await fileStoreFor(deps.config.storageDir).scratchDir('seed-segy');
  try {
    const ingest = await ingestSegy(chunks(made.bytes), dir, { fileSize: made.bytes.length });
    const fields = segyUploadSchema.parse({
      title: DEMO_SEGY_TITLE,
      lineName: def.lineName,
      survey: def.survey,
      notes:
        `The demo line ${def.lineName} as a SEG-Y file (invented Tessel Basin; synthetic, not real data): ${made.traces} traces ${made.dxM} m apart, ` +
        `${made.samples} samples of ${made.dtMs} ms. It needs no Ties: distance and time come from its trace headers.`,
      polarityNote: 'Polarity: an increase of acoustic impedance downward is a positive amplitude (brown in the diverging ramp).',
      epsg: made.epsg,
      ramp: 'diverging',
      clipPercentile: 95, // the strong seafloor and buildup top would wash the weaker fill reflectors out at 99
    });
    const r = await createFromUpload({ id: interpreter.id, role: interpreter.role }, project.id, {
      dir, size: made.bytes.length, originalname: `${def.lineName.toLowerCase()}-demo.sgy`, ingest, fields,
    });
    await AppMeta.create({ key: SEGY_SEED_KEY, value: { at: new Date().toISOString(), section: r.section?.id ?? null } });
    return { sectionId: r.section?.id ?? null };
  } finally {
    await fs.rm(dir, { recursive: true, force: true });
  }
}
