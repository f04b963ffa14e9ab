/**
 * Review on the interpret page: the selected buildup's review state, an older
 * kept version on view (drawn instead of the working copy), and the lock that
 * makes the canvas read-only while the buildup is signed off or a version is
 * on view. A sign-off that kept a new version moves the working copy's
 * version number along.
 */
import { computed, ref, watch, type ComputedRef } from 'vue';
import { fromGeometry } from '../../shared/editor/model';
import type { ReviewInfo } from '../../shared/schemas/review';
import type { EditorBuildup } from '../canvas/model';
import type { useInterpretationStore } from '../stores/interpretation';
import { useReview, useVersion } from './useReview';

/**
 * The version number the working copy `b` takes from its review `r`, or null
 * to keep its own. Only a signed-off version that repeats the copy's geometry
 * is followed: one kept at sign-off (a new velocity model or Ties) after the
 * very version the copy holds, and only while the copy has no unsaved edits.
 * Any other newer version is someone else's save: following its number would
 * let the next save overwrite their change unseen, so that save meets the
 * conflict instead.
 */
export function keptBySignOff(
  r: Pick<ReviewInfo, 'buildupId' | 'signedOff'>,
  b: Pick<EditorBuildup, 'id' | 'serverId' | 'version'>,
  dirtyIds: readonly string[],
): number | null {
  const s = r.signedOff;
  if (!s || b.serverId !== r.buildupId || dirtyIds.includes(b.id)) return null;
  return b.version >= s.savedVersion && b.version < s.version ? s.version : null;
}

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
    () => info.value,
    (r) => {
      const b = a.selectedBuildup.value;
      const v = r && b ? keptBySignOff(r, b, a.store.dirtyBuildupIds) : null;
      if (v !== null && b) a.store.markSaved(b.id, v);
    },
  );
  /** Signed off, or an older version on view: nobody edits the canvas. */
  const locked = computed(() => info.value?.state === 'signed_off' || viewingVersion.value !== null);

  return { reviewId, info, refetch: () => void query.refetch(), showDrawer, viewingVersion, viewedVersion, viewedBuildups, locked };
}
