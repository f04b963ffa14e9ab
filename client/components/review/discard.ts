/**
 * After a save was refused because the buildup is signed off: put the
 * server's (signed-off) copy back in place of the refused local change — a
 * recorded action, so undo brings the local copy back — and let the autosave
 * engine settle (nothing left to save clears its error).
 */
import { getBuildup } from '../../api/buildups';
import { replaceWithSavedAction, type AutosaveEngine } from '../../composables/useAutosave';
import type { useInterpretationStore } from '../../stores/interpretation';

export async function restoreSignedOffCopy(store: ReturnType<typeof useInterpretationStore>, engine: Pick<AutosaveEngine, 'flush'>, id: string, serverId: number): Promise<void> {
  const current = await getBuildup(serverId);
  store.dispatch(replaceWithSavedAction(id, current));
  store.markSaved(id, current.version, { serverId: current.id });
  await engine.flush({ force: true });
}
