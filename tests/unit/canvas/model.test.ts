import { describe, expect, it } from 'vitest';
import {
  ModelError,
  fromGeometry,
  isMeasurable,
  measurabilityIssues,
  reconcileSelection,
  toGeometry,
  toInterpretationInput,
  toSavePayload,
  type BuildupRecord,
  type MeasureContext,
  type Selection,
} from '../../../client/canvas/model';
import { deepFreeze, fixtureState, kestrel, marrow } from './fixtures';

/** The shared zod schema of spec §4, when another part of the project has written it. */
const schemaModules = import.meta.glob('../../../shared/schemas/interpretation.ts');

function record(): BuildupRecord {
  return deepFreeze({
    id: 11,
    name: 'Kestrel Knoll',
    version: 3,
    geometry: {
      base: [[100, 800], [500, 810], [900, 805]],
      cycles: [
        {
          index: 1,
          top: [[150, 700], [500, 640], [850, 700]],
          marginLeft: [220, 680],
          marginRight: [780, 682],
          flankLeft: [[150, 700], [120, 790]],
          ageTopMa: 14.2,
          systemsTract: 'TST',
        },
        {
          index: 2,
          top: [[260, 600], [500, 560], [740, 600]],
          marginLeft: [300, 590],
          marginRight: [700, 592],
          flankRight: [[740, 600], [790, 680]],
        },
        { index: 3, top: [[380, 520], [500, 500]], marginLeft: null, marginRight: null },
      ],
      terminations: [
        { type: 'onlap', at: [390, 515] },
        { type: 'downlap', at: [610, 530] },
      ],
      topIsDrowningSurface: false,
    },
  } as BuildupRecord);
}

const ctx: MeasureContext = deepFreeze({
  calibrationTies: [
    { px: [0, 0], world: [0, 1000] },
    { px: [2000, 0], world: [25000, 1000] },
    { px: [0, 1000], world: [0, 2000] },
  ],
  verticalDomain: 'twt_ms',
  velocity: { kind: 'constant', v: { min: 3500, mode: 4000, max: 5000 } },
});

describe('toGeometry / fromGeometry', () => {
  it('fromGeometry gives the editor buildup with stable ids, and toGeometry gives the record back', () => {
    const b = fromGeometry(record());
    // loaded ids: String(serverId) for the buildup, c<index> / t<n> for cycles and stamps
    expect(b).toStrictEqual({ ...kestrel(), id: '11' });
    expect(toGeometry(b)).toStrictEqual(record().geometry);
    expect(fromGeometry(record())).toStrictEqual(b);
  });

  it('editor → geometry → editor round trip keeps content (cycles re-indexed oldest first)', () => {
    const b = deepFreeze(kestrel());
    const back = fromGeometry({ id: 11, name: b.name, version: b.version, geometry: toGeometry(b) });
    expect(back).toStrictEqual({ ...b, id: '11' });
    expect(JSON.parse(JSON.stringify(toGeometry(b)))).toStrictEqual(toGeometry(b));
  });

  it('orders cycles by index and re-indexes 1..n after edits', () => {
    const r = structuredClone(record()) as BuildupRecord;
    r.geometry.cycles.reverse();
    r.geometry.cycles[0].index = 30; // youngest
    const b = fromGeometry(r);
    expect(b.cycles.map((c) => c.top.length)).toEqual([3, 3, 2]);
    expect(toGeometry(b).cycles.map((c) => c.index)).toEqual([1, 2, 3]);
  });

  it('fresh arrays: changing the output does not touch the editor record', () => {
    const b = deepFreeze(kestrel());
    const g = toGeometry(b);
    g.base[0][0] = -1;
    expect(b.base[0][0]).toBe(100);
  });

  it('refuses bad records naming the field path', () => {
    const bad = (patch: (r: any) => void) => {
      const r = structuredClone(record()) as any;
      patch(r);
      return () => fromGeometry(r);
    };
    expect(bad((r) => (r.geometry.cycles[1].top[2] = [1, Number.NaN]))).toThrow(/^geometry\.cycles\[1\]\.top\[2\]\[1\]: /);
    expect(bad((r) => (r.geometry.terminations[0].type = 'offlap'))).toThrow(/^geometry\.terminations\[0\]\.type: /);
    expect(bad((r) => delete r.geometry.topIsDrowningSurface)).toThrow(/^geometry\.topIsDrowningSurface: /);
    expect(bad((r) => (r.geometry.cycles[2].index = 1))).toThrow('geometry.cycles[2].index: duplicate cycle index 1');
    expect(bad((r) => (r.geometry.cycles[0].index = 0))).toThrow(ModelError);
  });

  it('toSavePayload carries name, version and geometry', () => {
    expect(toSavePayload(kestrel())).toStrictEqual({ name: 'Kestrel Knoll', version: 3, geometry: record().geometry });
  });
});

describe('measurability', () => {
  it('a buildup with a base and one complete cycle is measurable', () => {
    expect(isMeasurable(kestrel())).toBe(true);
    expect(measurabilityIssues(kestrel())).toEqual([]);
  });

  it('names what is missing', () => {
    expect(measurabilityIssues(marrow())).toEqual([
      'cycles: needs at least one cycle with a top of 2+ points and both margins',
    ]);
    const b = { ...kestrel(), base: [[1, 1]] as [number, number][] };
    expect(measurabilityIssues(b)).toEqual(['base: needs at least 2 points']);
    const k = kestrel();
    const outside = { ...k, cycles: [{ ...k.cycles[0], marginRight: [900, 690] as [number, number] }, ...k.cycles.slice(1)] };
    expect(isMeasurable(outside)).toBe(false);
    const flat = { ...k, base: [[100, 800], [100, 900]] as [number, number][] };
    expect(measurabilityIssues(flat)).toEqual(['base: needs a u-extent (all its points share one u)']);
    const ages = { ...k, cycles: [k.cycles[0], { ...k.cycles[1], ageTopMa: 15 }, k.cycles[2]] };
    expect(measurabilityIssues(ages)).toEqual(['cycles[1].ageTopMa: must be younger (a smaller Ma) than the top of cycle 1 (14.2 Ma)']);
    expect(measurabilityIssues(outside)[0]).toMatch(/^cycles\[0\]\.marginRight: outside the top's u-range \[150, 850\]/);
  });
});

describe('toInterpretationInput', () => {
  it('builds the spec §4 input in pixels with only complete cycles, re-indexed', () => {
    const input = toInterpretationInput(deepFreeze(kestrel()), ctx);
    expect(input).toStrictEqual({
      format: 'cayline.interpretation/1',
      verticalDomain: 'twt_ms',
      coordinates: 'pixels',
      calibration: ctx.calibrationTies,
      velocity: ctx.velocity,
      buildups: [
        {
          name: 'Kestrel Knoll',
          base: [[100, 800], [500, 810], [900, 805]],
          cycles: [
            {
              index: 1,
              top: [[150, 700], [500, 640], [850, 700]],
              marginLeft: [220, 680],
              marginRight: [780, 682],
              flankLeft: [[150, 700], [120, 790]],
              ageTopMa: 14.2,
              systemsTract: 'TST', // the Ledger's label travels with the cycle (exports name it)
            },
            {
              index: 2,
              top: [[260, 600], [500, 560], [740, 600]],
              marginLeft: [300, 590],
              marginRight: [700, 592],
              flankRight: [[740, 600], [790, 680]],
            },
          ],
          terminations: [
            { type: 'onlap', at: [390, 515] },
            { type: 'downlap', at: [610, 530] },
          ],
          topIsDrowningSurface: false,
        },
      ],
    });
  });

  it('skips an incomplete cycle between complete ones and leaves flanks without length out', () => {
    const k = kestrel();
    const c3 = { ...k.cycles[2], top: [[380, 520], [500, 500], [620, 522]] as [number, number][], marginLeft: [400, 515] as [number, number], marginRight: [600, 518] as [number, number] };
    const c2 = { ...k.cycles[1], marginLeft: null, flankRight: [[740, 600]] as [number, number][] };
    const c1 = { ...k.cycles[0], flankLeft: [[150, 700], [150, 700]] as [number, number][] };
    const input = toInterpretationInput({ ...k, cycles: [c1, c2, c3] }, ctx);
    const cycles = input.buildups[0].cycles;
    expect(cycles.map((c) => [c.index, c.top.length])).toEqual([[1, 3], [2, 3]]);
    expect(cycles[0].flankLeft).toBeUndefined();
    expect(cycles[1].marginLeft).toEqual([400, 515]);
  });

  it('refuses a buildup that is not measurable, naming buildups[i] and the field', () => {
    expect(() => toInterpretationInput([kestrel(), marrow()], ctx)).toThrow(
      'buildups[1].cycles: needs at least one cycle with a top of 2+ points and both margins',
    );
    expect(() => toInterpretationInput(kestrel(), { ...ctx, verticalDomain: 'feet' as 'depth_m' })).toThrow(/^verticalDomain: /);
  });

  // Skipped until shared/schemas/interpretation.ts exists; the exact-shape test above covers spec §4 meanwhile.
  it.skipIf(Object.keys(schemaModules).length === 0)('validates against the shared interpretation schema', async () => {
    const loaders = Object.values(schemaModules);
    const mod = (await loaders[0]()) as Record<string, unknown>;
    const schemas = Object.entries(mod).filter(
      ([name, v]) => /interpretation/i.test(name) && v && typeof (v as { safeParse?: unknown }).safeParse === 'function',
    );
    expect(schemas.length).toBeGreaterThan(0);
    const input = toInterpretationInput(kestrel(), ctx);
    const results = schemas.map(([name, s]) => [name, (s as { safeParse(x: unknown): { success: boolean; error?: unknown } }).safeParse(input)] as const);
    const ok = results.filter(([, r]) => r.success);
    expect(ok.map(([n]) => n), JSON.stringify(results.map(([n, r]) => [n, r.error]))).not.toEqual([]);
    // the same schema does refuse a broken input (so the check above can fail)
    const [name, schema] = schemas.find(([n]) => n === ok[0][0])!;
    const broken = structuredClone(input);
    broken.buildups[0].cycles[1].marginLeft = [9999, 590];
    expect((schema as { safeParse(x: unknown): { success: boolean } }).safeParse(broken).success, name).toBe(false);
    // every input our checks accept for the fixtures is accepted by the schema, and vice versa for the refusals
    const k = kestrel();
    const variants = [
      { ...k, topIsDrowningSurface: true },
      { ...k, cycles: [k.cycles[0]] },
      { ...k, cycles: [k.cycles[0], { ...k.cycles[1], ageTopMa: 15 }] },
      { ...k, base: [[100, 800], [100, 900]] as [number, number][] },
    ];
    for (const v of variants) {
      let built: unknown = null;
      try {
        built = toInterpretationInput(v, ctx);
      } catch {
        built = null;
      }
      const accepted = isMeasurable(v);
      expect(built !== null).toBe(accepted);
      const candidate = built ?? { ...input, buildups: [{ ...input.buildups[0], base: v.base, cycles: v.cycles.filter((c) => c.marginLeft).map((c, i) => ({ index: i + 1, top: c.top, marginLeft: c.marginLeft, marginRight: c.marginRight, ...(c.ageTopMa !== null ? { ageTopMa: c.ageTopMa } : {}) })) }] };
      expect((schema as { safeParse(x: unknown): { success: boolean } }).safeParse(candidate).success).toBe(accepted);
    }
  });
});

describe('reconcileSelection', () => {
  const s = fixtureState();
  it('keeps what exists and drops what does not', () => {
    const sel: Selection = { buildupId: 'b1', cycleId: 'c2', element: { kind: 'top', vertex: 2 } };
    expect(reconcileSelection(sel, s)).toBe(sel);
    expect(reconcileSelection({ ...sel, element: { kind: 'top', vertex: 7 } }, s)).toEqual({ ...sel, element: { kind: 'top' } });
    expect(reconcileSelection({ ...sel, cycleId: 'zz' }, s)).toEqual({ buildupId: 'b1', cycleId: null, element: null });
    expect(reconcileSelection({ ...sel, buildupId: 'zz' }, s)).toEqual({ buildupId: null, cycleId: null, element: null });
    expect(reconcileSelection({ buildupId: 'b1', cycleId: 'c3', element: { kind: 'marginLeft' } }, s).element).toBeNull();
    expect(reconcileSelection({ buildupId: 'b1', cycleId: null, element: { kind: 'termination', terminationId: 't9' } }, s).element).toBeNull();
  });
});
