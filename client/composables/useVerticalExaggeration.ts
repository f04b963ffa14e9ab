/**
 * The cursor over the section and the vertical exaggeration shown beside the
 * stretch control: the intrinsic VE of the section (from the depth
 * converter, at the cursor, else where the cursor last was, else the image
 * centre) times the on-screen stretch. The VE is taken over the DRAWN pixels
 * (`e.view`: the depth view's pixels when it is shown, with its converter),
 * the cursor readout keeps image pixels (`cursor`).
 */
import { computed, ref, type Ref } from 'vue';
import type { Pt } from '../canvas/model';
import type { StagePointerEvent } from '../canvas/stageContext';
import { formatVE, intrinsicVE } from '../canvas/tools/exaggeration';
import type { DepthConverter } from '../../shared/measure/index';

export function useVerticalExaggeration(a: { size: () => { width: number; height: number } | null; converter: Ref<DepthConverter | null> }) {
  const cursor = ref<Pt | null>(null);
  const cursorInside = ref(false);
  const lastCursor = ref<Pt | null>(null);
  const drawnCursor = ref<Pt | null>(null);
  function track(e: StagePointerEvent): void {
    cursor.value = e.image;
    drawnCursor.value = e.view ?? e.image;
    cursorInside.value = e.inside;
    if (e.inside) lastCursor.value = drawnCursor.value;
  }
  function leave(): void {
    cursor.value = null;
  }

  const stretch = ref(1);
  const veAt = computed<Pt | null>(() => {
    if (drawnCursor.value && cursor.value && cursorInside.value) return drawnCursor.value;
    if (lastCursor.value) return lastCursor.value;
    const s = a.size();
    return s ? [s.width / 2, s.height / 2] : null;
  });
  const intrinsic = computed(() => {
    const c = a.converter.value;
    const at = veAt.value;
    if (!c || !at) return null;
    try {
      return intrinsicVE(c, at);
    } catch {
      return null;
    }
  });
  const veText = computed(() => formatVE(intrinsic.value === null ? null : intrinsic.value * stretch.value));
  const trueScaleStretch = computed(() => (intrinsic.value ? 1 / intrinsic.value : null));

  return { cursor, cursorInside, track, leave, stretch, veText, trueScaleStretch };
}
