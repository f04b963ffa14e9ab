/**
 * The server's confirmation of the live Readings: after a save (or when
 * content the server already holds is selected) the server's numbers for the
 * saved buildup are fetched and compared with the browser's. An edit or
 * another selection voids the last confirmation; only the newest check
 * counts.
 */
import { reactive, watch, type ComputedRef, type Ref } from 'vue';
import type { MeasurementOutput } from '../../shared/measure/index';
import { getMeasurements } from '../api/buildups';
import { errorMessage, isApiError } from '../api/http';
import { sameContent } from '../canvas/history';
import type { EditorBuildup } from '../canvas/model';
import type { ServerState } from '../components/readings/ReadingsPanel.vue';
import type { useInterpretationStore } from '../stores/interpretation';
import { compareWithServer } from './serverCompare';
import type { LiveReadings } from './useLiveReadings';

export interface ServerCheckArgs {
  store: Pick<ReturnType<typeof useInterpretationStore>, 'buildupById' | 'selection' | 'dirtyBuildupIds'>;
  live: Pick<LiveReadings, 'flush' | 'output' | 'issues'>;
  selectedBuildup: ComputedRef<EditorBuildup | null>;
  canEdit: Ref<boolean>;
}

export function useServerCheck(a: ServerCheckArgs) {
  const { store, live } = a;
  const check = reactive<{ state: ServerState; mismatches: string[]; error: string | null }>({ state: 'idle', mismatches: [], error: null });
  let seq = 0;

  /** Still the content that was saved as `snapshot` (server metadata aside)? */
  const unchangedSince = (id: string, snapshot: EditorBuildup) => {
    const now = store.buildupById(id);
    return !!now && store.selection.buildupId === id && !store.dirtyBuildupIds.includes(id) && sameContent(now, snapshot);
  };

  async function confirm(id: string, serverId: number, snapshot: EditorBuildup): Promise<void> {
    if (!unchangedSince(id, snapshot)) return; // edited since: the next save checks again
    await live.flush(); // the Readings run in a Web Worker: wait for the newest pass
    if (!live.output.value) {
      check.state = 'idle';
      return;
    }
    const mine = ++seq;
    check.state = 'pending';
    try {
      const server = await getMeasurements(serverId);
      if (mine !== seq || !unchangedSince(id, snapshot)) return;
      await live.flush();
      if (mine !== seq || !unchangedSince(id, snapshot)) return;
      const local: MeasurementOutput | null = live.output.value;
      if (!local) return;
      const diffs = compareWithServer(local, server);
      check.mismatches = diffs.map((d) => d.text);
      check.state = diffs.length ? 'mismatch' : 'confirmed';
      check.error = null;
    } catch (e) {
      if (mine !== seq) return;
      if (isApiError(e) && (e.status === 422 || e.status === 409)) {
        check.state = 'idle';
        return;
      }
      check.state = 'error';
      check.error = errorMessage(e, 'The server’s numbers could not be fetched.');
    }
  }

  // An edit of the selected buildup, or another selection, voids the last confirmation.
  watch(
    () => [store.selection.buildupId, a.selectedBuildup.value] as const,
    ([id, b], old) => {
      // A save only changes the version: not an edit.
      if (old && old[0] === id && b && old[1] && sameContent(old[1], b)) return;
      seq++;
      if (!b || live.issues.value.length || !a.canEdit.value) {
        check.state = 'idle';
        return;
      }
      // Content the server already holds (a newly selected buildup, an undo back to the saved state,
      // the saved version loaded after a conflict): check it now; otherwise the next save will.
      if (b.serverId !== undefined && !store.dirtyBuildupIds.includes(b.id)) {
        const sid = b.serverId;
        setTimeout(() => void confirm(b.id, sid, b), 0);
        return;
      }
      check.state = 'pending';
    },
  );

  return { check, confirm, reset: () => (check.state = 'idle') };
}
