import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/vue-query';
import { computed, toValue, type MaybeRefOrGetter } from 'vue';
import { directoryQuerySchema, type CreateUserInput, type UpdateUserInput } from '../../shared/schemas/users';
import { createUser, fetchDirectory, listUsers, updateUser, type ListParams } from '../api/users';

export const userKeys = {
  all: ['users'] as const,
  lists: () => ['users', 'list'] as const,
  list: (params: ListParams) => ['users', 'list', params] as const,
  directory: () => ['users', 'directory'] as const,
  directoryLookup: (email: string) => ['users', 'directory', email] as const,
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

/** Active people who share a project with the caller (admins: everyone), for pickers. */
export function useDirectory(enabled: MaybeRefOrGetter<boolean> = true) {
  return useQuery({
    queryKey: userKeys.directory(),
    queryFn: () => fetchDirectory(),
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

/** The one active person with exactly this e-mail address, looked up when `email` is a complete address ([] otherwise). */
export function useDirectoryLookup(email: MaybeRefOrGetter<string | null>) {
  const e = computed(() => toValue(email)?.trim().toLowerCase() ?? '');
  return useQuery({
    queryKey: computed(() => userKeys.directoryLookup(e.value)),
    queryFn: () => fetchDirectory(e.value),
    enabled: computed(() => looksLikeEmail(e.value)),
    staleTime: 60_000,
  });
}

/** A complete address as the server's schema expects (user@domain.tld), checked with the same zod rule. */
export function looksLikeEmail(v: string): boolean {
  return directoryQuerySchema.safeParse({ email: v }).success && v.length > 0;
}
