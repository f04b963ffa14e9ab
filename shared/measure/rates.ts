/**
 * Rates when ages are known (measurement-spec §5): metres per million years
 * over the time between the two surfaces bounding a cycle.
 *
 * Units: lengths m, ages Ma (millions of years before present, older =
 * larger), rates m/Myr. Rates fall as the span over which they are measured
 * grows, so compare them only over similar spans (Schlager 1999, *Geology* 27).
 */

/** `lengthM / (olderMa − youngerMa)`; null when a value is missing or the span is not positive. */
export function rateMPerMyr(lengthM: number | null | undefined, olderMa: number | null | undefined, youngerMa: number | null | undefined): number | null {
  if (lengthM == null || olderMa == null || youngerMa == null) return null;
  const span = olderMa - youngerMa;
  if (!(span > 0)) return null;
  return lengthM / span;
}

/** Age (Ma) of the surface below cycle `i` (0-based): the previous cycle's top, or the base for cycle 1. */
export function ageBelow(ages: readonly (number | null | undefined)[], baseAgeMa: number | null | undefined, i: number): number | null {
  const a = i === 0 ? baseAgeMa : ages[i - 1];
  return a == null ? null : a;
}
