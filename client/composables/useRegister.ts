import { keepPreviousData, useQuery } from '@tanstack/vue-query';
import { computed, toValue, type MaybeRefOrGetter } from 'vue';
import { getRegister, type RegisterParams } from '../api/register';

export const registerKeys = {
  all: ['register'] as const,
  page: (projectId: number, params: RegisterParams) => ['register', projectId, params] as const,
};

/**
 * One page of a project's buildup register; keeps the previous page while
 * the next loads, and polls every 2 s while figures are being computed.
 */
export function useRegister(projectId: MaybeRefOrGetter<number>, params: MaybeRefOrGetter<RegisterParams>) {
  const p = computed(() => ({ ...toValue(params) }));
  return useQuery({
    queryKey: computed(() => registerKeys.page(toValue(projectId), p.value)),
    queryFn: ({ signal }) => getRegister(toValue(projectId), p.value, signal),
    placeholderData: keepPreviousData,
    staleTime: 5_000,
    refetchInterval: (q) => ((q.state.data?.pending ?? 0) > 0 ? 2_000 : false),
  });
}
