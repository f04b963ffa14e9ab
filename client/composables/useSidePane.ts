/**
 * The width of the interpret page's side pane (Ledger and Readings): a
 * resizable split (drag its left edge) with a "wide Readings" toggle that
 * gives the per-cycle table all the room it needs (issue #13: at 1440 × 900
 * the whole table shows without sideways scrolling). The width is kept per
 * browser in localStorage.
 */
import { computed, ref } from 'vue';

/** Narrowest side pane, and its default. */
export const SIDE_MIN = 300;
export const SIDE_DEFAULT = 360;
/** The canvas never gets narrower than this. */
export const STAGE_MIN = 260;
/**
 * The wide Readings: the per-cycle table's columns (ReadingsPanel: 1,004 px
 * with the aggradation-rate column) plus the pane's padding, border and a
 * scroll bar.
 */
export const READINGS_WIDE = 1056;

/** The side width to use for a wanted one in a work area `available` px wide (tool strip included). */
export function sideWidthFor(wanted: number, available: number, strip = 52): number {
  const max = Math.max(SIDE_MIN, available - strip - STAGE_MIN);
  return Math.round(Math.min(max, Math.max(SIDE_MIN, wanted)));
}

const STORE_KEY = 'cayline.interpret.sideWidth';

export function useSidePane(a: { available: () => number }) {
  const saved = Number(globalThis.localStorage?.getItem(STORE_KEY));
  const wanted = ref(Number.isFinite(saved) && saved >= SIDE_MIN ? saved : SIDE_DEFAULT);
  const width = computed(() => sideWidthFor(wanted.value, a.available() || 1440));
  const wide = computed(() => wanted.value >= READINGS_WIDE);
  const dragging = ref(false);

  function set(w: number): void {
    wanted.value = Math.max(SIDE_MIN, Math.round(w));
    try {
      globalThis.localStorage?.setItem(STORE_KEY, String(wanted.value));
    } catch {
      /* private mode: not kept */
    }
  }

  function toggleWide(): void {
    set(wide.value ? SIDE_DEFAULT : READINGS_WIDE);
  }

  /** Drag the split: the pane's left edge follows the pointer. */
  function startDrag(e: PointerEvent): void {
    const el = e.currentTarget as HTMLElement;
    const startX = e.clientX;
    const startW = width.value;
    dragging.value = true;
    el.setPointerCapture(e.pointerId);
    const move = (ev: PointerEvent) => set(sideWidthFor(startW + (startX - ev.clientX), a.available() || 1440));
    const up = () => {
      dragging.value = false;
      el.removeEventListener('pointermove', move);
      el.removeEventListener('pointerup', up);
      el.removeEventListener('pointercancel', up);
    };
    el.addEventListener('pointermove', move);
    el.addEventListener('pointerup', up);
    el.addEventListener('pointercancel', up);
    e.preventDefault();
  }

  /** Arrow keys on the split move it by 24 px (48 with Shift). */
  function onKey(e: KeyboardEvent): void {
    const step = e.shiftKey ? 48 : 24;
    if (e.key === 'ArrowLeft') set(sideWidthFor(width.value + step, a.available() || 1440));
    else if (e.key === 'ArrowRight') set(sideWidthFor(width.value - step, a.available() || 1440));
    else return;
    e.preventDefault();
  }

  return { width, wide, dragging, toggleWide, startDrag, onKey, style: computed(() => ({ '--cay-side-w': `${width.value}px` })) };
}

export type SidePane = ReturnType<typeof useSidePane>;
