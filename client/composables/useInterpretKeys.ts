/**
 * Keyboard of the interpret page: undo / redo, the shortcuts overlay, tool
 * letters and the active tool's own keys, Note pin keys first. Read-only
 * viewers get the Select and Ruler letters and Escape only. Keys stay with
 * an open dialog or drawer, and a focused control keeps its own keys (Enter
 * presses a button, never also finishes a trace).
 */
import { onBeforeUnmount, onMounted, ref, type Ref } from 'vue';
import { TOOL_KEYS } from '../canvas/tools/toolbox';
import type { ToolKey } from '../canvas/tools/types';
import { handleCanvasKey } from './useCanvasShortcuts';

/** Keys a focused button, switch or list in the side panels uses itself. */
export const CONTROL_KEYS = new Set(['Enter', ' ', 'Backspace', 'Delete', 'Escape', 'Tab', 'Home', 'End', 'ArrowUp', 'ArrowDown', 'ArrowLeft', 'ArrowRight']);

export interface InterpretKeysArgs {
  canEdit: Ref<boolean>;
  /** True while a dialog or drawer of the page holds the keyboard. */
  blocked: () => boolean;
  /** The side panels (Ledger, Readings): a focused control there keeps CONTROL_KEYS. */
  sideEl: Ref<HTMLElement | null>;
  tools: { keyDown(e: ToolKey): boolean };
  /** Note pin keys (placing, Escape) go first. */
  discussionKey: (e: ToolKey) => boolean;
  undo: () => void;
  redo: () => void;
}

export function useInterpretKeys(a: InterpretKeysArgs) {
  const showHelp = ref(false);

  function toolKey(e: ToolKey): boolean {
    if (a.discussionKey(e)) return true;
    if (!a.canEdit.value) {
      // Read-only: only the Select and Ruler letters and their own keys (Esc).
      const k = e.key.toLowerCase();
      if (k === TOOL_KEYS.select || k === TOOL_KEYS.ruler) return a.tools.keyDown(e);
      if (e.key === 'Escape') return a.tools.keyDown(e);
      return false;
    }
    return a.tools.keyDown(e);
  }

  function onKeyDown(e: KeyboardEvent): void {
    if (a.blocked()) return;
    const target = e.target as HTMLElement | null;
    if (target?.closest?.('.n-modal, .n-drawer, .n-base-select-menu, .n-popover, .n-popconfirm')) return;
    // Tool letters, digits, undo / redo and ? still reach the canvas from a focused control.
    // Typing into fields is left alone (handleCanvasKey).
    const onControl = !!target && target !== document.body && (!!a.sideEl.value?.contains(target) || target.tagName === 'BUTTON' || target.getAttribute('role') === 'switch');
    if (onControl && CONTROL_KEYS.has(e.key)) return;
    handleCanvasKey(e, {
      undo: () => a.canEdit.value && a.undo(),
      redo: () => a.canEdit.value && a.redo(),
      toggleHelp: () => (showHelp.value = !showHelp.value),
      toolKey,
    });
  }

  onMounted(() => window.addEventListener('keydown', onKeyDown));
  onBeforeUnmount(() => window.removeEventListener('keydown', onKeyDown));

  return { showHelp };
}
