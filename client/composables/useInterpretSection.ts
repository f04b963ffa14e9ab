/**
 * The section behind the interpret page: its record and project, whether it
 * can be interpreted (tiles ready, at least three Ties), the error to show
 * when it cannot be loaded, and the window title.
 */
import { computed, toValue, watch, type MaybeRefOrGetter } from 'vue';
import { errorMessage, isApiError } from '../api/http';
import { useProject } from './useProjects';
import { useSection } from './useSections';

export function useInterpretSection(sectionId: MaybeRefOrGetter<number>) {
  const { data: section, isPending, error, refetch } = useSection(() => toValue(sectionId));
  const projectId = computed(() => section.value?.projectId ?? 0);
  const { data: project } = useProject(projectId);

  watch(
    () => section.value?.title,
    (t) => {
      if (t) document.title = `Interpret ${t} · Cayline`;
    },
    { immediate: true },
  );

  const isReady = computed(() => section.value?.status === 'ready');
  const calibration = computed(() => section.value?.calibration ?? null);
  const isCalibrated = computed(() => !!calibration.value && calibration.value.ties.length >= 3);

  const loadError = computed(() => {
    const e = error.value;
    if (!e || section.value) return null;
    if (isApiError(e) && e.status === 404) return { title: 'Section not found', text: 'It may have been deleted.' };
    if (isApiError(e) && e.status === 403) return { title: 'Not a member', text: 'This section belongs to a project you are not a member of.' };
    return { title: 'Could not load the section', text: errorMessage(e) };
  });

  return { section, project, isPending, isReady, calibration, isCalibrated, loadError, refetch };
}
