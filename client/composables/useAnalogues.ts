import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/vue-query';
import { computed, toValue, type MaybeRefOrGetter } from 'vue';
import type {
  AnalogueDetail,
  AnalogueSearchInput,
  AnalogueUpdateInput,
  ListItemInput,
  ListName,
  LookAlikesRequest,
  PromoteInput,
  SavedSearchInput,
} from '../../shared/schemas/analogues';
import {
  acceptAnalogue,
  addListItem,
  createSavedSearch,
  declineAnalogue,
  deleteSavedSearch,
  findLookAlikes,
  getAnalogue,
  getControlledLists,
  getIcsChart,
  listSavedSearches,
  promoteBuildup,
  removeListItem,
  searchAnalogues,
  updateAnalogue,
} from '../api/analogues';

export const analogueKeys = {
  all: ['analogues'] as const,
  searches: () => ['analogues', 'search'] as const,
  search: (q: AnalogueSearchInput) => ['analogues', 'search', q] as const,
  detail: (id: number) => ['analogues', 'detail', id] as const,
  lists: () => ['analogues', 'lists'] as const,
  ics: () => ['analogues', 'ics'] as const,
  saved: () => ['analogues', 'saved'] as const,
  lookAlikes: (req: LookAlikesRequest) => ['analogues', 'look-alikes', req] as const,
};

/** One page of the search with facet counts; the previous page stays shown while the next loads. */
export function useAnalogueSearch(q: MaybeRefOrGetter<AnalogueSearchInput>, enabled: MaybeRefOrGetter<boolean> = true) {
  const query = computed(() => toValue(q));
  return useQuery({
    queryKey: computed(() => analogueKeys.search(query.value)),
    queryFn: ({ signal }) => searchAnalogues(query.value, signal),
    placeholderData: keepPreviousData,
    enabled: computed(() => toValue(enabled)),
  });
}

export function useAnalogue(id: MaybeRefOrGetter<number>) {
  return useQuery({
    queryKey: computed(() => analogueKeys.detail(toValue(id))),
    queryFn: () => getAnalogue(toValue(id)),
    enabled: computed(() => Number.isInteger(toValue(id)) && toValue(id) > 0),
  });
}

/** Controlled lists (setting, factory, climate) with labels; they change rarely. */
export function useControlledLists() {
  return useQuery({ queryKey: analogueKeys.lists(), queryFn: getControlledLists, staleTime: 5 * 60_000 });
}

/** Add a value to a controlled list (curator, admin); the lists and every search's labels and facets refresh. */
export function useAddListItem() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { list: ListName; item: ListItemInput }) => addListItem(v.list, v.item),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: analogueKeys.lists() });
      void qc.invalidateQueries({ queryKey: analogueKeys.searches() });
    },
  });
}

/** Remove a value no analogue uses (curator, admin); the server answers 409 list_value_in_use otherwise. */
export function useRemoveListItem() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { list: ListName; value: string }) => removeListItem(v.list, v.value),
    onSettled: () => {
      void qc.invalidateQueries({ queryKey: analogueKeys.lists() });
      void qc.invalidateQueries({ queryKey: analogueKeys.searches() });
    },
  });
}

export function useIcsChart() {
  return useQuery({ queryKey: analogueKeys.ics(), queryFn: getIcsChart, staleTime: Infinity });
}

export function useSavedSearches() {
  return useQuery({ queryKey: analogueKeys.saved(), queryFn: listSavedSearches });
}

export function useCreateSavedSearch() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: SavedSearchInput) => createSavedSearch(input),
    onSuccess: () => void qc.invalidateQueries({ queryKey: analogueKeys.saved() }),
  });
}

export function useDeleteSavedSearch() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => deleteSavedSearch(id),
    onSuccess: () => void qc.invalidateQueries({ queryKey: analogueKeys.saved() }),
  });
}

function storeDetail(qc: ReturnType<typeof useQueryClient>, a: AnalogueDetail): void {
  qc.setQueryData(analogueKeys.detail(a.id), a);
  void qc.invalidateQueries({ queryKey: analogueKeys.searches() });
}

export function useUpdateAnalogue(id: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: AnalogueUpdateInput) => updateAnalogue(toValue(id), input),
    onSuccess: (a) => storeDetail(qc, a),
  });
}

export function useDecideAnalogue(id: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (d: { accept: true } | { accept: false; reason: string }) =>
      d.accept ? acceptAnalogue(toValue(id)) : declineAnalogue(toValue(id), d.reason),
    onSuccess: (a) => storeDetail(qc, a),
  });
}

export function usePromoteBuildup() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { buildupId: number; input?: PromoteInput }) => promoteBuildup(v.buildupId, v.input ?? {}),
    onSuccess: (a) => storeDetail(qc, a),
  });
}

/** Look-alikes for a request; runs when `enabled` (the person pressed Find). */
export function useLookAlikes(req: MaybeRefOrGetter<LookAlikesRequest | null>) {
  return useQuery({
    queryKey: computed(() => analogueKeys.lookAlikes(toValue(req) ?? ({} as LookAlikesRequest))),
    queryFn: () => findLookAlikes(toValue(req)!),
    enabled: computed(() => toValue(req) !== null),
    placeholderData: keepPreviousData,
  });
}
