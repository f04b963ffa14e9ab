/** Demo seeding of the two synthetic Tessel Basin sections: once, as the interpreter, calibrated, tiled. */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, bearer, type TestApp } from '../helpers/app';
import { waitForStatus } from '../helpers/sections';
import { seedDemoSections } from '../../server/db/seeders/sections';
import { DEMO_SECTIONS } from '../../server/synth/demo';
import { ctx } from '../../server/context';
import { seedDemoInterpretation } from '../../server/db/seeders/interpretations';
import { DEMO_SEGY_TITLE, seedDemoSegy } from '../../server/db/seeders/segy';

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

  it('gives the demo sections velocity ranges and traces the aggrading bank on TB-14', async () => {
    const deps = { sequelize: ctx().sequelize, config: t.running.config, log: () => {} };
    expect(await seedDemoInterpretation(deps)).toBe(true);
    expect(await seedDemoInterpretation(deps)).toBe(false);
    const token = await t.token('interpreter');
    const projects = await request(t.app).get('/api/projects').set(bearer(token));
    const demo = projects.body.items.find((p: { name: string }) => p.name === 'Tessel Basin screening');
    const sections = (await request(t.app).get(`/api/projects/${demo.id}/sections`).set(bearer(token))).body.items;
    const tb14 = sections.find((s: { lineName: string }) => s.lineName === 'TB-14');
    const tb11 = sections.find((s: { lineName: string }) => s.lineName === 'TB-11');
    const v = (await request(t.app).get(`/api/sections/${tb14.id}/velocity`).set(bearer(token))).body;
    expect(v.isDefault).toBe(false);
    expect(v.velocity.carbonate.v).toMatchObject({ mode: expect.any(Number), min: expect.any(Number), max: expect.any(Number) });
    const bank = (await request(t.app).get(`/api/sections/${tb14.id}/buildups`).set(bearer(token))).body;
    expect(bank.map((b: { name: string }) => b.name)).toEqual(['Marrow Bank']);
    expect((await request(t.app).get(`/api/sections/${tb11.id}/buildups`).set(bearer(token))).body).toEqual([]);
    const m = await request(t.app).get(`/api/buildups/${bank[0].id}/measurements?draws=200`).set(bearer(token));
    expect(m.status).toBe(200);
    // The generator built Marrow Bank as an aggrading bank (server/synth/demo.ts).
    expect(m.body.buildups[0].classification).toBe('aggrading');
    const h = m.body.buildups[0].ranges.heightM;
    expect(h.p90).toBeLessThanOrEqual(h.p50);
    expect(h.p50).toBeLessThanOrEqual(h.p10);
  });

  it('adds TB-11 as a SEG-Y line once: calibrated from its headers (no Ties), amplitudes readable, rendered with the diverging ramp', async () => {
    const deps = { sequelize: ctx().sequelize, config: t.running.config, log: () => {} };
    const { sectionId } = await seedDemoSegy(deps, { traces: 400, samples: 250 });
    expect(sectionId).not.toBeNull();
    expect((await seedDemoSegy(deps, { traces: 400, samples: 250 })).sectionId).toBeNull();
    const token = await t.token('reviewer');
    const s = await waitForStatus(t, token, sectionId!);
    expect(s).toMatchObject({ status: 'ready', title: DEMO_SEGY_TITLE, lineName: 'TB-11', sourceFormat: 'segy', width: 400, height: 250 });
    expect(s.segy.render).toMatchObject({ ramp: 'diverging', clipPercentile: 95 });
    expect(s.calibration.source).toBe('segy_headers');
    // 400 traces 40 m apart: the calibrated width is 399–400 traces' worth, and the line from the first to the last
    // CDP (UTM zone 41 S back to WGS 84, great circle) 399 × 40 m within the UTM scale factor (0.9996 on the central meridian)
    expect(s.calibration.calibratedXRangeM).toBeGreaterThanOrEqual(399 * 40 - 1);
    expect(s.calibration.calibratedXRangeM).toBeLessThanOrEqual(400 * 40 + 1);
    expect(Math.abs(s.lineLengthM - 399 * 40)).toBeLessThan(0.002 * 399 * 40);
    expect(s.calibration.lengthMismatch).toBeNull();
    const a = await request(t.app).get(`/api/sections/${sectionId}/amplitudes?trace=200&sample=100&traces=1&samples=50`).set(bearer(token));
    expect(a.status, JSON.stringify(a.body)).toBe(200);
    expect(a.body.values.flat().some((v: number) => v !== 0)).toBe(true);
  });
});
