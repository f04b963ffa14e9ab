/**
 * Vue glue of trace assist for the interpret page: gives the Trace tool a
 * backend (Web Worker + the section's full-resolution tiles) while the open
 * section has a tile pyramid (a SEG-Y section's true amplitudes when it is
 * one), and exposes the mode and phase for the tool
 * strip.
 *
 *   const assist = useTraceAssist(tools, () => section.value);
 *   <ToolBar … :trace-mode="assist.mode.value" :trace-phase="assist.phase.value"
 *            @update:trace-mode="assist.setMode" @update:trace-phase="assist.setPhase" />
 */
import { onBeforeUnmount, ref, watch } from 'vue';
import type { SectionDetail } from '../../../shared/schemas/sections';
import type { Phase } from '../../../shared/trace-assist/source';
import type { CanvasTools } from '../tools/useCanvasTools';
import type { TraceMode } from './assistedTrace';
import { getAmplitudes } from '../../api/segy';
import { WorkerAssistBackend, polarityFromNote } from './backend';

export function useTraceAssist(tools: CanvasTools, section: () => Pick<SectionDetail, 'id' | 'tiles' | 'polarityNote' | 'segy'> | null | undefined) {
  const trace = tools.toolbox.tools.trace;
  const mode = ref<TraceMode | null>(null);
  const phase = ref<Phase>(trace.phase);
  let backend: WorkerAssistBackend | null = null;

  const refresh = () => {
    mode.value = trace.hasAssist ? trace.mode : null;
    phase.value = trace.phase;
  };
  const off = tools.toolbox.onChange(refresh);

  watch(
    () => {
      const s = section();
      return s?.tiles ? `${s.id}|${s.tiles.urlTemplate}|${s.tiles.width}|${s.polarityNote ?? ''}|${s.segy ? 'segy' : ''}` : '';
    },
    () => {
      const s = section();
      backend?.dispose();
      backend = null;
      if (s?.tiles && typeof Worker !== 'undefined') {
        const id = s.id;
        // A SEG-Y section: true amplitudes (positive = peak) instead of the grey picture.
        const amplitudes = s.segy ? (w: { trace: number; sample: number; traces: number; samples: number }, signal?: AbortSignal) => getAmplitudes(id, w, signal).then((a) => a.values) : undefined;
        backend = new WorkerAssistBackend(s.tiles, polarityFromNote(s.polarityNote), { amplitudes });
      }
      trace.setAssist(backend);
      refresh();
    },
    { immediate: true },
  );

  onBeforeUnmount(() => {
    off();
    trace.setAssist(null);
    backend?.dispose();
    backend = null;
  });

  return {
    /** null while no assist is available (no tiles yet). */
    mode,
    phase,
    setMode(m: TraceMode): void {
      tools.setTool('trace');
      trace.setMode(m);
      refresh();
    },
    setPhase(p: Phase): void {
      trace.setPhase(p);
      refresh();
    },
  };
}
