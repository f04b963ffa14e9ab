import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/vue-query';
import { computed, toValue, type MaybeRefOrGetter } from 'vue';
import type { CreateUserInput, UpdateUserInput } from '../../shared/schemas/users';
import { createUser, fetchDirectory, listUsers, updateUser, type ListParams } from '../api/users';

export const userKeys = {
  all: ['users'] as const,
  lists: () => ['users', 'list'] as const,
  list: (params: ListParams) => ['users', 'list', params] as const,
  directory: () => ['users', 'directory'] as const,
};

/** One page of all accounts (admin). */
export function useUserList(params: MaybeRefOrGetter<ListParams>) {
  const p = computed(() => ({ ...toValue(params) }));
  return useQuery({
    queryKey: computed(() => userKeys.list(p.value)),
    queryFn: () => listUsers(p.value),
    placeholderData: keepPreviousData,
  });
}

/** Active users for pickers (any signed-in user). */
export function useDirectory(enabled: MaybeRefOrGetter<boolean> = true) {
  return useQuery({
    queryKey: userKeys.directory(),
    queryFn: fetchDirectory,
    enabled: computed(() => toValue(enabled)),
    staleTime: 60_000,
  });
}

export function useCreateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateUserInput) => createUser(input),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: userKeys.all });
    },
  });
}

export function useUpdateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, input }: { id: number; input: UpdateUserInput }) => updateUser(id, input),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: userKeys.all });
    },
  });
}
