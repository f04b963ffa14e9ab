/**
 * International Chronostratigraphic Chart (IUGS / International Commission on
 * Stratigraphy), edition v2022/10, Phanerozoic: periods, epochs and stages with
 * the numeric age of each base in Ma. Values transcribed from memory of that
 * edition (not from a copy of the chart in this repository); boundaries the
 * chart marks as approximate ("~") are given at the chart's rounded value.
 * Ages change between editions: when updating, name the new edition in
 * `ICS_EDITION` and adjust the tests in tests/api/analogues-ics.test.ts.
 *
 * Each row: [name, base Ma]. Periods list their epochs, epochs their stages,
 * youngest first; the top of a unit is the base of the next younger one.
 */
import type { IcsUnit } from './schemas/analogues';

export const ICS_EDITION = 'International Chronostratigraphic Chart v2022/10 (IUGS/ICS)';

type Epoch = { name: string; baseMa: number; stages: [string, number][] };
type Period = { name: string; baseMa: number; epochs: Epoch[] };

const e = (name: string, baseMa: number, stages: [string, number][]): Epoch => ({ name, baseMa, stages });

const PERIODS: Period[] = [
  {
    name: 'Quaternary',
    baseMa: 2.58,
    epochs: [
      e('Holocene', 0.0117, [
        ['Meghalayan', 0.0042],
        ['Northgrippian', 0.0082],
        ['Greenlandian', 0.0117],
      ]),
      e('Pleistocene', 2.58, [
        ['Upper Pleistocene', 0.129],
        ['Chibanian', 0.774],
        ['Calabrian', 1.8],
        ['Gelasian', 2.58],
      ]),
    ],
  },
  {
    name: 'Neogene',
    baseMa: 23.03,
    epochs: [
      e('Pliocene', 5.333, [
        ['Piacenzian', 3.6],
        ['Zanclean', 5.333],
      ]),
      e('Miocene', 23.03, [
        ['Messinian', 7.246],
        ['Tortonian', 11.63],
        ['Serravallian', 13.82],
        ['Langhian', 15.97],
        ['Burdigalian', 20.44],
        ['Aquitanian', 23.03],
      ]),
    ],
  },
  {
    name: 'Paleogene',
    baseMa: 66.0,
    epochs: [
      e('Oligocene', 33.9, [
        ['Chattian', 27.82],
        ['Rupelian', 33.9],
      ]),
      e('Eocene', 56.0, [
        ['Priabonian', 37.71],
        ['Bartonian', 41.2],
        ['Lutetian', 47.8],
        ['Ypresian', 56.0],
      ]),
      e('Paleocene', 66.0, [
        ['Thanetian', 59.2],
        ['Selandian', 61.6],
        ['Danian', 66.0],
      ]),
    ],
  },
  {
    name: 'Cretaceous',
    baseMa: 145.0,
    epochs: [
      e('Upper Cretaceous', 100.5, [
        ['Maastrichtian', 72.1],
        ['Campanian', 83.6],
        ['Santonian', 86.3],
        ['Coniacian', 89.8],
        ['Turonian', 93.9],
        ['Cenomanian', 100.5],
      ]),
      e('Lower Cretaceous', 145.0, [
        ['Albian', 113.0],
        ['Aptian', 121.4],
        ['Barremian', 125.77],
        ['Hauterivian', 132.6],
        ['Valanginian', 139.8],
        ['Berriasian', 145.0],
      ]),
    ],
  },
  {
    name: 'Jurassic',
    baseMa: 201.4,
    epochs: [
      e('Upper Jurassic', 161.5, [
        ['Tithonian', 149.2],
        ['Kimmeridgian', 154.8],
        ['Oxfordian', 161.5],
      ]),
      e('Middle Jurassic', 174.7, [
        ['Callovian', 165.3],
        ['Bathonian', 168.2],
        ['Bajocian', 170.9],
        ['Aalenian', 174.7],
      ]),
      e('Lower Jurassic', 201.4, [
        ['Toarcian', 184.2],
        ['Pliensbachian', 192.9],
        ['Sinemurian', 199.5],
        ['Hettangian', 201.4],
      ]),
    ],
  },
  {
    name: 'Triassic',
    baseMa: 251.902,
    epochs: [
      e('Upper Triassic', 237.0, [
        ['Rhaetian', 208.5],
        ['Norian', 227.0],
        ['Carnian', 237.0],
      ]),
      e('Middle Triassic', 247.2, [
        ['Ladinian', 242.0],
        ['Anisian', 247.2],
      ]),
      e('Lower Triassic', 251.902, [
        ['Olenekian', 251.2],
        ['Induan', 251.902],
      ]),
    ],
  },
  {
    name: 'Permian',
    baseMa: 298.9,
    epochs: [
      e('Lopingian', 259.51, [
        ['Changhsingian', 254.14],
        ['Wuchiapingian', 259.51],
      ]),
      e('Guadalupian', 273.01, [
        ['Capitanian', 264.28],
        ['Wordian', 266.9],
        ['Roadian', 273.01],
      ]),
      e('Cisuralian', 298.9, [
        ['Kungurian', 283.5],
        ['Artinskian', 290.1],
        ['Sakmarian', 293.52],
        ['Asselian', 298.9],
      ]),
    ],
  },
  {
    name: 'Carboniferous',
    baseMa: 358.9,
    epochs: [
      e('Pennsylvanian', 323.2, [
        ['Gzhelian', 303.7],
        ['Kasimovian', 307.0],
        ['Moscovian', 315.2],
        ['Bashkirian', 323.2],
      ]),
      e('Mississippian', 358.9, [
        ['Serpukhovian', 330.9],
        ['Visean', 346.7],
        ['Tournaisian', 358.9],
      ]),
    ],
  },
  {
    name: 'Devonian',
    baseMa: 419.2,
    epochs: [
      e('Upper Devonian', 382.7, [
        ['Famennian', 372.2],
        ['Frasnian', 382.7],
      ]),
      e('Middle Devonian', 393.3, [
        ['Givetian', 387.7],
        ['Eifelian', 393.3],
      ]),
      e('Lower Devonian', 419.2, [
        ['Emsian', 407.6],
        ['Pragian', 410.8],
        ['Lochkovian', 419.2],
      ]),
    ],
  },
  {
    name: 'Silurian',
    baseMa: 443.8,
    epochs: [
      e('Pridoli', 423.0, [['Pridoli Stage', 423.0]]),
      e('Ludlow', 427.4, [
        ['Ludfordian', 425.6],
        ['Gorstian', 427.4],
      ]),
      e('Wenlock', 433.4, [
        ['Homerian', 430.5],
        ['Sheinwoodian', 433.4],
      ]),
      e('Llandovery', 443.8, [
        ['Telychian', 438.5],
        ['Aeronian', 440.8],
        ['Rhuddanian', 443.8],
      ]),
    ],
  },
  {
    name: 'Ordovician',
    baseMa: 485.4,
    epochs: [
      e('Upper Ordovician', 458.4, [
        ['Hirnantian', 445.2],
        ['Katian', 453.0],
        ['Sandbian', 458.4],
      ]),
      e('Middle Ordovician', 470.0, [
        ['Darriwilian', 467.3],
        ['Dapingian', 470.0],
      ]),
      e('Lower Ordovician', 485.4, [
        ['Floian', 477.7],
        ['Tremadocian', 485.4],
      ]),
    ],
  },
  {
    name: 'Cambrian',
    baseMa: 538.8,
    epochs: [
      e('Furongian', 497.0, [
        ['Cambrian Stage 10', 491.0],
        ['Jiangshanian', 494.0],
        ['Paibian', 497.0],
      ]),
      e('Miaolingian', 509.0, [
        ['Guzhangian', 500.5],
        ['Drumian', 504.5],
        ['Wuliuan', 509.0],
      ]),
      e('Cambrian Series 2', 521.0, [
        ['Cambrian Stage 4', 514.0],
        ['Cambrian Stage 3', 521.0],
      ]),
      e('Terreneuvian', 538.8, [
        ['Cambrian Stage 2', 529.0],
        ['Fortunian', 538.8],
      ]),
    ],
  },
];

function flatten(): IcsUnit[] {
  const out: IcsUnit[] = [];
  let periodTop = 0;
  for (const p of PERIODS) {
    out.push({ name: p.name, rank: 'period', baseMa: p.baseMa, topMa: periodTop, period: p.name, epoch: null });
    let epochTop = periodTop;
    for (const ep of p.epochs) {
      out.push({ name: ep.name, rank: 'epoch', baseMa: ep.baseMa, topMa: epochTop, period: p.name, epoch: ep.name });
      let stageTop = epochTop;
      for (const [name, base] of ep.stages) {
        out.push({ name, rank: 'stage', baseMa: base, topMa: stageTop, period: p.name, epoch: ep.name });
        stageTop = base;
      }
      epochTop = ep.baseMa;
    }
    periodTop = p.baseMa;
  }
  return out;
}

/** Every unit, youngest first within each rank's nesting (period, then its epochs, each followed by its stages). */
export const ICS_UNITS: readonly IcsUnit[] = flatten();

const byName = new Map(ICS_UNITS.map((u) => [u.name.toLowerCase(), u]));

/** A unit by name (case-insensitive), or undefined. */
export function icsUnit(name: string): IcsUnit | undefined {
  return byName.get(name.trim().toLowerCase());
}

/** The stage (else epoch, else period) containing an age in Ma: base > age ≥ top (the base itself belongs to the unit). */
export function icsUnitAt(ageMa: number, rank: IcsUnit['rank'] = 'stage'): IcsUnit | undefined {
  return ICS_UNITS.find((u) => u.rank === rank && ageMa <= u.baseMa && ageMa > u.topMa) ?? (ageMa === 0 ? ICS_UNITS.find((u) => u.rank === rank && u.topMa === 0) : undefined);
}

/** Period, epoch and stage of a named unit or an age. */
export function icsPlacement(unitName: string | null | undefined, ageMa: number | null | undefined): { period: string | null; epoch: string | null; stage: string | null } {
  const u = unitName ? icsUnit(unitName) : undefined;
  if (u) return { period: u.period, epoch: u.epoch, stage: u.rank === 'stage' ? u.name : null };
  if (ageMa == null) return { period: null, epoch: null, stage: null };
  const s = icsUnitAt(ageMa, 'stage');
  if (s) return { period: s.period, epoch: s.epoch, stage: s.name };
  return { period: null, epoch: null, stage: null };
}
