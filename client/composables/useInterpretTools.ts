/**
 * The canvas tools of the interpret page: useCanvasTools over a store that
 * refuses changes for people who may not edit (Select and Ruler stay theirs),
 * and the drag in progress on the stage (the full Readings pass and autosave
 * wait for its end; `onDragEnd` runs when the pointer is released).
 */
import { onBeforeUnmount, onMounted, ref, watch, type Ref } from 'vue';
import type { Action } from '../canvas/actions';
import type { RulerContext } from '../canvas/tools/ruler';
import { useCanvasTools } from '../canvas/tools/useCanvasTools';
import type { useInterpretationStore } from '../stores/interpretation';

/** The tools a read-only viewer keeps. */
export const READONLY_TOOLS = new Set(['select', 'ruler']);

export function useInterpretTools(a: {
  store: ReturnType<typeof useInterpretationStore>;
  canEdit: Ref<boolean>;
  scale: () => number;
  rulerContext: () => RulerContext | null;
  onDragEnd: () => void;
}) {
  const { store } = a;
  /** The tools see a store that refuses changes for people who may not edit. */
  const toolStore = {
    get doc() {
      return store.doc;
    },
    get selection() {
      return store.selection;
    },
    dispatch: (act: Action) => (a.canEdit.value ? store.dispatch(act) : false),
    select: (b: string | null, c?: string | null, el?: Parameters<typeof store.select>[2]) => store.select(b, c ?? null, el ?? null),
    endGesture: () => store.endGesture(),
    setTool: store.setTool,
  };
  const tools = useCanvasTools({ store: toolStore, scale: a.scale, rulerContext: a.rulerContext });
  watch(a.canEdit, (ok) => {
    if (!ok && !READONLY_TOOLS.has(tools.active.value)) tools.setTool('select');
  });

  const dragging = ref(false);
  function onStagePointerDown(): void {
    dragging.value = true;
  }
  function onWindowPointerUp(): void {
    if (!dragging.value) return;
    dragging.value = false;
    a.onDragEnd();
  }
  onMounted(() => window.addEventListener('pointerup', onWindowPointerUp));
  onBeforeUnmount(() => window.removeEventListener('pointerup', onWindowPointerUp));

  return { tools, dragging, onStagePointerDown };
}
