/**
 * Keyboard shortcuts of the interpretation canvas: undo / redo, the help
 * overlay, tool letters and the active tool's own keys (Enter, Esc,
 * Backspace, Delete, 1–4).
 *
 * Keys typed into inputs, text areas, selects and editable content are left
 * alone, and so are keys another handler already used (defaultPrevented, e.g.
 * the section stage's own pan/zoom keys).
 */
import { onBeforeUnmount, onMounted, toValue, type MaybeRefOrGetter } from 'vue';
import type { ToolKey } from '../canvas/tools/types';

export type CanvasCommand = 'undo' | 'redo' | 'help';

/** Duck-typed key event (a DOM KeyboardEvent fits). */
export interface KeyEventLike {
  key: string;
  shiftKey?: boolean;
  ctrlKey?: boolean;
  metaKey?: boolean;
  altKey?: boolean;
  target?: unknown;
  defaultPrevented?: boolean;
  isComposing?: boolean;
  preventDefault?(): void;
}

const TYPING_TAGS = new Set(['INPUT', 'TEXTAREA', 'SELECT']);

/** True when the key was typed into a text field or editable content. */
export function isTypingTarget(target: unknown): boolean {
  if (!target || typeof target !== 'object') return false;
  const t = target as { tagName?: string; isContentEditable?: boolean; getAttribute?(n: string): string | null; closest?(s: string): unknown };
  if (t.tagName && TYPING_TAGS.has(t.tagName.toUpperCase())) return true;
  if (t.isContentEditable) return true;
  if (t.getAttribute?.('role') === 'textbox') return true;
  if (typeof t.closest === 'function' && t.closest('[contenteditable=""], [contenteditable="true"]')) return true;
  return false;
}

/** Undo / redo / help from a key event, or null. */
export function resolveCommand(e: KeyEventLike): CanvasCommand | null {
  const mod = !!(e.ctrlKey || e.metaKey);
  const k = e.key.length === 1 ? e.key.toLowerCase() : e.key;
  if (mod && !e.altKey && k === 'z') return e.shiftKey ? 'redo' : 'undo';
  if (mod && !e.altKey && !e.shiftKey && k === 'y') return 'redo';
  if (!mod && !e.altKey && e.key === '?') return 'help';
  return null;
}

export interface CanvasShortcutHandlers {
  undo(): void;
  redo(): void;
  toggleHelp(): void;
  /** The active tool / tool letters (Toolbox.keyDown); true when used. */
  toolKey?(e: ToolKey): boolean;
}

/**
 * Handle one key event. Returns what was done ('undo' | 'redo' | 'help' |
 * 'tool') or null when the key was not ours; calls preventDefault when used.
 */
export function handleCanvasKey(e: KeyEventLike, h: CanvasShortcutHandlers): CanvasCommand | 'tool' | null {
  if (e.defaultPrevented || e.isComposing || isTypingTarget(e.target)) return null;
  const cmd = resolveCommand(e);
  if (cmd) {
    if (cmd === 'undo') h.undo();
    else if (cmd === 'redo') h.redo();
    else h.toggleHelp();
    e.preventDefault?.();
    return cmd;
  }
  if (h.toolKey?.({ key: e.key, shift: !!e.shiftKey, ctrl: !!e.ctrlKey, meta: !!e.metaKey, alt: !!e.altKey })) {
    e.preventDefault?.();
    return 'tool';
  }
  return null;
}

/** Listen on the window while the component is mounted (and `enabled` is true). */
export function useCanvasShortcuts(h: CanvasShortcutHandlers, opts: { enabled?: MaybeRefOrGetter<boolean> } = {}): void {
  const onKey = (e: KeyboardEvent) => {
    if (opts.enabled !== undefined && !toValue(opts.enabled)) return;
    handleCanvasKey(e, h);
  };
  onMounted(() => window.addEventListener('keydown', onKey));
  onBeforeUnmount(() => window.removeEventListener('keydown', onKey));
}
