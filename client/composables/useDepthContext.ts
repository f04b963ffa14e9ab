/**
 * What the interpret page measures with: the section's Ties as plain points,
 * the engine context of the live Readings, and the depth context (mode
 * velocities, traced buildups for the carbonate envelope) behind the Ruler,
 * the cursor readout and the vertical exaggeration.
 */
import { computed, type Ref } from 'vue';
import type { SectionDetail } from '../api/sections';
import type { CalibrationTie, EditorBuildup, MeasureContext, VelocityModel } from '../canvas/model';
import { converterFor } from '../canvas/tools/exaggeration';
import { rulerContext } from '../canvas/tools/ruler';

export interface DepthContextArgs {
  section: Ref<SectionDetail | undefined>;
  isCalibrated: Ref<boolean>;
  velocity: () => VelocityModel | null;
  buildups: () => readonly EditorBuildup[];
}

export function useDepthContext(a: DepthContextArgs) {
  const ties = computed<CalibrationTie[]>(() =>
    (a.section.value?.calibration?.ties ?? []).map((t) => ({ px: [t.px[0], t.px[1]], world: [t.world[0], t.world[1]] })),
  );
  const context = computed<MeasureContext | null>(() => {
    const s = a.section.value;
    const v = a.velocity();
    if (!s || !a.isCalibrated.value || !v) return null;
    return { calibrationTies: ties.value, verticalDomain: s.verticalDomain, velocity: v };
  });
  const depthContext = computed(() => {
    const s = a.section.value;
    if (!s || !a.isCalibrated.value) return null;
    try {
      return rulerContext({ ties: ties.value, verticalDomain: s.verticalDomain, velocity: a.velocity(), buildups: a.buildups() });
    } catch {
      return rulerContext({ ties: ties.value, verticalDomain: s.verticalDomain, velocity: a.velocity() });
    }
  });
  const converter = computed(() => {
    const c = depthContext.value;
    if (!c) return null;
    try {
      return converterFor(c);
    } catch {
      return null;
    }
  });
  return { ties, context, depthContext, converter };
}
