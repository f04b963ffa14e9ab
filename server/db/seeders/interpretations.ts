/**
 * Demo interpretation, seeded once (app_meta `demo_interpretation_seeded`)
 * after the demo sections: each synthetic section gets a velocity model with
 * ranges around the velocities its image was generated with, and line TB-14
 * gets its aggrading bank "Marrow Bank" traced from the true geometry, so the
 * Readings have something to show. Kestrel Knoll on TB-11 is left for the
 * user to trace.
 */
import { AppMeta, Project, User } from '../../models/index';
import { Section } from '../../models/section';
import { Buildup, SectionVelocity } from '../../models/buildup';
import { DEMO_SECTIONS, sectionGeometry } from '../../synth/demo';
import { DEMO_PROJECT } from './demo';
import type { SeedDeps } from './types';
import { recordVersion } from '../../services/review.service';
import type { BuildupGeometry } from '../../../shared/editor/model';

export const INTERPRETATION_SEED_KEY = 'demo_interpretation_seeded';

/** ±`frac` triangular range around a generator velocity (demo assumption, invented). */
function around(v: number, frac: number) {
  const r = (x: number) => Math.round(x / 10) * 10;
  return { min: r(v * (1 - frac)), mode: v, max: r(v * (1 + frac)) };
}

export async function seedDemoInterpretation(_deps: SeedDeps): Promise<boolean> {
  if (await AppMeta.findByPk(INTERPRETATION_SEED_KEY)) return false;
  const project = await Project.findOne({ where: { name: DEMO_PROJECT.name } });
  const interpreter = await User.findOne({ where: { email: 'interpreter@tessel.example' } });
  if (!project || !interpreter) return false;
  for (const def of DEMO_SECTIONS) {
    const section = await Section.findOne({ where: { projectId: project.id, title: def.title } });
    if (!section) continue;
    const g = sectionGeometry(def, { width: section.width, height: section.height });
    const v = g.interpretation.velocity as { kind: string; water: { v: number; seafloorMs: number }; overburden: { v: number }; carbonate: { v: number } };
    await SectionVelocity.upsert({
      sectionId: section.id,
      model: {
        kind: 'buildup',
        water: { v: v.water.v, seafloorMs: v.water.seafloorMs },
        overburden: { v: around(v.overburden.v, 0.08) },
        carbonate: { v: around(v.carbonate.v, 0.1) },
      },
      updatedById: interpreter.id,
      updatedAt: new Date(),
    });
    if (def.key === 'tb-14-marrow-bank') {
      const b = g.pixelGeometry.buildups[0] as unknown as BuildupGeometry & { name: string };
      const geometry: BuildupGeometry = {
        base: b.base,
        cycles: b.cycles.map((c) => ({ ...c, systemsTract: null })),
        terminations: b.terminations,
        topIsDrowningSurface: b.topIsDrowningSurface,
      };
      if (!(await Buildup.findOne({ where: { sectionId: section.id } }))) {
        const created = await Buildup.create({ sectionId: section.id, name: b.name, geometry, createdById: interpreter.id, updatedById: interpreter.id });
        await recordVersion(created, interpreter.id); // its first kept version (review)
      }
    }
  }
  await AppMeta.create({ key: INTERPRETATION_SEED_KEY, value: { at: new Date().toISOString() } });
  return true;
}
