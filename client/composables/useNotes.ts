/**
 * vue-query hooks over client/api/notes.ts: the section's threads (refreshed
 * every 20 s and after every change) and the mutations on them.
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/vue-query';
import { computed, toValue, type MaybeRefOrGetter } from 'vue';
import type { CreateThreadInput, MessageInput } from '../../shared/schemas/notes';
import { createThread, deleteMessage, editMessage, listThreads, replyToThread, setThreadResolved } from '../api/notes';

export const noteKeys = {
  list: (sectionId: number) => ['notes', 'threads', sectionId] as const,
};

export function useThreads(sectionId: MaybeRefOrGetter<number>) {
  return useQuery({
    queryKey: computed(() => noteKeys.list(toValue(sectionId))),
    queryFn: ({ signal }) => listThreads(toValue(sectionId), signal),
    enabled: computed(() => toValue(sectionId) > 0),
    refetchInterval: 20_000,
  });
}

export function useNoteMutations(sectionId: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  const refresh = () => qc.invalidateQueries({ queryKey: noteKeys.list(toValue(sectionId)) });
  return {
    create: useMutation({ mutationFn: (input: CreateThreadInput) => createThread(toValue(sectionId), input), onSuccess: refresh }),
    reply: useMutation({ mutationFn: (v: { threadId: number; input: MessageInput }) => replyToThread(v.threadId, v.input), onSuccess: refresh }),
    edit: useMutation({ mutationFn: (v: { id: number; input: MessageInput }) => editMessage(v.id, v.input), onSuccess: refresh }),
    remove: useMutation({ mutationFn: (id: number) => deleteMessage(id), onSuccess: refresh }),
    resolve: useMutation({ mutationFn: (v: { id: number; resolved: boolean }) => setThreadResolved(v.id, v.resolved), onSuccess: refresh }),
  };
}
