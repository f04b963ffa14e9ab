import { beforeEach, describe, expect, it, vi, type Mock } from 'vitest';
import { Toolbox, TOOL_KEYS, SHORTCUT_GROUPS, DEPTH_VIEW_KEY, MODEL_KEY, NOTE_PIN_KEY } from '../../../client/canvas/tools/toolbox';
import { TOOL_IDS } from '../../../client/canvas/tools/types';
import { handleCanvasKey, isTypingTarget, resolveCommand, type KeyEventLike } from '../../../client/composables/useCanvasShortcuts';
import { at, setup } from './helpers';

function key(k: string, mods: Partial<KeyEventLike> = {}): KeyEventLike & { prevented: boolean } {
  const e = { key: k, target: { tagName: 'DIV' }, prevented: false, ...mods, preventDefault() { e.prevented = true; } };
  return e;
}

let s: ReturnType<typeof setup>;
let box: Toolbox;
let handlers: { undo: Mock<() => void>; redo: Mock<() => void>; toggleHelp: Mock<() => void>; toolKey: (e: Parameters<Toolbox['keyDown']>[0]) => boolean };
beforeEach(() => {
  s = setup();
  box = new Toolbox(s.env);
  handlers = {
    undo: vi.fn(() => void s.store.undo()),
    redo: vi.fn(() => void s.store.redo()),
    toggleHelp: vi.fn(() => {}),
    toolKey: (e) => box.keyDown(e),
  };
});

describe('canvas shortcuts', () => {
  it('Ctrl+Z undoes, Ctrl+Shift+Z and Ctrl+Y redo, ? toggles help', () => {
    expect(resolveCommand(key('z', { ctrlKey: true }))).toBe('undo');
    expect(resolveCommand(key('Z', { ctrlKey: true, shiftKey: true }))).toBe('redo');
    expect(resolveCommand(key('z', { metaKey: true }))).toBe('undo');
    expect(resolveCommand(key('y', { ctrlKey: true }))).toBe('redo');
    expect(resolveCommand(key('?', { shiftKey: true }))).toBe('help');
    expect(resolveCommand(key('z'))).toBeNull();
    const e = key('?', { shiftKey: true });
    expect(handleCanvasKey(e, handlers)).toBe('help');
    expect(e.prevented).toBe(true);
    expect(handlers.toggleHelp).toHaveBeenCalledTimes(1);
  });

  it('undo and redo through the keys restore the document exactly', () => {
    s.store.select('b1');
    const before = s.store.buildups;
    box.setTool('stamp');
    box.click(at(100, 100));
    const after = s.store.buildups;
    handleCanvasKey(key('z', { ctrlKey: true }), handlers);
    expect(s.store.buildups).toStrictEqual(before);
    handleCanvasKey(key('y', { ctrlKey: true }), handlers);
    expect(s.store.buildups).toStrictEqual(after);
  });

  it('ignores keys typed into inputs, text areas, selects and editable content', () => {
    const targets = [
      { tagName: 'INPUT' },
      { tagName: 'textarea' },
      { tagName: 'SELECT' },
      { tagName: 'DIV', isContentEditable: true },
      { tagName: 'DIV', getAttribute: (n: string) => (n === 'role' ? 'textbox' : null) },
      { tagName: 'SPAN', closest: (sel: string) => (sel.includes('contenteditable') ? {} : null) },
    ];
    for (const target of targets) {
      expect(isTypingTarget(target)).toBe(true);
      for (const e of [key('z', { ctrlKey: true, target }), key('?', { target }), key('q', { target }), key('Backspace', { target })]) {
        expect(handleCanvasKey(e, handlers)).toBeNull();
        expect(e.prevented).toBe(false);
      }
    }
    expect(handlers.undo).not.toHaveBeenCalled();
    expect(handlers.toggleHelp).not.toHaveBeenCalled();
    expect(box.activeId).toBe('select');
    expect(isTypingTarget({ tagName: 'BUTTON' })).toBe(false);
    expect(isTypingTarget(null)).toBe(false);
    // Keys another handler used (the stage's pan/zoom keys) are left alone.
    expect(handleCanvasKey(key('z', { ctrlKey: true, defaultPrevented: true }), handlers)).toBeNull();
  });

  it('tool letters switch tools; the switch drops an unfinished trace without dispatching', () => {
    const seen: string[] = [];
    box.onChange(() => seen.push(box.activeId));
    expect(handleCanvasKey(key(TOOL_KEYS.trace), handlers)).toBe('tool');
    expect(box.activeId).toBe('trace');
    s.store.select('b1', 'c1');
    box.click(at(10, 10));
    box.click(at(30, 10));
    expect(box.tools.trace.pending).toHaveLength(2);
    // Tool sub-keys go to the active tool first: Backspace removes a vertex.
    expect(handleCanvasKey(key('Backspace'), handlers)).toBe('tool');
    expect(box.tools.trace.pending).toHaveLength(1);
    handleCanvasKey(key(TOOL_KEYS.ruler.toUpperCase()), handlers);
    expect(box.activeId).toBe('ruler');
    expect(box.tools.trace.pending).toEqual([]);
    expect(s.dispatched).toEqual([]);
    expect(seen.indexOf('trace')).toBeLessThan(seen.indexOf('ruler'));
    expect(seen).toContain('ruler');
    // Ctrl + a tool letter is not a tool switch.
    expect(handleCanvasKey(key(TOOL_KEYS.edit, { ctrlKey: true }), handlers)).toBeNull();
    expect(box.activeId).toBe('ruler');
  });

  it('every tool has its own single key, listed in the help', () => {
    const keys = TOOL_IDS.map((t) => TOOL_KEYS[t]);
    expect(new Set(keys).size).toBe(TOOL_IDS.length);
    for (const k of keys) expect(k).toMatch(/^[a-z]$/);
    // Keys the section stage already uses (fit, zoom) stay free.
    for (const k of ['f', '0', '+', '-']) expect(keys).not.toContain(k);
    const listed = SHORTCUT_GROUPS[0].entries.flatMap((e) => e.keys);
    expect(listed.sort()).toEqual(keys.map((k) => k.toUpperCase()).sort());
  });

  it('the page keys (Note pin, Model, depth view) are single letters of their own, listed in the help', () => {
    const page = [NOTE_PIN_KEY, MODEL_KEY, DEPTH_VIEW_KEY];
    expect(new Set(page).size).toBe(3);
    const taken = new Set([...Object.values(TOOL_KEYS), 'f', '0', 'g', 'x', 'p', 'h']); // tools, fit, and the Trace tool's own letters
    for (const k of page) {
      expect(k).toMatch(/^[a-z]$/);
      expect(taken.has(k), k).toBe(false);
    }
    const listed = SHORTCUT_GROUPS.flatMap((g) => g.entries.flatMap((e) => e.keys));
    for (const k of page) expect(listed).toContain(k.toUpperCase());
  });
});
