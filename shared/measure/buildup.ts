/**
 * Buildup metrics in the depth domain (measurement-spec §6): crest, height,
 * base width, aspect ratio, area under the upper envelope, volume of
 * revolution, net trajectory and left–right asymmetry.
 *
 * Units: metres, m², m³, degrees. Area = ∫ max(0, z_base − z_env) dx, exact
 * for polylines (envelope.ts). Volume: Pappus's centroid theorem V = 2π·d·A
 * for each half-profile about the vertical axis through the crest, valid
 * because the axis does not cut a half-profile; the reported volume is the
 * mean of the left and right volumes — an estimate that assumes a round
 * buildup.
 *
 * Choices: vertices "share" the smallest z when within 1e-9 of it,
 * relative to |z| (no absolute floor, so a buildup drawn at any scale finds
 * the same crest), so a flat crest survives floating-point depth
 * conversion; the asymmetry hint needs a flank-angle difference of at least
 * `asymmetryMinDeg` and the steeper side to have backstepped no more than the
 * other, and is worded as a hint only.
 */
import { evaluateEnvelope, integrateProfile, type EnvelopePlan } from './envelope';
import { interpolateAt, type Point } from './geometry';
import type { DepthBuildup } from './prepare';
import type { CycleMetrics } from './cycles';

/** Smallest-z vertex of a polyline; for several at that z, the midpoint in x of the leftmost and rightmost. */
export function crestOf(xs: ArrayLike<number>, zs: ArrayLike<number>): Point {
  let zmin = Infinity;
  for (let i = 0; i < zs.length; i++) if (zs[i] < zmin) zmin = zs[i];
  const eps = 1e-9 * Math.abs(zmin);
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < zs.length; i++) {
    if (zs[i] <= zmin + eps) {
      if (xs[i] < lo) lo = xs[i];
      if (xs[i] > hi) hi = xs[i];
    }
  }
  return [(lo + hi) / 2, zmin];
}

export interface ProfileMetrics {
  crest: Point;
  heightM: number;
  baseWidthM: number;
  aspectRatio: number;
  areaM2: number;
  areaLeftM2: number;
  areaRightM2: number;
  volumeM3: number;
  volumeLeftM3: number;
  volumeRightM3: number;
}

/** Crest, height, width, area and Pappus volume of a depth-domain buildup. */
export function profileMetrics(d: DepthBuildup, plan: EnvelopePlan): ProfileMetrics {
  const youngest = d.tops[d.tops.length - 1];
  const crest = crestOf(youngest.xs, youngest.zs);
  const bx = d.base.xs;
  const heightM = interpolateAt(bx, d.base.zs, crest[0]) - crest[1];
  let bmin = Infinity;
  let bmax = -Infinity;
  for (let i = 0; i < bx.length; i++) { if (bx[i] < bmin) bmin = bx[i]; if (bx[i] > bmax) bmax = bx[i]; }
  const baseWidthM = bmax - bmin;
  const env = evaluateEnvelope(plan, d.sourcesZ);
  const integ = integrateProfile(env, bx, d.base.zs, crest[0]);
  const vl = 2 * Math.PI * integ.momentLeft;
  const vr = 2 * Math.PI * integ.momentRight;
  return {
    crest,
    heightM,
    baseWidthM,
    aspectRatio: heightM / baseWidthM,
    areaM2: integ.area,
    areaLeftM2: integ.areaLeft,
    areaRightM2: integ.areaRight,
    volumeM3: (vl + vr) / 2,
    volumeLeftM3: vl,
    volumeRightM3: vr,
  };
}

export interface NetTrajectory {
  backstepLeftM: number | null;
  backstepRightM: number | null;
  aggradationLeftM: number | null;
  aggradationRightM: number | null;
  meanBackstepM: number | null;
  meanAggradationM: number | null;
  trajectoryDeg: number | null;
}

/** Net margin shift from cycle 1 to the youngest cycle, sides averaged (null for one cycle). */
export function netTrajectory(d: DepthBuildup): NetTrajectory {
  const n = d.tops.length;
  if (n < 2) return { backstepLeftM: null, backstepRightM: null, aggradationLeftM: null, aggradationRightM: null, meanBackstepM: null, meanAggradationM: null, trajectoryDeg: null };
  const L1 = d.marginsL[0], Ln = d.marginsL[n - 1], R1 = d.marginsR[0], Rn = d.marginsR[n - 1];
  const bl = Ln[0] - L1[0];
  const br = R1[0] - Rn[0];
  const al = L1[1] - Ln[1];
  const ar = R1[1] - Rn[1];
  const mb = (bl + br) / 2;
  const ma = (al + ar) / 2;
  return { backstepLeftM: bl, backstepRightM: br, aggradationLeftM: al, aggradationRightM: ar, meanBackstepM: mb, meanAggradationM: ma, trajectoryDeg: (Math.atan2(ma, -mb) * 180) / Math.PI };
}

export interface Asymmetry {
  /** Mean left flank angle minus mean right flank angle (degrees); null unless both sides have flanks. */
  flankAngleDeg: number | null;
  /** Net left backstep minus net right backstep (m); null for one cycle. */
  backstepM: number | null;
  hint: string | null;
}

const mean = (v: number[]) => (v.length ? v.reduce((a, b) => a + b, 0) / v.length : null);

/** Left-minus-right asymmetry with a cautious windward/leeward hint. */
export function asymmetryOf(cycles: readonly CycleMetrics[], net: NetTrajectory, asymmetryMinDeg: number): Asymmetry {
  const fl = mean(cycles.map((c) => c.left.flankAngleDeg).filter((v): v is number => v != null));
  const fr = mean(cycles.map((c) => c.right.flankAngleDeg).filter((v): v is number => v != null));
  const dFlank = fl != null && fr != null ? fl - fr : null;
  const dBack = net.backstepLeftM != null && net.backstepRightM != null ? net.backstepLeftM - net.backstepRightM : null;
  let hint: string | null = null;
  if (dFlank != null && dBack != null && Math.abs(dFlank) >= asymmetryMinDeg) {
    const steeper = dFlank > 0 ? 'left' : 'right';
    const other = steeper === 'left' ? 'right' : 'left';
    const lessBack = steeper === 'left' ? dBack <= 0 : dBack >= 0;
    if (lessBack)
      hint = `The ${steeper} side is steeper (by ${Math.abs(dFlank).toFixed(1)}°) and backstepped ${Math.abs(dBack).toFixed(1)} m less than the ${other} side; a steeper, less backstepped margin may have faced the prevailing wind (windward). This is a hint from geometry alone, to be weighed against other evidence.`;
  }
  return { flankAngleDeg: dFlank, backstepM: dBack, hint };
}

/**
 * Onlap and downlap terminations lying on the youngest top between its
 * margins: x within [x(L_n), x(R_n)] and depth within `toleranceM` of the
 * top at that x (depth domain). Toplap and truncation end against the
 * surface above (Mitchum, Vail & Thompson 1977) and are not counted.
 */
export function terminationsOnTop(d: DepthBuildup, toleranceM: number): number {
  const n = d.tops.length;
  const top = d.tops[n - 1];
  const x0 = d.marginsL[n - 1][0];
  const x1 = d.marginsR[n - 1][0];
  let count = 0;
  for (const t of d.terminations) {
    if (t.type !== 'onlap' && t.type !== 'downlap') continue;
    const [x, z] = t.at;
    if (x < x0 || x > x1) continue;
    if (Math.abs(z - interpolateAt(top.xs, top.zs, x)) <= toleranceM) count++;
  }
  return count;
}
