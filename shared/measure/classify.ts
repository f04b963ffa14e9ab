/**
 * Classification of margin trajectories and of buildups (measurement-spec §5
 * and §6), with the evidence behind each class and the drowning signs found.
 *
 * Trajectory angle convention (Helland-Hansen & Martinsen 1996, *Journal of
 * Sedimentary Research* 66; Helland-Hansen & Hampson 2009, *Basin Research*
 * 21): angle from the horizontal, ascending positive; here atan2(aggradation,
 * −backstep), so 0° = pure outward building, 90° = vertical, > 90° = stepping
 * back. The cut-offs between prograding, aggrading and backstepping are
 * Cayline's own defaults (options), not published values. Drowning signs
 * follow Schlager (1981), *GSA Bulletin* 92, and the termination types of
 * Mitchum, Vail & Thompson (1977), *AAPG Memoir* 26.
 *
 * Choices: a mean aggradation ≤ 0 is "downstepping" for buildups too (the
 * net trajectory of a buildup whose margins fell); "narrowing top widths"
 * and "thinning cycles" are reported (steps beyond 1e-9 relative) when each of the last two cycle steps
 * (or the only one) narrows or thins. Rounding allowances are relative to the
 * geometry's own magnitude, never absolute floors, so the same buildup drawn
 * at any scale gets the same class.
 */
import { DEG } from './geometry';

export type TrajectoryClass = 'prograding' | 'aggrading' | 'backstepping' | 'downstepping';
export type BuildupClass = TrajectoryClass | 'drowned';


/** atan2(aggradation, −backstep) in degrees; null when either is missing. */
export function trajectoryDeg(backstepM: number | null, aggradationM: number | null): number | null {
  if (backstepM == null || aggradationM == null) return null;
  return Math.atan2(aggradationM, -backstepM) * DEG;
}

/** Differences below this fraction of the coordinates' magnitude are rounding (calibration, depth conversion), not geometry. */
export const ROUNDING_REL = 1e-9;

/**
 * Aggradation at or below this (m) counts as none, so rounding of the
 * calibration and depth conversion cannot turn a flat margin into a rising
 * one: ROUNDING_REL × the largest |x| or |z| of the margin points compared.
 * It scales with the geometry (a fixed floor in metres would call a rising
 * millimetre-scale model flat and a flat kilometre-deep one rising).
 */
export function aggradationFloorM(points: readonly (readonly number[])[]): number {
  let m = 0;
  for (const p of points) m = Math.max(m, Math.abs(p[0]), Math.abs(p[1]));
  return ROUNDING_REL * m;
}

/** Class of a trajectory with tolerance `tolDeg` around 90°; mean aggradation ≤ `floorM` (see aggradationFloorM) → downstepping. */
export function classifyTrajectory(trajDeg: number, meanAggradationM: number, tolDeg: number, floorM = 0): TrajectoryClass {
  if (!(meanAggradationM > floorM)) return 'downstepping';
  if (trajDeg < 90 - tolDeg) return 'prograding';
  if (trajDeg <= 90 + tolDeg) return 'aggrading';
  return 'backstepping';
}

/** The rule that put a trajectory into its class, in words. */
export function trajectoryRule(cls: TrajectoryClass, tolDeg: number): string {
  switch (cls) {
    case 'downstepping':
      return 'mean aggradation is not positive → downstepping';
    case 'prograding':
      return `below 90° − ${tolDeg}° → prograding`;
    case 'aggrading':
      return `within 90° ± ${tolDeg}° → aggrading`;
    case 'backstepping':
      return `above 90° + ${tolDeg}° → backstepping`;
  }
}

export interface DrowningIndicator {
  kind: 'flaggedSurface' | 'terminationsOnTop' | 'narrowingTops' | 'thinningCycles';
  text: string;
}

export interface ClassificationInput {
  cycleCount: number;
  topIsDrowningSurface: boolean;
  /** Onlap/downlap terminations on the youngest top between its margins. */
  terminationsOnTop: number;
  netTrajectoryDeg: number | null;
  netBackstepM: number | null;
  netAggradationM: number | null;
  topWidthsM: number[];
  thicknessesM: number[];
  marginsXM: [number, number];
  /** Rounding allowance of the net aggradation (m), from aggradationFloorM of the margins compared; 0 when absent. */
  aggradationFloorM?: number;
  aggradingToleranceDeg: number;
  drownedMinTerminations: number;
  terminationToleranceM: number;
}

export interface Classification {
  classification: BuildupClass;
  evidence: string[];
  drowningIndicators: DrowningIndicator[];
}

const f1 = (v: number) => (Math.abs(v) < 0.05 ? 0 : v).toFixed(1);

function lastStepsDecrease(v: number[]): boolean {
  const n = v.length;
  if (n < 2) return false;
  const steps = Math.min(2, n - 1);
  // a step counts when it is larger than rounding (relative, no absolute floor): depth conversion round trips must not invent a trend
  for (let k = 0; k < steps; k++) if (!(v[n - 1 - k] < v[n - 2 - k] - ROUNDING_REL * Math.abs(v[n - 2 - k]))) return false;
  return true;
}

/** Classify a buildup (spec §6 rules 1–3) and list the evidence and the drowning signs. */
export function classifyBuildup(c: ClassificationInput): Classification {
  const n = c.cycleCount;
  const indicators: DrowningIndicator[] = [];
  if (c.topIsDrowningSurface) indicators.push({ kind: 'flaggedSurface', text: `The top of cycle ${n} (the youngest) is flagged as a drowning surface.` });
  if (c.terminationsOnTop > 0)
    indicators.push({
      kind: 'terminationsOnTop',
      text: `${c.terminationsOnTop} onlap/downlap termination${c.terminationsOnTop === 1 ? '' : 's'} lie on the youngest top between its margins (x ${f1(c.marginsXM[0])}–${f1(c.marginsXM[1])} m, within ${c.terminationToleranceM} m of the top).`,
    });
  if (lastStepsDecrease(c.topWidthsM)) {
    const w = c.topWidthsM.slice(-Math.min(3, n));
    indicators.push({ kind: 'narrowingTops', text: `Top widths narrow upward over the last cycles (${w.map(f1).join(' → ')} m).` });
  }
  if (lastStepsDecrease(c.thicknessesM)) {
    const h = c.thicknessesM.slice(-Math.min(3, n));
    indicators.push({ kind: 'thinningCycles', text: `Cycles thin upward over the last cycles (${h.map(f1).join(' → ')} m).` });
  }
  const evidence: string[] = [];
  let cls: BuildupClass | null = null;
  if (c.topIsDrowningSurface) {
    cls = 'drowned';
    evidence.push(`Rule 1: the youngest top (cycle ${n}) is flagged as a drowning surface → drowned.`);
  }
  if (c.terminationsOnTop >= c.drownedMinTerminations) {
    cls = 'drowned';
    evidence.push(
      `Rule 1: ${c.terminationsOnTop} onlap/downlap terminations lie on the youngest top between its margins, at least the ${c.drownedMinTerminations} required → drowned.`,
    );
  } else if (c.terminationsOnTop > 0 && cls !== 'drowned') {
    evidence.push(`${c.terminationsOnTop} onlap/downlap termination${c.terminationsOnTop === 1 ? '' : 's'} on the youngest top, fewer than the ${c.drownedMinTerminations} required to call it drowned.`);
  }
  if (n === 1) {
    if (!cls) {
      cls = 'aggrading';
      evidence.push('one cycle: no margin shift measurable');
    } else evidence.push('One cycle only: no margin trajectory measurable.');
  } else if (c.netTrajectoryDeg != null && c.netBackstepM != null && c.netAggradationM != null) {
    const traj = classifyTrajectory(c.netTrajectoryDeg, c.netAggradationM, c.aggradingToleranceDeg, c.aggradationFloorM ?? 0);
    const sentence = `net margin trajectory from cycle 1 to cycle ${n} is ${f1(c.netTrajectoryDeg)}° (mean backstep ${f1(c.netBackstepM)} m, mean aggradation ${f1(c.netAggradationM)} m, both sides averaged)`;
    if (!cls) {
      cls = traj;
      evidence.push(`Rule 2: the ${sentence}; ${trajectoryRule(traj, c.aggradingToleranceDeg)}.`);
    } else evidence.push(`Before drowning, the ${sentence}: ${traj}.`);
  }
  return { classification: cls ?? 'aggrading', evidence, drowningIndicators: indicators };
}
