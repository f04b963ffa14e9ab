/**
 * What SectionStage shares with the layers placed in its slot: the viewport
 * (provide/inject) and the payload of its pointer events.
 */
import { inject, type InjectionKey } from 'vue';
import type { Pt, Viewport } from './viewport';

export const STAGE_VIEWPORT: InjectionKey<Viewport> = Symbol('cayline.stageViewport');

/** Payload of SectionStage's `image-*` events. */
export interface StagePointerEvent {
  /** Image pixels `[u, v]` under the pointer (may be outside the image). */
  image: Pt;
  /** The drawn tiles' pixels under the pointer: the image's own, or the depth view's `[u, w]` (SectionStage `pixelMap`). */
  view?: Pt;
  /** Stage CSS pixels `[x, y]` from the stage's top-left corner. */
  screen: Pt;
  /** Whether `image` lies on the image. */
  inside: boolean;
  original: PointerEvent | MouseEvent;
  /** From an `image-pointerdown` listener: this left-button drag is not a pan. */
  preventPan(): void;
}

/** The viewport of the enclosing SectionStage (for components in its slot). */
export function useStageViewport(): Viewport {
  const vp = inject(STAGE_VIEWPORT, null);
  if (!vp) throw new Error('useStageViewport() must be used inside <SectionStage>');
  return vp;
}
