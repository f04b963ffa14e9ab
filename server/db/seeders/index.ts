/** Everything `npm start` seeds on first start; each part records itself in app_meta and runs once. */
import type { SeedDeps } from './types';
import { seedDemoUsers } from './demo';
import { seedDemoSections } from './sections';
import { seedDemoInterpretation } from './interpretations';
import { seedDemoAnalogues } from './analogues';
import { seedDemoSegy } from './segy';

export type { SeedDeps } from './types';

export async function seedDemo(deps: SeedDeps) {
  const r = await seedDemoUsers(deps.sequelize);
  if (r.seeded) deps.log('seeded the demo accounts and the project "Tessel Basin screening"');
  if ((await seedDemoSections(deps)).seeded.length) deps.log('seeded the demo sections TB-11 and TB-14 (tiles are being built in the background)');
  if ((await seedDemoSegy(deps)).sectionId !== null) deps.log('seeded the demo SEG-Y line (TB-11 as SEG-Y, calibrated from its headers)');
  if (await seedDemoInterpretation(deps)) deps.log('seeded velocity models for the demo sections and the traced bank on TB-14');
  const analogues = await seedDemoAnalogues(deps.sequelize);
  if (analogues) deps.log(`seeded ${analogues} invented demo analogues in the Analogue library`);
}
