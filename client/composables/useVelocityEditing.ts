/**
 * The section's velocity model on the interpret page: the stored model (or
 * the house default), the editor drawer's draft and its save.
 */
import { ref, shallowRef, toValue, watch, computed, type MaybeRefOrGetter } from 'vue';
import { errorMessage } from '../api/http';
import type { VelocityModel } from '../canvas/model';
import { message } from './feedback';
import { usePutVelocity, useSectionVelocity } from './useBuildups';

export function useVelocityEditing(sectionId: MaybeRefOrGetter<number>) {
  const query = useSectionVelocity(() => toValue(sectionId));
  const info = computed(() => query.data.value ?? null);
  const put = usePutVelocity(() => toValue(sectionId));
  const show = ref(false);
  const draft = shallowRef<VelocityModel | null>(info.value?.velocity ?? null);
  watch(info, (v) => {
    if (v) draft.value = v.velocity;
  });
  // Opening the editor starts from the stored model (an unsaved draft from before is dropped).
  watch(show, (open) => {
    if (open && info.value) draft.value = info.value.velocity;
  });

  async function save(model: VelocityModel): Promise<void> {
    try {
      await put.mutateAsync(model);
      message.success('Velocity model saved. The Readings use it now.');
      show.value = false;
    } catch (e) {
      message.error(errorMessage(e, 'The velocity model could not be saved.'));
    }
  }

  return { info, show, draft, saving: computed(() => put.isPending.value), save };
}
