/**
 * Demo analogues, seeded once (app_meta `demo_analogues_seeded`): about 200
 * invented buildups of the Tessel scenario — made-up names (syllables plus a
 * landform word and a TA- number), made-up coordinates in open ocean of the
 * far South Pacific (38–46° S, 120–140° W, no land), invented citations in an
 * invented bulletin, and numbers drawn (seedrandom, so every start gives the
 * same library) from ranges that look like carbonate buildups on seismic:
 * heights tens to hundreds of metres, widths of kilometres, flank angles of a
 * few to 35°. None of them is a real buildup, place, author or publication.
 *
 * `generateAnalogues(n, seed)` is shared with the benchmark (100,000 rows).
 */
import seedrandom from 'seedrandom';
import type { Sequelize } from 'sequelize';
import { AppMeta } from '../../models/index';
import { handColumns, insertMany } from '../../services/analogue.service';
import { ICS_UNITS } from '../../../shared/ics-chart';
import type { DepthPoint, EvolutionClass, HandEntryInput } from '../../../shared/schemas/analogues';

export const ANALOGUES_SEED_KEY = 'demo_analogues_seeded';
export const DEMO_ANALOGUE_COUNT = 200;

const SYLLABLES = ['tes', 'kar', 'vel', 'mor', 'quen', 'dra', 'lio', 'sun', 'brel', 'ost', 'pav', 'rin', 'zel', 'cor', 'mab', 'tur', 'nel', 'ves', 'hal', 'gri'];
const LANDFORMS = ['Knoll', 'Bank', 'Mound', 'Shoal', 'Rise', 'Pinnacle', 'Platform', 'Tor', 'Dome', 'Ridge'];
const TAGS = ['well-tied', 'seismic-3d', 'seismic-2d', 'karst', 'drowned-top', 'gas-bearing', 'tested', 'dry', 'bypass-margin', 'reef-rim', 'lagoon', 'slope-apron'];
const SETTINGS = ['isolated-platform', 'attached-platform', 'pinnacle', 'atoll-like', 'bank'];
const FACTORIES = ['tropical', 'cool-water', 'mud-mound'];
const CLIMATES = ['tropical', 'subtropical', 'temperate', 'arid'];
const CLASSES: EvolutionClass[] = ['prograding', 'aggrading', 'backstepping', 'downstepping', 'drowned'];
const AUTHORS = ['Varnel, Q.', 'Oskarin, T.', 'Brellis, M.', 'Quenby, A.', 'Draxmoor, L.', 'Saltry, P.', 'Holvane, R.', 'Tirrell, E.', 'Pavesi, N.', 'Mabry-Kest, J.'];
const TOPICS = ['Growth and demise of', 'Seismic geomorphology of', 'Margin trajectories of', 'Drowning of', 'Flank architecture of'];

/** Stages of periods where carbonate buildups are common in the demo (Palaeozoic to Neogene). */
const STAGES = ICS_UNITS.filter((u) => u.rank === 'stage' && ['Neogene', 'Paleogene', 'Cretaceous', 'Jurassic', 'Triassic', 'Permian', 'Carboniferous', 'Devonian', 'Silurian'].includes(u.period));

export function generateAnalogues(n: number, seed = 'tessel-analogues'): HandEntryInput[] {
  const rnd = seedrandom(seed);
  const pick = <T>(xs: readonly T[]): T => xs[Math.floor(rnd() * xs.length)];
  const between = (a: number, b: number) => a + (b - a) * rnd();
  const logBetween = (a: number, b: number) => Math.exp(between(Math.log(a), Math.log(b)));
  const r1 = (v: number) => Math.round(v * 10) / 10;
  const out: HandEntryInput[] = [];
  for (let i = 0; i < n; i++) {
    const word = (pick(SYLLABLES) + pick(SYLLABLES)).replace(/^./, (c) => c.toUpperCase());
    const setting = pick(SETTINGS);
    const cls = pick(CLASSES);
    const heightM = logBetween(25, 600);
    const baseWidthM = heightM / logBetween(0.02, setting === 'pinnacle' ? 0.4 : 0.15);
    const cycles = 1 + Math.floor(rnd() * 7);
    const trajectoryDeg =
      cycles < 2 ? null : cls === 'prograding' ? between(15, 75) : cls === 'aggrading' ? between(81, 99) : cls === 'backstepping' ? between(105, 160) : cls === 'downstepping' ? between(-35, -5) : between(60, 150);
    const netAggradationM = trajectoryDeg == null ? null : heightM * between(0.3, 0.8) * (trajectoryDeg < 0 ? -0.2 : 1);
    const netBackstepM = trajectoryDeg == null || netAggradationM == null ? null : -netAggradationM / Math.tan((trajectoryDeg * Math.PI) / 180);
    const flank = between(4, 32);
    // profile: base flat at depth D, envelope a flat-topped mound with flanks of different steepness
    const D = r1(between(800, 3500));
    const a = between(0.08, setting === 'pinnacle' ? 0.5 : 0.35);
    const b = between(0.08, setting === 'pinnacle' ? 0.5 : 0.35);
    const W = baseWidthM;
    const env: DepthPoint[] = [];
    for (let k = 0; k <= 24; k++) {
      const t = k / 24;
      const f = Math.max(0, Math.min(1, t / a, (1 - t) / b));
      env.push([r1(t * W), r1(D - heightM * Math.pow(f, 0.8))]);
    }
    const areaM2 = heightM * W * between(0.45, 0.75);
    const stage = pick(STAGES);
    const hand = rnd() < 0.6;
    const tags = TAGS.filter(() => rnd() < 0.15);
    out.push({
      name: `${word} ${pick(LANDFORMS)} TA-${String(i + 1).padStart(3, '0')}`,
      citation: hand
        ? { authors: `${pick(AUTHORS)} & ${pick(AUTHORS)}`, year: 1975 + Math.floor(rnd() * 49), title: `${pick(TOPICS)} the ${word} buildups, Tessel Basin`, container: 'Tessel Basin Bulletin (invented)', doi: null }
        : (undefined as never),
      metrics: {
        heightM: r1(heightM),
        baseWidthM: r1(W),
        aspectRatio: Math.round((heightM / W) * 10000) / 10000,
        areaM2: Math.round(areaM2),
        volumeM3: Math.round(areaM2 * W * between(0.25, 0.6)),
        topWidthM: r1(W * between(0.2, 0.8)),
        trajectoryDeg: trajectoryDeg == null ? null : r1(trajectoryDeg),
        netBackstepM: netBackstepM == null ? null : r1(netBackstepM),
        netAggradationM: netAggradationM == null ? null : r1(netAggradationM),
        flankAngleDeg: r1(flank),
        flankMaxDeg: r1(flank + between(2, 15)),
        cycleCount: cycles,
      },
      lengthUnit: 'm',
      basis: hand ? pick(['depth', 'figure'] as const) : 'depth',
      basisVelocityMs: null,
      evolutionClass: cls,
      profile: { base: [[0, D], [r1(W), D]], tops: [env.filter((p) => p[1] < D)], envelope: env },
      setting,
      factory: setting === 'pinnacle' || rnd() < 0.7 ? 'tropical' : pick(FACTORIES),
      climate: pick(CLIMATES),
      icsUnit: stage.name,
      ageMa: Math.round(between(stage.topMa, stage.baseMa) * 100) / 100,
      latitude: Math.round(between(-46, -38) * 1000) / 1000,
      longitude: Math.round(between(-140, -120) * 1000) / 1000,
      tags,
      notes: hand ? 'Numbers typed from the invented publication; profile traced from its figure.' : 'Generated demo record of the Tessel scenario.',
    });
    if (!hand) delete (out[out.length - 1] as Partial<HandEntryInput>).citation;
  }
  return out;
}

/** Seed the demo library once. */
export async function seedDemoAnalogues(sequelize: Sequelize): Promise<number> {
  if (await AppMeta.findByPk(ANALOGUES_SEED_KEY)) return 0;
  const rows = generateAnalogues(DEMO_ANALOGUE_COUNT).map((v) => handColumns(v, v.citation ? 'hand' : 'import', null));
  await sequelize.transaction(async (transaction) => {
    await insertMany(rows, transaction, sequelize);
    await AppMeta.create({ key: ANALOGUES_SEED_KEY, value: { at: new Date().toISOString(), count: rows.length } }, { transaction });
  });
  return rows.length;
}
