import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/vue-query';
import { computed, toValue, type MaybeRefOrGetter } from 'vue';
import type { MarkReadInput, NotifyMode } from '../../shared/schemas/notifications';
import { fetchPreferences, listNotifications, listOutbox, markNotificationsRead, readOutboxMessage, savePreferences } from '../api/notifications';

/** How often the bell asks for news (no page reload needed). */
export const BELL_REFRESH_MS = 20_000;

export const notificationKeys = {
  all: ['notifications'] as const,
  bell: () => ['notifications', 'bell'] as const,
  preferences: () => ['account', 'preferences'] as const,
  outbox: (params: { page: number; pageSize: number }) => ['outbox', 'list', params] as const,
  outboxMessage: (id: number) => ['outbox', 'message', id] as const,
};

/** The newest notifications and the unread count, refreshed every BELL_REFRESH_MS while the app is open. */
export function useBell(enabled: MaybeRefOrGetter<boolean> = true) {
  return useQuery({
    queryKey: notificationKeys.bell(),
    queryFn: () => listNotifications({ pageSize: 15 }),
    enabled: computed(() => toValue(enabled)),
    refetchInterval: BELL_REFRESH_MS,
    refetchIntervalInBackground: false,
    staleTime: 5_000,
  });
}

export function useMarkRead() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: MarkReadInput) => markNotificationsRead(input),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: notificationKeys.all });
    },
  });
}

export function usePreferences() {
  return useQuery({ queryKey: notificationKeys.preferences(), queryFn: fetchPreferences });
}

export function useSavePreferences() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (mode: NotifyMode) => savePreferences(mode),
    onSuccess: (data) => qc.setQueryData(notificationKeys.preferences(), data),
  });
}

export function useOutbox(params: MaybeRefOrGetter<{ page: number; pageSize: number }>) {
  const p = computed(() => ({ ...toValue(params) }));
  return useQuery({
    queryKey: computed(() => notificationKeys.outbox(p.value)),
    queryFn: () => listOutbox(p.value),
    placeholderData: keepPreviousData,
    staleTime: 0,
  });
}

export function useOutboxMessage(id: MaybeRefOrGetter<number | null>) {
  return useQuery({
    queryKey: computed(() => notificationKeys.outboxMessage(toValue(id) ?? 0)),
    queryFn: () => readOutboxMessage(toValue(id)!),
    enabled: computed(() => toValue(id) !== null),
  });
}
