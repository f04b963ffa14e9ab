/**
 * Presets of the growth forward model, with their sources. Every value stays
 * editable; these fill the growth parameters and the slope limit.
 */
import type { ForwardModelParamsInput } from '../schemas/forward-model';

export interface ForwardModelPreset {
  key: string;
  label: string;
  growth: ForwardModelParamsInput['growth'];
  slopeLimitDeg: number;
  /** Where each value comes from. */
  sources: string[];
}

export const FORWARD_MODEL_PRESETS: readonly ForwardModelPreset[] = [
  {
    key: 'tropical-reef',
    label: 'Tropical reef factory',
    growth: { GmMmPerYr: 12, I0: 2000, Ik: 250, kPerM: 0.1 },
    slopeLimitDeg: 35,
    sources: [
      'Gm, I0, Ik, k inside the ranges of Bosscher & Schlager (1992), Sedimentology 39: Gm 10–15 mm/yr, I0 2000–2250, Ik 50–450 µE m⁻² s⁻¹, k 0.04–0.16 1/m (middle values chosen by Cayline).',
      'Slope limit 35°: the lower end of the angle of repose of loose sand and rubble, about 35–45° (Kenter 1990, Sedimentology 37; Schlager 2005, SEPM Concepts 8, fig. 3.14 — range from memory).',
    ],
  },
  {
    key: 'cool-water',
    label: 'Cool-water factory',
    growth: { GmMmPerYr: 1, I0: 2000, Ik: 50, kPerM: 0.04 },
    slopeLimitDeg: 15,
    sources: [
      'From memory, not from a retrieved text: cool-water (light-independent, mostly skeletal-grain) carbonate production is an order of magnitude slower than tropical reef growth and reaches deeper; Gm 1 mm/yr, the lowest Ik (50) and the lowest k (0.04 1/m) of the Bosscher & Schlager (1992) ranges stand for that weak light dependence.',
      'Slope limit 15°: inside the 10–25° of grain-rich slopes (Kenter 1990; Schlager 2005, fig. 3.14 — range from memory); cool-water platforms lack a rigid framework.',
    ],
  },
];
