/** Shared inputs of the live Readings tests: a ranged and a fixed velocity context, and Kestrel Knoll with three measurable cycles. */
import type { EditorBuildup, MeasureContext } from '../../../shared/editor/model';
import { deepFreeze, kestrel } from '../canvas/fixtures';

export const ranged: MeasureContext = deepFreeze({
  calibrationTies: [
    { px: [0, 0], world: [0, 1000] },
    { px: [2000, 0], world: [25000, 1000] },
    { px: [0, 1000], world: [0, 2000] },
  ],
  verticalDomain: 'twt_ms',
  velocity: { kind: 'constant', v: { min: 3500, mode: 4000, max: 5000 } },
});
export const fixed: MeasureContext = deepFreeze({ ...ranged, velocity: { kind: 'constant', v: 4000 } });

/** Kestrel Knoll with its third cycle completed, so three cycles are measured. */
export function knoll(): EditorBuildup {
  const k = kestrel();
  k.cycles[2] = { ...k.cycles[2], top: [[380, 520], [500, 500], [620, 522]], marginLeft: [400, 515], marginRight: [600, 517] };
  return k;
}
