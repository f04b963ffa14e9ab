import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/vue-query';
import { computed, toValue, type MaybeRefOrGetter } from 'vue';
import type { CalibrationInput, SectionDetail, UpdateSectionInput } from '../../shared/schemas/sections';
import {
  deleteSection,
  getSection,
  listCalibrations,
  listSections,
  type SectionListParams,
  retrySection,
  saveCalibration,
  updateSection,
} from '../api/sections';

export const sectionKeys = {
  all: ['sections'] as const,
  lists: () => ['sections', 'list'] as const,
  list: (projectId: number, params: SectionListParams) => ['sections', 'list', projectId, params] as const,
  detail: (id: number) => ['sections', 'detail', id] as const,
  calibrations: (id: number) => ['sections', 'calibrations', id] as const,
};

/** How often a section that is still being tiled is asked for again. */
export const PROCESSING_POLL_MS = 700;

/**
 * One page of a project's sections. While any listed section is still being
 * tiled the page is refreshed every `PROCESSING_POLL_MS`, so status and
 * progress stay live.
 */
export function useSectionList(projectId: MaybeRefOrGetter<number>, params: MaybeRefOrGetter<SectionListParams>) {
  const p = computed(() => ({ ...toValue(params) }));
  return useQuery({
    queryKey: computed(() => sectionKeys.list(toValue(projectId), p.value)),
    queryFn: () => listSections(toValue(projectId), p.value),
    placeholderData: keepPreviousData,
    staleTime: 5_000,
    refetchInterval: (query) => (query.state.data?.items.some((s) => s.status === 'processing') ? PROCESSING_POLL_MS : false),
  });
}

/** One section; polled every `PROCESSING_POLL_MS` while its tiles are being built. */
export function useSection(id: MaybeRefOrGetter<number>) {
  return useQuery({
    queryKey: computed(() => sectionKeys.detail(toValue(id))),
    queryFn: ({ signal }) => getSection(toValue(id), signal),
    enabled: computed(() => Number.isInteger(toValue(id)) && toValue(id) > 0),
    staleTime: 5_000,
    refetchInterval: (query) => (query.state.data?.status === 'processing' ? PROCESSING_POLL_MS : false),
  });
}

export function useCalibrationHistory(id: MaybeRefOrGetter<number>, enabled: MaybeRefOrGetter<boolean> = true) {
  return useQuery({
    queryKey: computed(() => sectionKeys.calibrations(toValue(id))),
    queryFn: () => listCalibrations(toValue(id)),
    enabled: computed(() => toValue(enabled) && toValue(id) > 0),
  });
}

function settle(qc: ReturnType<typeof useQueryClient>, section?: SectionDetail): void {
  if (section) qc.setQueryData(sectionKeys.detail(section.id), section);
  void qc.invalidateQueries({ queryKey: sectionKeys.lists() });
}

export function useUpdateSection(id: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: UpdateSectionInput) => updateSection(toValue(id), input),
    onSuccess: (section) => settle(qc, section),
  });
}

export function useDeleteSection() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => deleteSection(id),
    onSuccess: (_r, id) => {
      qc.removeQueries({ queryKey: sectionKeys.detail(id) });
      settle(qc);
    },
  });
}

export function useRetrySection() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => retrySection(id),
    onSuccess: (_r, id) => {
      void qc.invalidateQueries({ queryKey: sectionKeys.detail(id) });
      settle(qc);
    },
  });
}

export function useSaveCalibration(id: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CalibrationInput) => saveCalibration(toValue(id), input),
    onSuccess: () => {
      const sid = toValue(id);
      void qc.invalidateQueries({ queryKey: sectionKeys.detail(sid) });
      void qc.invalidateQueries({ queryKey: sectionKeys.calibrations(sid) });
      settle(qc);
    },
  });
}
