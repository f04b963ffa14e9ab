/**
 * The interpret page's depth view (issue #13): a toggle between the section
 * in TWT and the section converted to depth with its velocity model (tiles
 * made by the server's `section-depth` job). The interpretation stays in
 * image pixels; in the depth view this composable hands the stage the depth
 * tiles and the map back to image pixels (so tools get image pixels as
 * always), the overlays their records mapped to depth-view pixels, and the
 * readout and the VE control converters over what is drawn.
 *
 * The state is asked for when the toggle is switched on (POST queues a build
 * unless the stored one is current) and refetched every second while a build
 * runs, and whenever the velocity model, the calibration or a saved buildup
 * changes (`sources`; the server queues the rebuild itself — for a buildup
 * with the `buildup` velocity model, whose envelope moved). The last good build stays on view
 * while a newer one is made.
 */
import { computed, ref, watch, type Ref } from 'vue';
import { useQuery, useQueryClient } from '@tanstack/vue-query';
import type { SectionDetail } from '../api/sections';
import { errorMessage } from '../api/http';
import { getDepthView, requestDepthView, type DepthViewState } from '../api/depthView';
import { createDepthViewMap, type DepthViewMap } from '../../shared/depth-view/index';
import { mapBuildups, mapPositions } from '../canvas/depthMapping';
import type { EditorBuildup, Pt } from '../canvas/model';
import type { DepthConverter } from '../../shared/measure/index';

export const DEPTH_POLL_MS = 1000;

export function useDepthView(a: {
  sectionId: () => number;
  section: Ref<SectionDetail | undefined | null>;
  /** Anything that changes when the velocity model, the Ties or the saved buildups change (refetches the state; the server queues rebuilds itself). */
  sources: () => unknown;
}) {
  const on = ref(false);
  const asking = ref(false);
  const askError = ref<string | null>(null);
  const qc = useQueryClient();
  const isTwt = computed(() => a.section.value?.verticalDomain === 'twt_ms');
  const key = computed(() => ['depth-view', a.sectionId(), JSON.stringify(a.sources() ?? null)]);
  const query = useQuery({
    queryKey: key,
    queryFn: ({ signal }) => getDepthView(a.sectionId(), signal),
    enabled: computed(() => on.value && isTwt.value),
    // a new key (velocity model, Ties, saved buildups) keeps showing the section's last state until the fresh one comes
    placeholderData: (previous, previousQuery) => (previousQuery?.queryKey[1] === a.sectionId() ? previous : undefined),
    refetchInterval: (q) => {
      const s = (q.state.data as DepthViewState | undefined)?.status;
      return s === 'queued' || s === 'running' ? DEPTH_POLL_MS : false;
    },
  });
  const state = computed<DepthViewState | null>(() => query.data.value ?? null);

  async function ask(): Promise<void> {
    if (asking.value) return;
    asking.value = true;
    askError.value = null;
    try {
      const s = await requestDepthView(a.sectionId());
      qc.setQueryData(key.value, s);
    } catch (e) {
      askError.value = errorMessage(e, 'The depth view could not be asked for');
    } finally {
      asking.value = false;
    }
  }
  // switched on (or the section changed while on): ask; the server answers at once when the stored build is current
  watch(
    () => [on.value, a.sectionId()] as const,
    ([isOn]) => {
      if (isOn && isTwt.value) void ask();
    },
  );

  const map = computed<DepthViewMap | null>(() => {
    const r = state.value?.ready;
    if (!r) return null;
    try {
      return createDepthViewMap(r.basis, r.axis);
    } catch {
      return null;
    }
  });
  /** The depth view is drawn (switched on and a build is ready). */
  const showing = computed(() => on.value && isTwt.value && map.value !== null);
  const toView = computed(() => (showing.value ? map.value!.toView : null));

  const tiles = computed(() => (showing.value ? state.value!.ready!.tiles : (a.section.value?.tiles ?? null)));
  const previewUrl = computed(() => (showing.value ? state.value!.ready!.previewUrl : (a.section.value?.previewUrl ?? null)));
  const pixelMap = computed(() => (showing.value ? { toImage: (p: readonly number[]) => map.value!.toImage(p) as Pt } : null));

  /** For the cursor readout: image px → (x, depth) with the very conversion of the shown tiles. */
  const readoutConverter = computed<DepthConverter | null>(() => (showing.value ? map.value!.converter : null));
  /** For the VE control: over the drawn pixels (depth-view px in the depth view). */
  const stageConverter = computed<DepthConverter | null>(() => (showing.value ? map.value!.viewConverter : null));

  const status = computed(() => {
    if (!on.value) return null;
    if (!isTwt.value) return { tone: 'info' as const, text: 'The section is in depth already' };
    if (askError.value) return { tone: 'error' as const, text: askError.value };
    const s = state.value;
    if (!s) return { tone: 'info' as const, text: 'Depth view: asking…' };
    if (!s.available) return { tone: 'error' as const, text: s.unavailableReason ?? 'No depth view for this section' };
    if (s.status === 'failed') return { tone: 'error' as const, text: s.failureReason ?? 'The depth view could not be made' };
    if (s.status === 'queued' || s.status === 'running')
      return { tone: 'busy' as const, text: `${s.ready ? 'Updating the depth view' : 'Making the depth view'} · ${s.progress} %` };
    return null;
  });

  return {
    on,
    toggle: () => (on.value = !on.value),
    state,
    showing,
    status,
    map,
    tiles,
    previewUrl,
    pixelMap,
    readoutConverter,
    stageConverter,
    /** Records for the overlays: mapped to depth-view px in the depth view, themselves in the time view. */
    buildups: (bs: readonly EditorBuildup[]) => mapBuildups(toView.value, bs),
    /** A tool preview or a list of pins with its positions mapped likewise. */
    positions: <T>(v: T): T => mapPositions(toView.value, v),
    /** An image point as drawn (for centring the view on it). */
    toStage: (p: readonly number[]): Pt => (toView.value ? (toView.value(p) as Pt) : [p[0], p[1]]),
  };
}

export type DepthView = ReturnType<typeof useDepthView>;
