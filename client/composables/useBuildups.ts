/**
 * vue-query hooks over client/api/buildups.ts: the section's buildup list
 * (loaded into the interpretation store) and its velocity model. Keys live in
 * `buildupKeys`. Saving, creating and deleting buildups is the autosave
 * engine's work (useAutosave.ts, over the same API functions), so there are
 * no mutation hooks for them here.
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/vue-query';
import { computed, toValue, type MaybeRefOrGetter } from 'vue';
import type { VelocityModel } from '../canvas/model';
import { getVelocity, listBuildups, putVelocity, type VelocityInfo } from '../api/buildups';

export const buildupKeys = {
  all: ['buildups'] as const,
  list: (sectionId: number) => ['buildups', 'list', sectionId] as const,
  /** Prefix of every buildup's server measurements (a velocity change invalidates them). */
  measurements: ['buildups', 'measurements'] as const,
  velocity: (sectionId: number) => ['sections', 'velocity', sectionId] as const,
};

const validId = (id: number | null | undefined): id is number => typeof id === 'number' && Number.isInteger(id) && id > 0;

/**
 * The section's buildups with their geometry (feed them to the interpretation
 * store's `load`). Fetched once each time a page asks for the section: the
 * editor owns the working copy from then on, so the list never refetches in
 * the background, is not retried, and leaves the cache as soon as no page
 * watches it (a later visit fetches what autosave stored meanwhile).
 */
export function useBuildupList(sectionId: MaybeRefOrGetter<number>, enabled: MaybeRefOrGetter<boolean> = true) {
  return useQuery({
    queryKey: computed(() => buildupKeys.list(toValue(sectionId))),
    queryFn: ({ signal }) => listBuildups(toValue(sectionId), signal),
    enabled: computed(() => validId(toValue(sectionId)) && toValue(enabled)),
    staleTime: Infinity,
    gcTime: 0,
    retry: false,
  });
}

export function useSectionVelocity(sectionId: MaybeRefOrGetter<number>) {
  return useQuery({
    queryKey: computed(() => buildupKeys.velocity(toValue(sectionId))),
    queryFn: ({ signal }) => getVelocity(toValue(sectionId), signal),
    enabled: computed(() => validId(toValue(sectionId))),
  });
}

/** Store the section's velocity model; every buildup's server measurements change with it. */
export function usePutVelocity(sectionId: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ velocity, baseUpdatedAt }: { velocity: VelocityModel; baseUpdatedAt: string | null }) => putVelocity(toValue(sectionId), velocity, baseUpdatedAt),
    onSuccess: (info: VelocityInfo) => {
      qc.setQueryData(buildupKeys.velocity(toValue(sectionId)), info);
      void qc.invalidateQueries({ queryKey: buildupKeys.measurements });
    },
  });
}
