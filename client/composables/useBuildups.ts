/**
 * vue-query hooks over client/api/buildups.ts. Keys live in `buildupKeys`;
 * mutations refresh what they change (the section's list, the buildup, its
 * measurements, the section's velocity model).
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/vue-query';
import { computed, toValue, type MaybeRefOrGetter } from 'vue';
import type { VelocityModel } from '../../shared/editor/model';
import {
  createBuildup,
  deleteBuildup,
  getBuildup,
  getMeasurements,
  getVelocity,
  listBuildups,
  putVelocity,
  saveBuildup,
  type BuildupDetail,
  type MeasurementQuery,
  type SaveBuildupBody,
  type VelocityInfo,
} from '../api/buildups';

export const buildupKeys = {
  all: ['buildups'] as const,
  list: (sectionId: number) => ['buildups', 'list', sectionId] as const,
  detail: (id: number) => ['buildups', 'detail', id] as const,
  measurementsOf: (id: number) => ['buildups', 'measurements', id] as const,
  measurements: (id: number, query: MeasurementQuery) => ['buildups', 'measurements', id, query] as const,
  velocity: (sectionId: number) => ['sections', 'velocity', sectionId] as const,
};

const validId = (id: number | null | undefined): id is number => typeof id === 'number' && Number.isInteger(id) && id > 0;

/** The section's buildups with their geometry (feed them to the interpretation store's `load`). */
export function useBuildupList(sectionId: MaybeRefOrGetter<number>) {
  return useQuery({
    queryKey: computed(() => buildupKeys.list(toValue(sectionId))),
    queryFn: ({ signal }) => listBuildups(toValue(sectionId), signal),
    enabled: computed(() => validId(toValue(sectionId))),
    // The editor owns the working copy; a background refetch must not surprise it.
    staleTime: Infinity,
  });
}

export function useBuildup(id: MaybeRefOrGetter<number | null | undefined>) {
  return useQuery({
    queryKey: computed(() => buildupKeys.detail(toValue(id) ?? 0)),
    queryFn: ({ signal }) => getBuildup(toValue(id)!, signal),
    enabled: computed(() => validId(toValue(id))),
  });
}

/**
 * The server's measurements of a saved buildup. Disabled until `id` is a
 * saved id; `enabled` lets the page ask only after a save settled.
 */
export function useBuildupMeasurements(
  id: MaybeRefOrGetter<number | null | undefined>,
  query: MaybeRefOrGetter<MeasurementQuery> = {},
  enabled: MaybeRefOrGetter<boolean> = true,
) {
  const q = computed(() => ({ ...toValue(query) }));
  return useQuery({
    queryKey: computed(() => buildupKeys.measurements(toValue(id) ?? 0, q.value)),
    queryFn: ({ signal }) => getMeasurements(toValue(id)!, q.value, signal),
    enabled: computed(() => validId(toValue(id)) && toValue(enabled)),
    staleTime: 0,
  });
}

export function useSectionVelocity(sectionId: MaybeRefOrGetter<number>) {
  return useQuery({
    queryKey: computed(() => buildupKeys.velocity(toValue(sectionId))),
    queryFn: ({ signal }) => getVelocity(toValue(sectionId), signal),
    enabled: computed(() => validId(toValue(sectionId))),
  });
}

export function useCreateBuildup(sectionId: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (name: string) => createBuildup(toValue(sectionId), name),
    onSuccess: () => void qc.invalidateQueries({ queryKey: buildupKeys.list(toValue(sectionId)) }),
  });
}

/**
 * Save with optimistic locking. A 409 rejects with `ApiError` code
 * `version_conflict` (see `conflictCurrent`); the cache is left alone then.
 */
export function useSaveBuildup() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { id: number; body: SaveBuildupBody }) => saveBuildup(v.id, v.body),
    onSuccess: (r, v) => {
      qc.setQueryData<BuildupDetail>(buildupKeys.detail(v.id), (old) =>
        old ? { ...old, version: r.version, updatedAt: r.updatedAt, geometry: v.body.geometry, name: v.body.name ?? old.name } : old,
      );
      void qc.invalidateQueries({ queryKey: buildupKeys.measurementsOf(v.id) });
    },
  });
}

export function useDeleteBuildup(sectionId: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => deleteBuildup(id),
    onSuccess: (_r, id) => {
      qc.removeQueries({ queryKey: buildupKeys.detail(id) });
      qc.removeQueries({ queryKey: buildupKeys.measurementsOf(id) });
      void qc.invalidateQueries({ queryKey: buildupKeys.list(toValue(sectionId)) });
    },
  });
}

/** Store the section's velocity model; every buildup's server measurements change with it. */
export function usePutVelocity(sectionId: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (velocity: VelocityModel) => putVelocity(toValue(sectionId), velocity),
    onSuccess: (info: VelocityInfo) => {
      qc.setQueryData(buildupKeys.velocity(toValue(sectionId)), info);
      void qc.invalidateQueries({ queryKey: ['buildups', 'measurements'] });
    },
  });
}
