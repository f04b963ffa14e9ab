/**
 * Demo sections, seeded once (app_meta `demo_sections_seeded`): the two
 * synthetic sections of the invented Tessel Basin (server/synth),
 * stored in the project "Tessel Basin screening" as uploaded by the demo
 * interpreter, with their ties as calibration version 1, and their pyramids
 * queued like any upload.
 */
import fs from 'node:fs/promises';
import path from 'node:path';
import { AppMeta, Project, User } from '../../models/index';
import { Section } from '../../models/section';
import { storeNewSection } from '../../services/section.service';
import { fileStoreFor } from '../../storage/fileStore';
import { DEMO_SECTIONS, generateSection } from '../../synth/demo';
import { DEMO_PROJECT } from './demo';
import type { SeedDeps } from './types';
import type { CreateSectionFields } from '../../../shared/schemas/sections';

export const SECTIONS_SEED_KEY = 'demo_sections_seeded';

export async function seedDemoSections(deps: SeedDeps, opts: { width?: number; height?: number } = {}): Promise<{ seeded: number[] }> {
  if (await AppMeta.findByPk(SECTIONS_SEED_KEY)) return { seeded: [] };
  const project = await Project.findOne({ where: { name: DEMO_PROJECT.name } });
  const interpreter = await User.findOne({ where: { email: 'interpreter@tessel.example' } });
  if (!project || !interpreter) return { seeded: [] };
  const seeded: number[] = [];
  const scratch = await fileStoreFor(deps.config.storageDir).scratchDir('seed');
  try {
    for (const def of DEMO_SECTIONS) {
      // a half-finished earlier run may have stored some already
      if (await Section.findOne({ where: { projectId: project.id, title: def.title } })) continue;
      const g = await generateSection(def, opts);
      const file = path.join(scratch, `${def.key}.png`);
      await fs.writeFile(file, g.png);
      const polarity = /Polarity:.*$/s.exec(def.notes)?.[0] ?? '';
      const fields: CreateSectionFields = {
        title: def.title,
        lineName: def.lineName,
        survey: def.survey,
        verticalDomain: def.verticalDomain,
        notes: def.notes,
        polarityNote: polarity,
        startLon: def.lineStart.lon,
        startLat: def.lineStart.lat,
        endLon: def.lineEnd.lon,
        endLat: def.lineEnd.lat,
      };
      const s = await storeNewSection(interpreter.id, project.id, fields, file, { ties: g.ties });
      seeded.push(s.id);
    }
    await AppMeta.create({ key: SECTIONS_SEED_KEY, value: { at: new Date().toISOString(), sections: seeded } });
  } finally {
    await fs.rm(scratch, { recursive: true, force: true });
  }
  return { seeded };
}
