/**
 * Note pins, pure parts: clustering on screen, links in message text, the
 * position of an object anchor, and the stable ids of cycles and stamps in
 * the stored geometry.
 */
import { describe, expect, it } from 'vitest';
import { clusterPins } from '../../../client/canvas/noteClusters';
import { splitLinks } from '../../../shared/notes/links';
import { anchorPositionInEditor, anchorPositionInGeometry, midAlong } from '../../../shared/notes/anchor';
import { fromGeometry, toGeometry, type BuildupGeometry, type EditorBuildup } from '../../../shared/editor/model';
import { saveBuildupSchema } from '../../../shared/schemas/buildups';
import { mentionedIn } from '../../../client/components/discussion/mentions';
import { livePosition } from '../../../client/components/discussion/useDiscussion';
import type { NoteThreadView } from '../../../shared/schemas/notes';

const pin = (id: number, u: number, v: number) => ({ id, number: id, at: [u, v] as [number, number] });

describe('clusterPins', () => {
  const pins = [pin(1, 100, 100), pin(2, 110, 100), pin(3, 400, 100), pin(4, 104, 103)];

  it('zoomed in, every pin stands alone at its own point', () => {
    const c = clusterPins(pins, 8, 8); // pins 1 and 4 are 5 image px apart: 40 on screen
    expect(c).toHaveLength(4);
    expect(c.map((x) => x.at)).toEqual([[100, 100], [110, 100], [400, 100], [104, 103]]);
  });

  it('zoomed out, pins within the screen radius join one mark at their mean, far ones stay apart', () => {
    const c = clusterPins(pins, 0.5, 0.5, 26); // 10 px apart in the image = 5 on screen
    expect(c.map((x) => x.pins.map((p) => p.id))).toEqual([[1, 2, 4], [3]]);
    expect(c[0].at[0]).toBeCloseTo((100 + 110 + 104) / 3, 9);
    expect(c[0].at[1]).toBeCloseTo((100 + 100 + 103) / 3, 9);
  });

  it('the radius is measured on screen, with the vertical stretch', () => {
    const two = [pin(1, 0, 0), pin(2, 0, 20)];
    expect(clusterPins(two, 1, 1, 26)).toHaveLength(1); // 20 screen px apart
    expect(clusterPins(two, 1, 2, 26)).toHaveLength(2); // stretched ×2: 40 px apart
  });

  it('a selected pin stays on its own', () => {
    const c = clusterPins(pins, 0.5, 0.5, 26, 2);
    expect(c.map((x) => x.pins.map((p) => p.id))).toEqual([[1, 4], [2], [3]]);
  });

  it('does not depend on the input order (taken by number)', () => {
    expect(clusterPins([...pins].reverse(), 0.5, 0.5)).toEqual(clusterPins(pins, 0.5, 0.5));
  });

  it('refuses a scale that is not positive', () => {
    expect(() => clusterPins(pins, 0, 1)).toThrow(/scales/);
  });
});

describe('splitLinks', () => {
  it('plain text stays one part, line breaks kept', () => {
    expect(splitLinks('no links here\nsecond line')).toEqual([{ kind: 'text', text: 'no links here\nsecond line' }]);
    expect(splitLinks('')).toEqual([]);
  });

  it('finds http and https links and leaves sentence punctuation outside', () => {
    expect(splitLinks('See https://tessel.example/tb-11?x=1. And (http://a.example/p) too')).toEqual([
      { kind: 'text', text: 'See ' },
      { kind: 'link', text: 'https://tessel.example/tb-11?x=1', href: 'https://tessel.example/tb-11?x=1' },
      { kind: 'text', text: '. And (' },
      { kind: 'link', text: 'http://a.example/p', href: 'http://a.example/p' },
      { kind: 'text', text: ') too' },
    ]);
  });

  it('keeps a balanced parenthesis inside a link', () => {
    expect(splitLinks('https://w.example/Reef_(geology)')).toEqual([{ kind: 'link', text: 'https://w.example/Reef_(geology)', href: 'https://w.example/Reef_(geology)' }]);
  });

  it('markup and other schemes stay text', () => {
    const evil = '<script>alert(1)</script><img src=x onerror=alert(2)> javascript:alert(3) data:text/html,x';
    expect(splitLinks(evil)).toEqual([{ kind: 'text', text: evil }]);
    expect(splitLinks('https://')).toEqual([{ kind: 'text', text: 'https://' }]);
  });

  it('a link stops at a quote or angle bracket', () => {
    expect(splitLinks('<a href="https://x.example/a">')).toEqual([
      { kind: 'text', text: '<a href="' },
      { kind: 'link', text: 'https://x.example/a', href: 'https://x.example/a' },
      { kind: 'text', text: '">' },
    ]);
  });
});

describe('object anchors', () => {
  const geometry: BuildupGeometry = {
    base: [[0, 100], [200, 100]],
    cycles: [
      { index: 1, top: [[20, 80], [100, 60], [180, 80]], marginLeft: [20, 80], marginRight: [180, 80], flankLeft: [[20, 80], [0, 100]] },
      { id: 'young', index: 2, top: [[50, 50], [90, 30], [150, 50]], marginLeft: [50, 50], marginRight: [150, 50] },
    ],
    terminations: [{ type: 'onlap', at: [30, 90] }, { id: 'stamp-x', type: 'downlap', at: [170, 90] }],
    topIsDrowningSurface: false,
  };

  it('midAlong is halfway by arc length', () => {
    expect(midAlong([[0, 0], [30, 40], [30, 90]])).toEqual([30, 40]); // lengths 50 + 50
    expect(midAlong([[0, 0], [10, 0]])).toEqual([5, 0]);
    expect(midAlong([[3, 4]])).toEqual([3, 4]);
    expect(midAlong([])).toBeNull();
  });

  it('each kind of object gives its point; a missing one gives null', () => {
    expect(anchorPositionInGeometry(geometry, { object: 'buildup' })).toEqual([90, 30]); // crest of the youngest top
    expect(anchorPositionInGeometry(geometry, { object: 'marginRight', cycleId: 'c1' })).toEqual([180, 80]);
    expect(anchorPositionInGeometry(geometry, { object: 'marginLeft', cycleId: 'young' })).toEqual([50, 50]);
    expect(anchorPositionInGeometry(geometry, { object: 'flankLeft', cycleId: 'c1' })).toEqual([10, 90]);
    expect(anchorPositionInGeometry(geometry, { object: 'termination', terminationId: 't1' })).toEqual([30, 90]);
    expect(anchorPositionInGeometry(geometry, { object: 'termination', terminationId: 'stamp-x' })).toEqual([170, 90]);
    expect(anchorPositionInGeometry(geometry, { object: 'flankRight', cycleId: 'c1' })).toBeNull();
    expect(anchorPositionInGeometry(geometry, { object: 'top', cycleId: 'c2' })).toBeNull(); // its id is "young"
    expect(anchorPositionInGeometry({ ...geometry, cycles: [] }, { object: 'buildup' })).toEqual([100, 100]); // middle of the base
  });

  it('the editor record gives the same positions as the stored geometry', () => {
    const b = fromGeometry({ id: 5, name: 'Kestrel Knoll', version: 1, geometry });
    for (const ref of [
      { object: 'buildup' as const },
      { object: 'top' as const, cycleId: 'young' },
      { object: 'marginRight' as const, cycleId: 'c1' },
      { object: 'termination' as const, terminationId: 'stamp-x' },
    ])
      expect(anchorPositionInEditor(b, ref)).toEqual(anchorPositionInGeometry(geometry, ref));
  });
});

describe('stable ids in the stored geometry', () => {
  const g: BuildupGeometry = {
    base: [[0, 100], [200, 100]],
    cycles: [
      { index: 1, top: [[20, 80], [180, 80]], marginLeft: [20, 80], marginRight: [180, 80] },
      { index: 2, top: [[50, 50], [150, 50]], marginLeft: [50, 50], marginRight: [150, 50] },
    ],
    terminations: [{ type: 'onlap', at: [30, 90] }, { type: 'toplap', at: [60, 50] }],
    topIsDrowningSurface: false,
  };

  it('ids survive deleting the first cycle and stamp (written only where they differ from the position)', () => {
    const b = fromGeometry({ id: 1, name: 'K', version: 1, geometry: g });
    expect(b.cycles.map((c) => c.id)).toEqual(['c1', 'c2']);
    const edited: EditorBuildup = { ...b, cycles: b.cycles.slice(1), terminations: b.terminations.slice(1) };
    const saved = toGeometry(edited);
    expect(saved.cycles[0]).toMatchObject({ id: 'c2', index: 1 });
    expect(saved.terminations[0]).toMatchObject({ id: 't2' });
    const again = fromGeometry({ id: 1, name: 'K', version: 2, geometry: JSON.parse(JSON.stringify(saved)) });
    expect(again.cycles.map((c) => c.id)).toEqual(['c2']);
    expect(again.terminations.map((t) => t.id)).toEqual(['t2']);
    // unchanged positions write no ids (older records and fixtures stay as they are)
    expect(toGeometry(b)).toStrictEqual(g);
  });

  it('a new cycle keeps its own id through a save and a load', () => {
    const b = fromGeometry({ id: 1, name: 'K', version: 1, geometry: g });
    const fresh = { ...b.cycles[0], id: 'new-one', top: [[10, 95], [190, 95]] as [number, number][] };
    const saved = toGeometry({ ...b, cycles: [fresh, ...b.cycles] });
    expect(saved.cycles.map((c) => c.id)).toEqual(['new-one', 'c1', 'c2']);
    expect(fromGeometry({ id: 1, name: 'K', version: 2, geometry: saved }).cycles.map((c) => c.id)).toEqual(['new-one', 'c1', 'c2']);
  });

  it('the save schema refuses duplicate ids, defaults included, naming the field', () => {
    const dup = { ...g, cycles: [{ ...g.cycles[0], id: 'c2' }, g.cycles[1]] };
    const r = saveBuildupSchema.safeParse({ version: 1, geometry: dup });
    expect(r.success).toBe(false);
    expect(r.error!.issues.map((i) => i.path.join('.'))).toContain('geometry.cycles.1.id');
    const stamps = { ...g, terminations: [g.terminations[0], { ...g.terminations[1], id: 't1' }] };
    expect(saveBuildupSchema.safeParse({ version: 1, geometry: stamps }).error!.issues[0].path.join('.')).toBe('geometry.terminations.1.id');
    expect(saveBuildupSchema.safeParse({ version: 1, geometry: g }).success).toBe(true);
  });
});

describe('mentionedIn', () => {
  const people = [
    { id: 1, name: 'Ana' },
    { id: 2, name: 'Ana Reef' },
    { id: 3, name: 'Bo Lagoon' },
  ];
  it('finds each @Name once, longer names first', () => {
    expect(mentionedIn('@Ana Reef please look, and @Bo Lagoon too', people).sort()).toEqual([2, 3]);
    expect(mentionedIn('@Ana and @Ana Reef', people).sort()).toEqual([1, 2]);
    expect(mentionedIn('Ana without the at sign', people)).toEqual([]);
  });
});

describe('livePosition (where the browser draws a pin)', () => {
  const geometry: BuildupGeometry = {
    base: [[0, 100], [200, 100]],
    cycles: [{ index: 1, top: [[20, 80], [180, 80]], marginLeft: [20, 80], marginRight: [180, 80] }],
    terminations: [],
    topIsDrowningSurface: false,
  };
  const thread = (over: Partial<NoteThreadView> = {}): NoteThreadView => ({
    id: 1,
    sectionId: 1,
    number: 1,
    anchor: { kind: 'object', buildupId: 7, object: 'marginRight', cycleId: 'c1', terminationId: null, buildupName: 'Kestrel Knoll' },
    at: [180, 80],
    objectRemoved: false,
    resolved: false,
    resolvedAt: null,
    resolvedBy: null,
    createdBy: null,
    createdAt: '',
    updatedAt: '',
    messages: [],
    ...over,
  });

  it('follows the object in the editor before it is saved', () => {
    const b = fromGeometry({ id: 7, name: 'Kestrel Knoll', version: 1, geometry });
    const moved = { ...b, cycles: [{ ...b.cycles[0], marginRight: [170, 82] as [number, number] }] };
    expect(livePosition(thread(), [moved])).toEqual({ at: [170, 82], removed: false });
  });

  it('keeps the server position when the object is not in the editor, or was removed', () => {
    const b = fromGeometry({ id: 7, name: 'Kestrel Knoll', version: 1, geometry });
    expect(livePosition(thread(), [{ ...b, cycles: [] }])).toEqual({ at: [180, 80], removed: false });
    expect(livePosition(thread({ objectRemoved: true, at: [150, 90] }), [b])).toEqual({ at: [150, 90], removed: true });
    expect(livePosition(thread({ anchor: { kind: 'point' }, at: [5, 6] }), [b])).toEqual({ at: [5, 6], removed: false });
  });
});
