import type { EditorBuildup, EditorState, Pt } from '../../../client/canvas/model';

/** Recursively freeze a value so any mutation throws (ES modules are strict mode). */
export function deepFreeze<T>(v: T): T {
  if (v && typeof v === 'object' && !Object.isFrozen(v)) {
    Object.freeze(v);
    for (const k of Object.keys(v)) deepFreeze((v as Record<string, unknown>)[k]);
  }
  return v;
}

/** A polyline along u from u0 to u1 with n points, at height v(u). */
export function line(u0: number, u1: number, n: number, v: (u: number) => number): Pt[] {
  const out: Pt[] = [];
  for (let i = 0; i < n; i++) {
    const u = u0 + ((u1 - u0) * i) / (n - 1);
    out.push([u, v(u)]);
  }
  return out;
}

/** An invented buildup ("Kestrel Knoll") with a base, three cycles and two stamps. */
export function kestrel(): EditorBuildup {
  return {
    id: 'b1',
    serverId: 11,
    name: 'Kestrel Knoll',
    version: 3,
    base: [
      [100, 800],
      [500, 810],
      [900, 805],
    ],
    cycles: [
      {
        id: 'c1',
        top: [
          [150, 700],
          [500, 640],
          [850, 700],
        ],
        marginLeft: [220, 680],
        marginRight: [780, 682],
        flankLeft: [
          [150, 700],
          [120, 790],
        ],
        flankRight: null,
        ageTopMa: 14.2,
        systemsTract: 'TST',
      },
      {
        id: 'c2',
        top: [
          [260, 600],
          [500, 560],
          [740, 600],
        ],
        marginLeft: [300, 590],
        marginRight: [700, 592],
        flankLeft: null,
        flankRight: [
          [740, 600],
          [790, 680],
        ],
        ageTopMa: null,
        systemsTract: null,
      },
      {
        id: 'c3',
        top: [
          [380, 520],
          [500, 500],
        ],
        marginLeft: null,
        marginRight: null,
        flankLeft: null,
        flankRight: null,
        ageTopMa: null,
        systemsTract: null,
      },
    ],
    terminations: [
      { id: 't1', type: 'onlap', at: [390, 515] },
      { id: 't2', type: 'downlap', at: [610, 530] },
    ],
    topIsDrowningSurface: false,
  };
}

export function marrow(): EditorBuildup {
  return {
    id: 'b2',
    name: 'Marrow Bank',
    version: 0,
    base: [
      [1200, 900],
      [1600, 905],
    ],
    cycles: [],
    terminations: [],
    topIsDrowningSurface: false,
  };
}

export function fixtureState(): EditorState {
  return deepFreeze({ buildups: [kestrel(), marrow()] });
}
