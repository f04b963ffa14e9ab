/**
 * The section's velocity model on the interpret page: the stored model (or
 * the house default), the editor drawer's draft and its save.
 *
 * The save names the stored model the draft started from; when someone else
 * saved another one meanwhile, nothing is overwritten: the drawer stays open
 * with the person's draft and offers to load theirs or to save this one over
 * it. A model that arrives from the server while the drawer is open never
 * replaces the draft being edited.
 */
import { useQueryClient } from '@tanstack/vue-query';
import { ref, shallowRef, toValue, watch, computed, type MaybeRefOrGetter } from 'vue';
import { velocityConflict, type VelocityInfo } from '../api/buildups';
import { errorMessage } from '../api/http';
import type { VelocityModel } from '../canvas/model';
import { message } from './feedback';
import { buildupKeys, usePutVelocity, useSectionVelocity } from './useBuildups';

export function useVelocityEditing(sectionId: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  const query = useSectionVelocity(() => toValue(sectionId));
  const info = computed(() => query.data.value ?? null);
  const put = usePutVelocity(() => toValue(sectionId));
  const show = ref(false);
  const draft = shallowRef<VelocityModel | null>(info.value?.velocity ?? null);
  /** `updatedAt` of the stored model the draft started from (null: the default). */
  const base = ref<string | null>(info.value?.updatedAt ?? null);
  /** The model someone else saved after the draft started, when a save met it. */
  const conflict = shallowRef<VelocityInfo | null>(null);

  let startedWith: VelocityModel | null = null;
  function startFrom(v: VelocityInfo): void {
    draft.value = startedWith = v.velocity;
    base.value = v.updatedAt;
    conflict.value = null;
  }
  watch(info, (v) => {
    if (v && !show.value) startFrom(v);
  });
  // Opening the editor starts from the stored model (an unsaved draft from before is dropped), read again:
  // a newer one replaces it while nothing is typed yet (after that, the save meets it as a conflict).
  watch(show, (open) => {
    if (!open) return;
    if (info.value) startFrom(info.value);
    void query.refetch().then(({ data: v }) => {
      if (v && show.value && !conflict.value && v.updatedAt !== base.value && draft.value === startedWith) startFrom(v);
    });
  });

  async function save(model: VelocityModel): Promise<void> {
    try {
      startFrom(await put.mutateAsync({ velocity: model, baseUpdatedAt: base.value }));
      message.success('Velocity model saved. The Readings use it now.');
      show.value = false;
    } catch (e) {
      const current = velocityConflict(e);
      if (current) {
        draft.value = model; // kept: nothing typed is lost
        conflict.value = current;
        qc.setQueryData(buildupKeys.velocity(toValue(sectionId)), current);
        return;
      }
      message.error(errorMessage(e, 'The velocity model could not be saved.'));
    }
  }
  /** Conflict: put the other person's model in the editor (the draft is dropped). */
  function loadTheirs(): void {
    if (conflict.value) startFrom(conflict.value);
  }
  /** Conflict: save the draft over the other person's model, knowingly. */
  async function saveMine(): Promise<void> {
    const c = conflict.value;
    if (!c || !draft.value) return;
    base.value = c.updatedAt;
    await save(draft.value);
  }

  return { info, show, draft, conflict, saving: computed(() => put.isPending.value), save, loadTheirs, saveMine, refetch: () => query.refetch() };
}
