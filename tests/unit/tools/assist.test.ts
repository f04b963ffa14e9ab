import { beforeEach, describe, expect, it } from 'vitest';
import { AssistedTraceTool } from '../../../client/canvas/assist/assistedTrace';
import { LocalAssistBackend, latest, polarityFromNote, type AssistBackend } from '../../../client/canvas/assist/backend';
import type { AssistResult, AssistTask } from '../../../client/canvas/assist/protocol';
import { Toolbox } from '../../../client/canvas/tools/toolbox';
import { kestrel } from '../canvas/fixtures';
import { maxError, synthImage } from '../trace-assist/synthetic';
import { at, setup } from './helpers';

// One event across the image, well away from the fixture buildup's lines (v 600–810).
const f = (u: number) => 300 + 0.12 * u + 6 * Math.sin(u / 90);
const img = synthImage(1000, 900, [
  { at: f, from: 60, to: 940 },
  { at: (u) => f(u) + 40, amp: 0.5 },
], { noise: 0.04, seed: 'tool' });

let s: ReturnType<typeof setup>;
let t: AssistedTraceTool;
beforeEach(() => {
  s = setup([kestrel()]);
  t = new AssistedTraceTool(s.env, { target: 'top' });
  t.setAssist(new LocalAssistBackend(img.source));
});

describe('Trace tool with trace assist', () => {
  it('follow mode: three clicks trace the event as ordinary vertices, Enter commits ONE action; undo/redo', async () => {
    s.store.select('b1', null, null);
    const before = s.store.buildups;
    expect(t.keyDown({ key: 'g' })).toBe(true);
    expect(t.mode).toBe('follow');
    t.click(at(100.5, f(100.5)));
    t.pointerMove(at(450.5, f(450.5) + 3));
    await t.whenIdle();
    await new Promise((r) => setTimeout(r, 0));
    expect(t.preview).toMatchObject({ kind: 'trace', follow: expect.any(Array) });
    t.click(at(450.5, f(450.5) + 3));
    t.pointerMove(at(880.5, f(880.5) - 2));
    t.click(at(880.5, f(880.5) - 2));
    await t.whenIdle();
    const pts = t.pending;
    expect(pts.length).toBeGreaterThan(5);
    expect(pts.length).toBeLessThan(200); // thinned, not one per column
    expect(maxError(pts.slice(1), f)).toBeLessThanOrEqual(1);
    // Backspace takes back the whole last followed segment
    const n = pts.length;
    t.keyDown({ key: 'Backspace' });
    expect(t.pending.length).toBeLessThan(n - 1);
    expect(t.pending[t.pending.length - 1][0]).toBeCloseTo(pts.find((p) => p[0] >= 449)![0], 0);
    t.pointerMove(at(880.5, f(880.5)));
    t.click(at(880.5, f(880.5)));
    await t.whenIdle();
    expect(t.keyDown({ key: 'Enter' })).toBe(true);
    expect(s.names()).toEqual(['addCycle']);
    const top = s.store.buildupById('b1')!.cycles.at(-1)!.top;
    expect(maxError(top.slice(1), f)).toBeLessThanOrEqual(1);
    const after = s.store.buildups;
    s.store.undo();
    expect(s.store.buildups).toStrictEqual(before);
    s.store.redo();
    expect(s.store.buildups).toStrictEqual(after);
  });

  it('auto-extend: one click puts the whole event in as ONE autoExtend step, offers stamps placed only on a click', async () => {
    s.store.select('b1', null, null);
    const before = s.store.buildups;
    t.keyDown({ key: 'x' });
    expect(t.mode).toBe('extend');
    t.click(at(500.5, f(500.5) + 2));
    await t.whenIdle();
    expect(s.names()).toEqual(['autoExtend']);
    const top = s.store.buildupById('b1')!.cycles.at(-1)!.top;
    expect(top[0][0]).toBeLessThan(75);
    expect(top[top.length - 1][0]).toBeGreaterThan(925);
    expect(maxError(top, f)).toBeLessThanOrEqual(1);
    const p = t.preview as unknown as { candidates: { at: [number, number]; type: string }[] };
    expect(p.candidates.length).toBe(2);
    expect(s.store.buildupById('b1')!.terminations.length).toBe(kestrel().terminations.length); // nothing placed yet
    const c = p.candidates[1];
    t.click(at(c.at[0] + 2, c.at[1] - 2));
    expect(s.names()).toEqual(['autoExtend', 'addTermination']);
    expect(s.store.buildupById('b1')!.terminations.at(-1)).toMatchObject({ type: c.type, at: c.at });
    // one undo removes the stamp, one more the auto-extended surface
    s.store.undo();
    s.store.undo();
    expect(s.store.buildups).toStrictEqual(before);
    s.store.redo();
    expect(s.store.buildupById('b1')!.cycles.at(-1)!.top).toEqual(top);
  });

  it('H snaps the selected top onto the event as ONE snapToEvent step; undo restores', async () => {
    s.store.select('b1', null, null);
    t.keyDown({ key: 'Enter' });
    // trace a rough top by clicks, 3 px under the event
    for (const u of [120.5, 300.5, 520.5, 760.5]) t.click(at(u, f(u) + 3));
    t.keyDown({ key: 'Enter' });
    const b = s.store.buildupById('b1')!;
    const cyc = b.cycles.at(-1)!;
    s.store.select('b1', cyc.id, { kind: 'top' });
    const before = s.store.buildups;
    expect(t.keyDown({ key: 'h' })).toBe(true);
    await t.whenIdle();
    expect(s.names().at(-1)).toBe('snapToEvent');
    const snapped = s.store.buildupById('b1')!.cycles.at(-1)!.top;
    expect(snapped.map((p) => p[0])).toEqual(cyc.top.map((p) => p[0]));
    expect(maxError(snapped, f)).toBeLessThan(0.6);
    s.store.undo();
    expect(s.store.buildups).toStrictEqual(before);
  });

  it('P cycles the phase; without a backend follow and extend fall back to plain clicks', () => {
    expect(t.phase).toBe('peak');
    t.keyDown({ key: 'p' });
    expect(t.phase).toBe('trough');
    t.keyDown({ key: 'p' });
    t.keyDown({ key: 'p' });
    expect(t.phase).toBe('peak');
    t.setAssist(null);
    t.setMode('extend');
    t.click(at(100, 100));
    t.click(at(200, 110));
    expect(t.pending).toEqual([[100, 100], [200, 110]]);
    expect(() => t.setMode('wander' as never)).toThrow(/mode must be one of/);
  });

  it('is the Toolbox trace tool and its keys collide with no tool letter', () => {
    const box = new Toolbox(s.env);
    expect(box.tools.trace).toBeInstanceOf(AssistedTraceTool);
    box.setTool('trace');
    expect(box.keyDown({ key: 'g' })).toBe(true);
    expect(box.activeId).toBe('trace');
    expect(box.tools.trace.mode).toBe('follow');
  });
});

describe('latest-wins previews', () => {
  it('drops superseded tasks: of three quick requests only the first (already running) and the last answer', async () => {
    const seen: number[] = [];
    const backend: AssistBackend = {
      run: async (task: AssistTask): Promise<AssistResult> => {
        seen.push((task as { to: [number, number] }).to[0]);
        await new Promise((r) => setTimeout(r, 5));
        return { kind: 'path', points: [], meanScore: 0, raw: 0 };
      },
    };
    const l = latest(backend);
    const task = (u: number): AssistTask => ({ kind: 'path', from: [0, 0], to: [u, 0], phase: 'peak' });
    const a = l.run(task(1));
    const b = l.run(task(2));
    const c = l.run(task(3));
    expect(await b).toBeNull();
    expect(await a).toBeNull(); // stale: a newer one was waiting when it finished
    expect(await c).not.toBeNull();
    expect(seen).toEqual([1, 3]);
  });

  it('reads the polarity note', () => {
    expect(polarityFromNote('Polarity: an increase of acoustic impedance downward is a positive amplitude, shown dark; zero is mid-grey.')).toBe('darkPositive');
    expect(polarityFromNote('Positive amplitude is shown white.')).toBe('brightPositive');
    expect(polarityFromNote('')).toBe('darkPositive');
  });
});
