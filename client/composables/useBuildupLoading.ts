/**
 * Loads a section's buildups into the interpretation store (through the
 * `useBuildupList` query) once the section can be interpreted, and selects
 * the one a review link asks for (`?buildup=`) or the first. Another section
 * starts clean: the store is emptied and `onSwitch` runs (autosave and the
 * server check reset there).
 */
import { computed, ref, toValue, watch, type MaybeRefOrGetter } from 'vue';
import { useRoute } from 'vue-router';
import { errorMessage } from '../api/http';
import type { useInterpretationStore } from '../stores/interpretation';
import { useBuildupList } from './useBuildups';

export interface BuildupLoadingArgs {
  sectionId: MaybeRefOrGetter<number>;
  /** True once the section is ready and calibrated. */
  canLoad: MaybeRefOrGetter<boolean>;
  store: Pick<ReturnType<typeof useInterpretationStore>, 'load' | 'select'>;
  onSwitch?: () => void;
}

export function useBuildupLoading(a: BuildupLoadingArgs) {
  const route = useRoute();
  /** The section whose buildups are in the store (autosave waits for it). */
  const loadedFor = ref<number | null>(null);
  const list = useBuildupList(
    () => toValue(a.sectionId),
    () => toValue(a.canLoad) && loadedFor.value !== toValue(a.sectionId),
  );

  watch(
    () => toValue(a.sectionId),
    (_id, old) => {
      a.store.load([]);
      loadedFor.value = null;
      if (old !== undefined) a.onSwitch?.();
    },
    { immediate: true },
  );

  watch(
    () => list.data.value,
    (records) => {
      const id = toValue(a.sectionId);
      if (!records || loadedFor.value === id) return;
      a.store.load(records);
      loadedFor.value = id;
      const asked = records.find((r) => r.id === Number(route.query.buildup)); // `?buildup=` of a review link
      if (records.length) a.store.select(String((asked ?? records[0]).id));
    },
    { immediate: true },
  );

  const loading = computed(() => list.isFetching.value);
  const loadFailed = computed(() => (list.error.value && !list.isFetching.value ? errorMessage(list.error.value, 'The buildups could not be loaded.') : null));
  const retry = () => void list.refetch();

  return { loadedFor, loading, loadFailed, retry };
}
