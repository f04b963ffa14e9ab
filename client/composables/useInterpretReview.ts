/**
 * Review on the interpret page: the selected buildup's review state, an older
 * kept version on view (drawn instead of the working copy), and the lock that
 * makes the canvas read-only while the buildup is signed off or a version is
 * on view. A sign-off that kept a new version moves the working copy's
 * version number along.
 */
import { computed, ref, watch, type ComputedRef } from 'vue';
import { fromGeometry } from '../../shared/editor/model';
import type { EditorBuildup } from '../canvas/model';
import type { useInterpretationStore } from '../stores/interpretation';
import { useReview, useVersion } from './useReview';

export function useInterpretReview(a: {
  store: Pick<ReturnType<typeof useInterpretationStore>, 'dirtyBuildupIds' | 'markSaved'>;
  selectedBuildup: ComputedRef<EditorBuildup | null>;
}) {
  const reviewId = computed(() => a.selectedBuildup.value?.serverId ?? null);
  const query = useReview(reviewId);
  const info = computed(() => (query.data.value?.buildupId === reviewId.value ? (query.data.value ?? null) : null));
  const showDrawer = ref(false);
  const viewingVersion = ref<number | null>(null);
  const viewedQuery = useVersion(reviewId, viewingVersion);
  const viewedVersion = computed(() =>
    viewingVersion.value !== null && viewedQuery.data.value?.version === viewingVersion.value ? viewedQuery.data.value : null,
  );
  const viewedBuildups = computed(() => {
    const v = viewedVersion.value;
    return v ? [fromGeometry({ id: v.buildupId, name: v.name, version: v.version, geometry: v.geometry })] : null;
  });
  watch(reviewId, () => (viewingVersion.value = null));
  // A sign-off may keep a new version (same geometry, the section's current velocity model and Ties): follow its number.
  watch(
    () => info.value?.version,
    (v) => {
      const b = a.selectedBuildup.value;
      if (v !== undefined && b && b.serverId === reviewId.value && b.version < v && !a.store.dirtyBuildupIds.includes(b.id)) a.store.markSaved(b.id, v);
    },
  );
  /** Signed off, or an older version on view: nobody edits the canvas. */
  const locked = computed(() => info.value?.state === 'signed_off' || viewingVersion.value !== null);

  return { reviewId, info, refetch: () => void query.refetch(), showDrawer, viewingVersion, viewedVersion, viewedBuildups, locked };
}
