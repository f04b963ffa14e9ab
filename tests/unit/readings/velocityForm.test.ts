import { describe, expect, it } from 'vitest';
import type { VelocityModel } from '../../../shared/editor/model';
import { DEFAULT_VELOCITY } from '../../../shared/schemas/buildups';
import {
  addLayer,
  fromForm,
  modelHasRanges,
  removeLayer,
  sameModel,
  toForm,
  toggleRange,
  velocitySummary,
  type VelocityForm,
} from '../../../client/components/velocity/velocityForm';

const models: VelocityModel[] = [
  { kind: 'constant', v: 4000 },
  { kind: 'constant', v: { min: 3500, mode: 4000, max: 5000 } },
  { kind: 'layers', layers: [{ topMs: 0, v: 1500 }, { topMs: 800, v: { min: 2000, mode: 2200, max: 2600 } }, { topMs: 1400, v: 4500 }] },
  { kind: 'linear', v0: 1800, k: 0.6 },
  DEFAULT_VELOCITY as VelocityModel,
];

describe('velocity form conversions', () => {
  it('model → form → model gives the model back, for every kind', () => {
    for (const m of models) {
      const r = fromForm(toForm(m));
      expect(r.errors).toEqual({});
      expect(sameModel(r.model, m)).toBe(true);
    }
  });

  it('switching kind keeps the other kinds’ fields', () => {
    const f = toForm(models[2]);
    const asConstant: VelocityForm = { ...f, kind: 'constant' };
    expect(fromForm(asConstant).model).toEqual({ kind: 'constant', v: 4000 });
    expect(sameModel(fromForm({ ...asConstant, kind: 'layers' }).model, models[2])).toBe(true);
  });

  it('reports errors by field path from the shared schema', () => {
    const f = toForm(models[2]);
    f.layers[2] = { ...f.layers[2], topMs: 700 };
    f.layers[1] = { ...f.layers[1], v: { ...f.layers[1].v, mode: 1900 } };
    const r = fromForm(f);
    expect(r.model).toBeNull();
    expect(Object.keys(r.errors).sort()).toEqual(['layers[1].v.mode', 'layers[2].topMs']);
    expect(r.errors['layers[2].topMs']).toMatch(/tops ascend/);

    const b = toForm(DEFAULT_VELOCITY as VelocityModel);
    b.buildup.water.seafloorMs = null;
    b.buildup.carbonate.v = { ...b.buildup.carbonate.v, max: -1 };
    const rb = fromForm(b);
    expect(rb.errors['water.seafloorMs']).toBe('is required');
    expect(rb.errors['carbonate.v.max']).toMatch(/> 0/);

    const c = toForm({ kind: 'constant', v: 4000 });
    c.constant.v = { ...c.constant.v, value: null };
    expect(Object.keys(fromForm(c).errors)).toEqual(['v']);
  });

  it('toggleRange turns a value into a ±10 % range around it and back into the mode', () => {
    const single = toForm({ kind: 'constant', v: 4700 }).constant.v;
    const ranged = toggleRange(single);
    expect(ranged).toMatchObject({ ranged: true, min: 4230, mode: 4700, max: 5170 });
    expect(toggleRange({ ...ranged, mode: 4600 })).toMatchObject({ ranged: false, value: 4600 });
  });

  it('adds layers below with ascending tops and keeps the first top at 0 when removing', () => {
    const rows = toForm(models[2]).layers;
    const more = addLayer(rows);
    expect(more.map((l) => l.topMs)).toEqual([0, 800, 1400, 1600]);
    expect(new Set(more.map((l) => l.key)).size).toBe(4);
    const fewer = removeLayer(more, 0);
    expect(fewer.map((l) => l.topMs)).toEqual([0, 1400, 1600]);
    expect(removeLayer(fewer.slice(0, 1), 0)).toHaveLength(1);
    expect(fromForm({ ...toForm(models[2]), layers: fewer }).errors).toEqual({});
  });

  it('summarises a model in one line and tells whether it carries ranges', () => {
    expect(velocitySummary(DEFAULT_VELOCITY as VelocityModel)).toBe(
      'Buildup-aware: water 1500 to 0 ms · overburden 2000–2500 · carbonate 4000–5500 m/s',
    );
    expect(velocitySummary(models[2])).toBe('3 layers: 1500 from 0 ms · 2000–2600 from 800 ms · 4500 from 1400 ms (m/s)');
    expect(modelHasRanges(models[0])).toBe(false);
    expect(modelHasRanges(models[2])).toBe(true);
    expect(modelHasRanges(models[3])).toBe(false);
  });

  it('sameModel ignores key order', () => {
    expect(sameModel({ kind: 'linear', v0: 1800, k: 0.6 }, { k: 0.6, v0: 1800, kind: 'linear' } as VelocityModel)).toBe(true);
    expect(sameModel({ kind: 'linear', v0: 1800, k: 0.6 }, { kind: 'linear', v0: 1800, k: 0.5 })).toBe(false);
  });
});
