/**
 * Light-limited carbonate growth for the forward model (measurement-spec §10):
 * G(d) = Gm · tanh(I0 · exp(−k·d) / Ik) — Bosscher & Schlager (1992),
 * "Computer simulation of reef growth", *Sedimentology* 39.
 *
 * Units: d water depth in m (d < 0 = exposed: no growth); Gm in any rate unit
 * (the result carries the same unit, e.g. mm/yr); I0 and Ik in µE m⁻² s⁻¹;
 * k in 1/m. Published ranges: Gm 10–15 mm/yr, k 0.04–0.16 1/m, I0 2000–2250,
 * Ik 50–450.
 */
export interface GrowthParams {
  /** Maximum growth rate (e.g. mm/yr). */
  Gm: number;
  /** Surface light intensity (µE m⁻² s⁻¹). */
  I0: number;
  /** Saturating light intensity (µE m⁻² s⁻¹). */
  Ik: number;
  /** Extinction coefficient (1/m). */
  k: number;
}

/** Vertical growth rate at water depth `depthM`; 0 when exposed (depth < 0). */
export function growthRate(depthM: number, p: GrowthParams): number {
  if (!(depthM >= 0)) return 0;
  return p.Gm * Math.tanh((p.I0 * Math.exp(-p.k * depthM)) / p.Ik);
}

/**
 * Water depth (m) at which growth falls to `fraction` (0–1) of Gm:
 * d = ln(I0 / (Ik · atanh(fraction))) / k; 0 if growth is already below that
 * fraction at the surface.
 */
export function depthForGrowthFraction(fraction: number, p: GrowthParams): number {
  const d = Math.log(p.I0 / (p.Ik * Math.atanh(fraction))) / p.k;
  return Math.max(0, d);
}
