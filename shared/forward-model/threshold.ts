/**
 * Drowning threshold: the production factor (all cycles alike) or the rise
 * rate (constant subsidence, m/Myr) at which the modelled crest ends deeper
 * than the depth where G < 1 % of Gm, found by bisection. The crest's final
 * water depth does not rise when the factor falls or the rise quickens, so
 * "drowned" switches once along either parameter; the bisection keeps a
 * bracket [not drowned, drowned] and halves it until it is narrower than
 * `tolerance`. Every evaluated point is returned for the plot (final crest
 * water depth against the parameter), plus an optional even sweep.
 */
import type { ForwardModelParams } from '../schemas/forward-model';
import { parseForwardModelParams, runParsed, ForwardModelCancelled, type ModelRun } from './model';

export type ThresholdParameter = 'productionFactor' | 'riseRate';

export interface ThresholdOptions {
  parameter: ThresholdParameter;
  /** Search range; defaults: factor 0–1, rise 0 to 2·Gm (m/Myr). */
  lo?: number;
  hi?: number;
  /** Bracket width at which to stop (default: `relativeTolerance` of the range). */
  tolerance?: number;
  /** Bracket width at which to stop as a fraction of the range, when `tolerance` is not given (default 1e-4). */
  relativeTolerance?: number;
  maxIterations?: number;
  /** Extra evenly spaced points for the plot (default 11, 0 for none). */
  sweepPoints?: number;
  /** Fraction done (0–1); return false to cancel. */
  onProgress?: (fraction: number) => boolean | void;
}

export interface SweepPoint {
  value: number;
  crestWaterDepthM: number;
  drowned: boolean;
}

export interface ThresholdResult {
  parameter: ThresholdParameter;
  /** The threshold (midpoint of the final bracket), or null when the range holds no switch. */
  value: number | null;
  /** Final bracket [low, high] of the parameter. */
  bracket: [number, number] | null;
  converged: boolean;
  iterations: number;
  drowningDepthM: number;
  /** Why there is no threshold in the range, when `value` is null. */
  reason: string | null;
  /** Every evaluated point, sorted by value. */
  points: SweepPoint[];
}

function withParameter(p: ForwardModelParams, parameter: ThresholdParameter, v: number): ForwardModelParams {
  if (parameter === 'productionFactor') return { ...p, cycles: { ...p.cycles, productionFactors: [v] } };
  return { ...p, subsidence: { kind: 'constant', rateMPerMyr: v } };
}

/** Find the drowning threshold of `input` (validated model parameters) along one parameter. */
export function drowningThreshold(input: unknown, o: ThresholdOptions): ThresholdResult {
  const p = parseForwardModelParams(input);
  const isFactor = o.parameter === 'productionFactor';
  const lo0 = o.lo ?? 0;
  const hi0 = o.hi ?? (isFactor ? 1 : 2 * p.growth.GmMmPerYr * 1000);
  const tol = o.tolerance ?? (o.relativeTolerance ?? 1e-4) * (hi0 - lo0);
  const maxIt = o.maxIterations ?? 60;
  const sweepN = o.sweepPoints ?? 11;
  const totalRuns = 2 + sweepN + Math.min(maxIt, Math.ceil(Math.log2(Math.max(2, (hi0 - lo0) / tol))));
  let runs = 0;
  const points: SweepPoint[] = [];
  const evalAt = (v: number): ModelRun => {
    const run = runParsed(withParameter(p, o.parameter, v));
    points.push({ value: v, crestWaterDepthM: run.crestWaterDepthM, drowned: run.drowned });
    runs++;
    if (o.onProgress && o.onProgress(Math.min(1, runs / totalRuns)) === false) throw new ForwardModelCancelled();
    return run;
  };
  const done = (r: Omit<ThresholdResult, 'points' | 'parameter'>): ThresholdResult => ({ parameter: o.parameter, ...r, points: points.sort((a, b) => a.value - b.value) });

  for (let i = 1; i < sweepN - 1; i++) evalAt(lo0 + ((hi0 - lo0) * i) / (sweepN - 1));
  const atLo = evalAt(lo0);
  const atHi = evalAt(hi0);
  const dd = atLo.drowningDepthM;
  // drowned side: low factor, high rise
  const drownedSideLow = isFactor;
  const drownLo = atLo.drowned;
  const drownHi = atHi.drowned;
  if (drownLo === drownHi || (drownedSideLow ? !drownLo : drownLo)) {
    const reason = drownLo && drownHi
      ? `drowned over the whole range (${lo0} to ${hi0})`
      : !drownLo && !drownHi
        ? `not drowned anywhere in the range (${lo0} to ${hi0})`
        : `drowning does not switch the expected way between ${lo0} and ${hi0}`;
    return done({ value: null, bracket: null, converged: false, iterations: 0, drowningDepthM: dd, reason });
  }
  let lo = lo0;
  let hi = hi0;
  let it = 0;
  while (hi - lo > tol && it < maxIt) {
    const mid = (lo + hi) / 2;
    const r = evalAt(mid);
    if (r.drowned === drownLo) lo = mid;
    else hi = mid;
    it++;
  }
  return done({ value: (lo + hi) / 2, bracket: [lo, hi], converged: hi - lo <= tol, iterations: it, drowningDepthM: dd, reason: null });
}
