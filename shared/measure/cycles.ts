/**
 * Per-cycle metrics in the depth domain (measurement-spec §5).
 *
 * Units: metres, degrees, m/Myr. For cycle i with top T_i, margins L_i, R_i
 * and T_0 = the base:
 *   topWidthM = x(R_i) − x(L_i); centreXM = (x(L_i) + x(R_i)) / 2;
 *   thicknessM = z_{T_{i−1}}(c_i) − z_{T_i}(c_i) (linear in x, nearest end
 *   value outside a polyline's range); aspectRatio = h / W;
 *   left.backstepM = x(L_i) − x(L_{i−1}); right.backstepM = x(R_{i−1}) − x(R_i)
 *   (positive = toward the interior); aggradationM = z(L_{i−1}) − z(L_i);
 *   trajectoryDeg = atan2(aggradation, −backstep) (Helland-Hansen & Martinsen
 *   1996 convention: from the horizontal, ascending positive).
 * Flank angles: see flank.ts. Rates: see rates.ts.
 *
 * Extra fields (beyond the contract): centreXM, meanBackstepM,
 * meanAggradationM, marginLeft/marginRight in depth, and
 * accumulationRateMPerMyr = thickness at the centre ÷ age span, which also
 * uses the base age for cycle 1.
 */
import { aggradationFloorM, classifyTrajectory, trajectoryDeg, type TrajectoryClass } from './classify';
import { flankAngles } from './flank';
import { interpolateAt, type Point } from './geometry';
import type { DepthBuildup } from './prepare';
import { ageBelow, rateMPerMyr } from './rates';

export interface SideMetrics {
  backstepM: number | null;
  aggradationM: number | null;
  trajectoryDeg: number | null;
  flankAngleDeg: number | null;
  flankMaxDeg: number | null;
}

export interface CycleMetrics {
  index: number;
  systemsTract: string | null;
  ageTopMa: number | null;
  topWidthM: number;
  centreXM: number;
  thicknessM: number;
  aspectRatio: number;
  meanBackstepM: number | null;
  meanAggradationM: number | null;
  trajectoryDeg: number | null;
  class: TrajectoryClass | null;
  aggradationRateMPerMyr: number | null;
  accumulationRateMPerMyr: number | null;
  marginLeft: Point;
  marginRight: Point;
  left: SideMetrics;
  right: SideMetrics;
}

export interface CycleMeta {
  systemsTract?: string | null;
  ageTopMa?: number | null;
}

/** Metrics of every cycle of a depth-domain buildup. */
export function cycleMetrics(d: DepthBuildup, meta: readonly CycleMeta[], baseAgeMa: number | null | undefined, aggradingToleranceDeg: number): CycleMetrics[] {
  const ages = meta.map((m) => m.ageTopMa ?? null);
  return d.tops.map((top, i) => {
    const L = d.marginsL[i];
    const R = d.marginsR[i];
    const W = R[0] - L[0];
    const c = (L[0] + R[0]) / 2;
    const below = i === 0 ? d.base : d.tops[i - 1];
    const h = interpolateAt(below.xs, below.zs, c) - interpolateAt(top.xs, top.zs, c);
    let lb: number | null = null, rb: number | null = null, la: number | null = null, ra: number | null = null;
    let floor = 0;
    if (i > 0) {
      const L0 = d.marginsL[i - 1];
      const R0 = d.marginsR[i - 1];
      floor = aggradationFloorM([L0, L, R0, R]);
      lb = L[0] - L0[0];
      rb = R0[0] - R[0];
      la = L0[1] - L[1];
      ra = R0[1] - R[1];
    }
    const mb = lb != null && rb != null ? (lb + rb) / 2 : null;
    const ma = la != null && ra != null ? (la + ra) / 2 : null;
    const traj = trajectoryDeg(mb, ma);
    const fl = d.flanksL[i];
    const fr = d.flanksR[i];
    const older = ageBelow(ages, baseAgeMa, i);
    return {
      index: i + 1,
      systemsTract: meta[i]?.systemsTract ?? null,
      ageTopMa: ages[i],
      topWidthM: W,
      centreXM: c,
      thicknessM: h,
      aspectRatio: h / W,
      meanBackstepM: mb,
      meanAggradationM: ma,
      trajectoryDeg: traj,
      class: traj != null && ma != null ? classifyTrajectory(traj, ma, aggradingToleranceDeg, floor) : null,
      aggradationRateMPerMyr: rateMPerMyr(ma, older, ages[i]),
      accumulationRateMPerMyr: rateMPerMyr(h, older, ages[i]),
      marginLeft: [L[0], L[1]],
      marginRight: [R[0], R[1]],
      left: { backstepM: lb, aggradationM: la, trajectoryDeg: trajectoryDeg(lb, la), ...flankAngles(fl?.xs ?? null, fl?.zs ?? null) },
      right: { backstepM: rb, aggradationM: ra, trajectoryDeg: trajectoryDeg(rb, ra), ...flankAngles(fr?.xs ?? null, fr?.zs ?? null) },
    };
  });
}
