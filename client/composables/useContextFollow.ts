/**
 * The velocity model and the Ties behind an open interpret page can change
 * under it: someone else saves them, or this person does in the drawer.
 *
 * - When the server's numbers disagree with the Readings, the page reads the
 *   velocity model and the section (its Ties) again: a change made elsewhere
 *   is the usual reason.
 * - When either has changed, the person is told who changed the velocity
 *   model (unless it was them), and the selected buildup is checked against
 *   the server again once the Readings use the new context.
 *
 * Plain getters and callbacks in, so tests drive it without a browser.
 */
import { watch } from 'vue';

export interface ContextFollowArgs {
  /** State of the server's confirmation of the Readings. */
  checkState: () => string;
  /** Read the velocity model and the section again. */
  refetch: () => Promise<unknown>;
  velocity: () => { updatedAt: string | null; updatedBy: { id: number; name: string } | null } | null;
  calibrationVersion: () => number | null;
  meId: () => number | null;
  /** Check the selected buildup against the server again (the Readings have the new context by then). */
  recheck: () => void;
  notify: (text: string) => void;
}

export function useContextFollow(a: ContextFollowArgs) {
  let reading = false;
  watch(a.checkState, (s) => {
    if (s !== 'mismatch' || reading) return;
    reading = true;
    void a.refetch().finally(() => (reading = false));
  });

  let known: { velocityAt: string | null; calibration: number | null } | null = null;
  watch(
    () => [a.velocity(), a.calibrationVersion()] as const,
    ([v, calibration]) => {
      if (!v) return;
      const before = known;
      known = { velocityAt: v.updatedAt, calibration };
      if (!before) return; // the first look: nothing changed
      const velocityChanged = v.updatedAt !== before.velocityAt;
      const tiesChanged = calibration !== before.calibration;
      if (!velocityChanged && !tiesChanged) return;
      if (velocityChanged && v.updatedBy && v.updatedBy.id !== a.meId()) a.notify(`${v.updatedBy.name} changed the velocity model of this section; the Readings use it now.`);
      if (tiesChanged && before.calibration !== null) a.notify(`The Ties of this section changed (calibration v${calibration}); the Readings use them now.`);
      setTimeout(a.recheck, 0); // after the Readings have been told of the new context
    },
    { immediate: true },
  );
}
