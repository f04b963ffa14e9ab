import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/vue-query';
import { computed, toValue, type MaybeRefOrGetter } from 'vue';
import type { CreateProjectInput, ProjectDetail, ProjectMemberView, UpdateProjectInput } from '../../shared/schemas/projects';
import {
  addMember,
  createProject,
  deleteProject,
  getProject,
  listProjects,
  removeMember,
  transferOwner,
  updateProject,
} from '../api/projects';
import type { ListParams } from '../api/users';

export const projectKeys = {
  all: ['projects'] as const,
  lists: () => ['projects', 'list'] as const,
  list: (params: ListParams) => ['projects', 'list', params] as const,
  detail: (id: number) => ['projects', 'detail', id] as const,
};

/** One page of the caller's projects; keeps the previous page shown while the next loads. */
export function useProjectList(params: MaybeRefOrGetter<ListParams>) {
  const p = computed(() => ({ ...toValue(params) }));
  return useQuery({
    queryKey: computed(() => projectKeys.list(p.value)),
    queryFn: () => listProjects(p.value),
    placeholderData: keepPreviousData,
  });
}

/** The project switcher's list: the first 200 projects by the server's order. */
export function useProjectOptions() {
  return useProjectList({ page: 1, pageSize: 200 });
}

export function useProject(id: MaybeRefOrGetter<number>) {
  return useQuery({
    queryKey: computed(() => projectKeys.detail(toValue(id))),
    queryFn: () => getProject(toValue(id)),
    enabled: computed(() => Number.isInteger(toValue(id)) && toValue(id) > 0),
  });
}

export function useCreateProject() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateProjectInput) => createProject(input),
    onSuccess: (project) => {
      qc.setQueryData(projectKeys.detail(project.id), project);
      void qc.invalidateQueries({ queryKey: projectKeys.lists() });
    },
  });
}

export function useUpdateProject(id: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: UpdateProjectInput) => updateProject(toValue(id), input),
    onSuccess: (project) => {
      qc.setQueryData(projectKeys.detail(project.id), project);
      void qc.invalidateQueries({ queryKey: projectKeys.lists() });
    },
  });
}

export function useDeleteProject() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => deleteProject(id),
    onSuccess: (_r, id) => {
      qc.removeQueries({ queryKey: projectKeys.detail(id) });
      void qc.invalidateQueries({ queryKey: projectKeys.lists() });
    },
  });
}

function withMembers(qc: ReturnType<typeof useQueryClient>, id: number, members: ProjectMemberView[]): void {
  qc.setQueryData<ProjectDetail>(projectKeys.detail(id), (old) =>
    old ? { ...old, members, memberCount: members.length } : old,
  );
}

export function useAddMember(projectId: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (userId: number) => addMember(toValue(projectId), userId),
    onSuccess: (members) => {
      withMembers(qc, toValue(projectId), members);
      void qc.invalidateQueries({ queryKey: projectKeys.lists() });
    },
  });
}

export function useRemoveMember(projectId: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (userId: number) => removeMember(toValue(projectId), userId),
    onSuccess: (_r, userId) => {
      const id = toValue(projectId);
      const old = qc.getQueryData<ProjectDetail>(projectKeys.detail(id));
      if (old) withMembers(qc, id, old.members.filter((m) => m.id !== userId));
      void qc.invalidateQueries({ queryKey: projectKeys.detail(id) });
      void qc.invalidateQueries({ queryKey: projectKeys.lists() });
    },
  });
}

/** Hand the project to another member (owner or admin); answers the whole project. */
export function useTransferOwner(projectId: MaybeRefOrGetter<number>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (userId: number) => transferOwner(toValue(projectId), userId),
    onSuccess: (project) => {
      qc.setQueryData(projectKeys.detail(project.id), project);
      void qc.invalidateQueries({ queryKey: projectKeys.lists() });
    },
  });
}
