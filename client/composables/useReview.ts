/**
 * vue-query hooks over client/api/review.ts: a buildup's review (state,
 * sign-off, history, the transitions the signed-in person may take), its kept
 * versions, one version, and a version's measurements. A transition refreshes
 * the review, the versions and the section's buildup list.
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/vue-query';
import { computed, toValue, type MaybeRefOrGetter } from 'vue';
import { getReview, getVersion, getVersionMeasurements, listVersions, moveReview, type TransitionBody } from '../api/review';

export const reviewKeys = {
  review: (id: number) => ['review', id] as const,
  versions: (id: number) => ['review', id, 'versions'] as const,
  version: (id: number, v: number) => ['review', id, 'version', v] as const,
  measurements: (id: number, v: number) => ['review', id, 'measurements', v] as const,
};

const validId = (id: number | null | undefined): id is number => typeof id === 'number' && Number.isInteger(id) && id > 0;
const validVersion = (v: number | null | undefined): v is number => typeof v === 'number' && Number.isInteger(v) && v >= 0;

export function useReview(buildupId: MaybeRefOrGetter<number | null | undefined>) {
  return useQuery({
    queryKey: computed(() => reviewKeys.review(toValue(buildupId) ?? 0)),
    queryFn: ({ signal }) => getReview(toValue(buildupId)!, signal),
    enabled: computed(() => validId(toValue(buildupId))),
    // Someone else may move it (a reviewer signing off): look again now and then.
    refetchInterval: 15_000,
  });
}

export function useVersions(buildupId: MaybeRefOrGetter<number | null | undefined>, enabled: MaybeRefOrGetter<boolean> = true) {
  return useQuery({
    queryKey: computed(() => reviewKeys.versions(toValue(buildupId) ?? 0)),
    queryFn: ({ signal }) => listVersions(toValue(buildupId)!, signal),
    enabled: computed(() => validId(toValue(buildupId)) && toValue(enabled)),
  });
}

export function useVersion(buildupId: MaybeRefOrGetter<number | null | undefined>, version: MaybeRefOrGetter<number | null | undefined>) {
  return useQuery({
    queryKey: computed(() => reviewKeys.version(toValue(buildupId) ?? 0, toValue(version) ?? -1)),
    queryFn: ({ signal }) => getVersion(toValue(buildupId)!, toValue(version)!, signal),
    enabled: computed(() => validId(toValue(buildupId)) && validVersion(toValue(version))),
    staleTime: Infinity, // kept versions never change
  });
}

export function useVersionMeasurements(buildupId: MaybeRefOrGetter<number | null | undefined>, version: MaybeRefOrGetter<number | null | undefined>) {
  return useQuery({
    queryKey: computed(() => reviewKeys.measurements(toValue(buildupId) ?? 0, toValue(version) ?? -1)),
    queryFn: ({ signal }) => getVersionMeasurements(toValue(buildupId)!, toValue(version)!, {}, signal),
    enabled: computed(() => validId(toValue(buildupId)) && validVersion(toValue(version))),
    staleTime: Infinity,
    retry: false,
  });
}

export function useMoveReview(buildupId: MaybeRefOrGetter<number | null | undefined>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: TransitionBody) => moveReview(toValue(buildupId)!, body),
    onSuccess: (info) => {
      qc.setQueryData(reviewKeys.review(info.buildupId), info);
      void qc.invalidateQueries({ queryKey: reviewKeys.versions(info.buildupId) });
      void qc.invalidateQueries({ queryKey: ['buildups', 'list', info.sectionId] });
    },
    onError: () => {
      const id = toValue(buildupId);
      if (validId(id)) void qc.invalidateQueries({ queryKey: reviewKeys.review(id) });
    },
  });
}
