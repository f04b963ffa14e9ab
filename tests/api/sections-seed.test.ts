/** Demo seeding of the two synthetic Tessel Basin sections: once, as the interpreter, calibrated, tiled. */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { waitForStatus } from '../helpers/sections';
import { seedDemoSections } from '../../server/db/seeders/sections';
import { DEMO_SECTIONS } from '../../server/scripts/synth/demo';
import { ctx } from '../../server/context';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => t?.close());

describe('demo sections seeder', () => {
  it('stores both sections once, with their ties as calibration version 1, and builds their tiles', async () => {
    const deps = { sequelize: ctx().sequelize, config: t.running.config, log: () => {} };
    const first = await seedDemoSections(deps, { width: 1200, height: 500 });
    expect(first.seeded).toHaveLength(DEMO_SECTIONS.length);
    expect((await seedDemoSections(deps, { width: 1200, height: 500 })).seeded).toEqual([]);

    const token = await t.token('reviewer');
    for (const [i, id] of first.seeded.entries()) {
      const def = DEMO_SECTIONS[i];
      const s = await waitForStatus(t, token, id);
      expect(s).toMatchObject({ status: 'ready', title: def.title, lineName: def.lineName, survey: 'TB-2024', width: 1200, height: 500 });
      expect(s.uploadedBy.name).toBe('Ivo Marlstone');
      expect(s.polarityNote).toMatch(/^Polarity:/);
      expect(s.calibration.version).toBe(1);
      expect(s.calibration.ties).toHaveLength(4);
      expect(s.calibration.fit.rmsPx).toBeLessThan(0.01); // the synthetic ties lie on an exact linear map (rounded to 1e-3)
      // the line's end coordinates were chosen to match the modelled x range: no mismatch warning
      expect(s.calibration.lengthMismatch).toBeNull();
      expect(s.lineLengthM).toBeGreaterThan(0);
    }
    const list = await request(t.app).get(`/api/projects/${(await request(t.app).get(`/api/sections/${first.seeded[0]}`).set(bearer(token))).body.projectId}/sections`).set(bearer(token));
    expect(list.body.items.map((s: { lineName: string }) => s.lineName).sort()).toEqual(['TB-11', 'TB-14']);
  });
});
