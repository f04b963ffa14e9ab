/**
 * Vue glue for the canvas tools: a Toolbox over the interpretation store,
 * reactive `active` tool and `preview`, handlers to bind on SectionStage's
 * image-pixel pointer events, and the CSS cursor per tool.
 *
 *   const tools = useCanvasTools({ store, scale: () => stage.value?.viewport.view.scale ?? 1, rulerContext });
 *   <SectionStage :cursor="tools.cursor.value" :pan-with-left="true"
 *     @image-pointerdown="tools.stage.pointerdown" @image-pointermove="tools.stage.pointermove"
 *     @image-pointerup="tools.stage.pointerup" @image-click="tools.stage.click"
 *     @image-dblclick="tools.stage.dblclick" @image-pointerleave="tools.stage.pointerleave">
 *
 * A left drag pans unless the active tool takes it (a vertex, pin or stamp
 * under the pointer): then the handler calls `preventPan()`.
 */
import { computed, onBeforeUnmount, ref, shallowRef, watch } from 'vue';
import type { StagePointerEvent } from '../stageContext';
import type { TerminationType } from '../model';
import type { ToolName } from '../../stores/interpretation';
import { storeEnv, type StoreLike } from './storeEnv';
import { Toolbox } from './toolbox';
import type { RulerContext } from './ruler';
import type { MarginSideMode, ToolId, ToolPointer, ToolPreview, TraceTarget } from './types';

export interface UseCanvasToolsOptions {
  store: StoreLike & { setTool?(t: ToolName): void };
  /** Current zoom: screen px per image px. */
  scale: () => number;
  rulerContext?: () => RulerContext | null;
  radiusPx?: number;
  initial?: ToolId;
}

/** The store's coarser tool names, kept in step for other panels. */
export function storeToolName(id: ToolId, trace: TraceTarget): ToolName {
  switch (id) {
    case 'trace':
      return trace === 'base' ? 'traceBase' : trace === 'top' ? 'traceTop' : 'traceFlank';
    case 'marginPin':
      return 'marginPin';
    case 'stamp':
      return 'terminationStamp';
    case 'ruler':
      return 'ruler';
    default:
      return 'select';
  }
}

const CURSOR: Record<ToolId, string> = {
  select: 'default',
  edit: 'default',
  trace: 'crosshair',
  marginPin: 'crosshair',
  stamp: 'crosshair',
  ruler: 'crosshair',
};

export function useCanvasTools(opts: UseCanvasToolsOptions) {
  const box = new Toolbox(storeEnv(opts.store, opts.radiusPx !== undefined ? { radiusPx: opts.radiusPx } : {}), {
    ruler: { context: opts.rulerContext ?? (() => null) },
    initial: opts.initial,
  });
  const active = ref<ToolId>(box.activeId);
  const preview = shallowRef<ToolPreview>(box.preview);
  const traceTarget = ref<TraceTarget>(box.tools.trace.target);
  const stampType = ref<TerminationType>(box.tools.stamp.type);
  const marginMode = ref<MarginSideMode>(box.tools.marginPin.mode);
  const overHandle = ref(false);

  function refresh(): void {
    active.value = box.activeId;
    preview.value = box.preview;
    traceTarget.value = box.tools.trace.target;
    stampType.value = box.tools.stamp.type;
    marginMode.value = box.tools.marginPin.mode;
  }
  const off = box.onChange(refresh);
  onBeforeUnmount(off);

  watch(
    [active, traceTarget],
    ([a, t]) => opts.store.setTool?.(storeToolName(a, t)),
    { immediate: true },
  );

  function toPointer(e: StagePointerEvent): ToolPointer {
    const o = e.original;
    return { image: e.image, scale: opts.scale(), shift: o.shiftKey, alt: o.altKey, ctrl: o.ctrlKey, meta: o.metaKey };
  }

  const stage = {
    pointerdown(e: StagePointerEvent): void {
      if (box.pointerDown(toPointer(e))) e.preventPan();
    },
    pointermove(e: StagePointerEvent): void {
      box.pointerMove(toPointer(e));
      const p = box.preview;
      overHandle.value = p.kind === 'hover' && !!p.hit && p.hit.kind !== 'segment';
    },
    pointerup(e: StagePointerEvent): void {
      box.pointerUp(toPointer(e));
    },
    click(e: StagePointerEvent): void {
      box.click(toPointer(e));
    },
    dblclick(e: StagePointerEvent): void {
      box.doubleClick(toPointer(e));
    },
    pointerleave(): void {
      box.leave();
    },
  };

  const cursor = computed(() => (active.value === 'edit' && overHandle.value ? 'move' : CURSOR[active.value]));
  const message = computed(() => ('message' in preview.value ? preview.value.message : undefined) ?? null);

  return {
    toolbox: box,
    active,
    preview,
    traceTarget,
    stampType,
    marginMode,
    cursor,
    message,
    stage,
    setTool: (id: ToolId) => box.setTool(id),
    /** Choosing what to trace also switches to the Trace tool (likewise for stamp types and pin sides). */
    setTraceTarget: (t: TraceTarget) => {
      box.setTool('trace');
      box.tools.trace.setTarget(t);
      refresh();
    },
    setStampType: (t: TerminationType) => {
      box.setTool('stamp');
      box.tools.stamp.setType(t);
      refresh();
    },
    setMarginMode: (m: MarginSideMode) => {
      box.setTool('marginPin');
      box.tools.marginPin.setMode(m);
      refresh();
    },
    /** For useCanvasShortcuts' `toolKey`. */
    keyDown: (e: Parameters<Toolbox['keyDown']>[0]) => {
      const used = box.keyDown(e);
      if (used) refresh();
      return used;
    },
  };
}

export type CanvasTools = ReturnType<typeof useCanvasTools>;
