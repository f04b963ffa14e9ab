/**
 * Autosave on the interpret page: saving while an editor works on a loaded
 * section, the conflict dialog and its resolution, the save chip's click,
 * putting the signed-off copy back after a refused save, and the guard that
 * saves (or asks) before the person leaves the page or the section.
 */
import { computed, ref, watch } from 'vue';
import { onBeforeRouteLeave, onBeforeRouteUpdate } from 'vue-router';
import type { EditorBuildup } from '../canvas/model';
import { restoreSignedOffCopy } from '../components/review/discard';
import type { useInterpretationStore } from '../stores/interpretation';
import { message } from './feedback';
import { useAutosave } from './useAutosave';

export interface InterpretAutosaveArgs {
  store: ReturnType<typeof useInterpretationStore>;
  sectionId: () => number;
  enabled: () => boolean;
  busy: () => boolean;
  onSaved: (id: string, serverId: number, snapshot: EditorBuildup) => void;
  /** Server id of the selected buildup's review, and a way to read its state again. */
  review: { reviewId: () => number | null; refetch: () => void };
  selectedBuildup: () => EditorBuildup | null;
}

export function useInterpretAutosave(a: InterpretAutosaveArgs) {
  const autosave = useAutosave({ store: a.store, sectionId: a.sectionId, enabled: a.enabled, busy: a.busy, onSaved: a.onSaved });
  const conflict = computed(() => autosave.status.value.conflicts[0] ?? null);
  // A refused save (e.g. 409 signed_off by a reviewer meanwhile): look at the review state again.
  watch(
    () => autosave.status.value.error,
    (e) => e && a.review.reviewId() && a.review.refetch(),
  );
  function restoreSignedOff(): void {
    const b = a.selectedBuildup();
    const rid = a.review.reviewId();
    if (b && rid) void restoreSignedOffCopy(a.store, autosave.engine, b.id, rid);
  }

  const showConflict = ref(false);
  const resolving = ref(false);
  watch(conflict, (c, old) => {
    if (c && c !== old) showConflict.value = true;
    if (!c) showConflict.value = false;
  });
  async function resolve(id: string, choice: 'theirs' | 'mine'): Promise<void> {
    resolving.value = true;
    try {
      await autosave.resolve(id, choice);
      if (choice === 'theirs') message.info('The saved version is on the canvas. Ctrl+Z brings your copy back.', { duration: 6000 });
    } finally {
      resolving.value = false;
    }
  }
  function onChip(): void {
    if (autosave.state.value === 'conflict') showConflict.value = true;
    else if (autosave.state.value === 'error') void autosave.flush();
  }

  /** Before leaving (or switching section): save what waits, and ask when something is still not saved. */
  async function guardLeave(): Promise<boolean> {
    if (!autosave.unsafeToLeave.value) return true;
    if (autosave.state.value === 'dirty' || autosave.state.value === 'saving') await autosave.flush();
    if (!autosave.unsafeToLeave.value) return true;
    return window.confirm('Some changes are not saved yet. Leave anyway and lose them?');
  }
  onBeforeRouteLeave(guardLeave);
  onBeforeRouteUpdate(guardLeave);

  return { autosave, conflict, showConflict, resolving, resolve, onChip, restoreSignedOff };
}
