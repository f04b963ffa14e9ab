/**
 * Fit of the production factors per cycle (and optionally the constant
 * subsidence rate) to traced tops: least squares on the vertical misfit, in
 * depth, of each modelled cycle surface to the traced top of the same cycle,
 * sampled at the traced vertices (those inside the profile's x-range),
 * minimised with Nelder–Mead (./nelder-mead.ts). Factors are held in 0–1 by
 * clamping inside the objective plus a steep penalty outside, the
 * subsidence rate likewise at ≥ 0.
 *
 * Warnings (Cayline's own defaults, not published values):
 * - poor fit: RMS misfit above `poorMisfitM` (default 5 m);
 * - non-unique: moving one fitted value by `probeStep` (0.05 of a factor, 5 %
 *   of the subsidence rate) either way raises the RMS by less than 1 % +
 *   1 cm, so the traced tops do not pin it down (e.g. a cycle that keeps up
 *   at any factor above some value);
 * - at a bound: a factor within 0.001 of 0 or 1.
 */
import type { ForwardModelParams } from '../schemas/forward-model';
import { MeasureInputError } from '../measure/errors';
import { nelderMead } from './nelder-mead';
import { ForwardModelCancelled, parseForwardModelParams, runParsed, type ModelRun } from './model';

export interface FitOptions {
  fitSubsidence?: boolean;
  poorMisfitM?: number;
  maxIterations?: number;
  probeStep?: number;
  /** Fraction done (0–1, by model runs against the iteration budget); return false to cancel (throws `ForwardModelCancelled`). */
  onProgress?: (fraction: number) => boolean | void;
}

export interface FitResult {
  factors: number[];
  subsidenceMPerMyr: number | null;
  rmsM: number;
  maxAbsM: number;
  perCycleRmsM: number[];
  iterations: number;
  evaluations: number;
  converged: boolean;
  warnings: string[];
  run: ModelRun;
}

function interpAt(xs: Float64Array, zs: Float64Array, x: number): number {
  const n = xs.length;
  const dx = (xs[n - 1] - xs[0]) / (n - 1);
  const u = (x - xs[0]) / dx;
  const i = Math.min(n - 2, Math.max(0, Math.floor(u)));
  const w = u - i;
  return zs[i] * (1 - w) + zs[i + 1] * w;
}

/** Misfits (m) of a run's surfaces to traced tops, per cycle. */
export function topMisfits(run: ModelRun, tops: readonly (readonly (readonly number[])[])[]): { rmsM: number; maxAbsM: number; perCycleRmsM: number[] } {
  const x0 = run.xs[0];
  const x1 = run.xs[run.xs.length - 1];
  let ss = 0;
  let count = 0;
  let maxAbs = 0;
  const per = tops.map((top, c) => {
    let s = 0;
    let m = 0;
    for (const p of top) {
      if (p[0] < x0 || p[0] > x1) continue;
      const r = interpAt(run.xs, run.surfaces[c], p[0]) - p[1];
      s += r * r;
      m++;
      if (Math.abs(r) > maxAbs) maxAbs = Math.abs(r);
    }
    ss += s;
    count += m;
    return m ? Math.sqrt(s / m) : 0;
  });
  return { rmsM: count ? Math.sqrt(ss / count) : 0, maxAbsM: maxAbs, perCycleRmsM: per };
}

/**
 * Fit production factors (one per traced top, oldest first) to traced tops
 * [[x, z], …] in the profile's depth frame. The run must close as many cycles
 * as there are tops (boundaries at chosen times).
 */
export function fitProductionFactors(input: unknown, tops: readonly (readonly (readonly number[])[])[], o: FitOptions = {}): FitResult {
  const p0 = parseForwardModelParams(input);
  const nc = tops.length;
  if (nc < 1) throw new MeasureInputError('tops', 'needs at least one traced top');
  tops.forEach((t, i) => {
    if (!Array.isArray(t) || t.length < 1) throw new MeasureInputError(`tops[${i}]`, 'needs at least one point');
    t.forEach((pt, j) => {
      if (!Array.isArray(pt) || pt.length !== 2 || !pt.every(Number.isFinite)) throw new MeasureInputError(`tops[${i}][${j}]`, 'must be a point [x, z] of two finite numbers');
    });
  });
  const probe = runParsed(p0);
  if (probe.surfaces.length !== nc)
    throw new MeasureInputError('tops', `the model closes ${probe.surfaces.length} cycles but ${nc} tops were given: set cycles.boundaries to ${nc - 1} times`);
  const fitSub = !!o.fitSubsidence;
  if (fitSub && p0.subsidence.kind !== 'constant') throw new MeasureInputError('subsidence', 'only a constant subsidence rate can be fitted');
  const s0 = p0.subsidence.kind === 'constant' ? p0.subsidence.rateMPerMyr : 0;
  const sScale = Math.max(s0, 1);
  const start0 = p0.cycles.productionFactors;
  const x0 = Array.from({ length: nc }, (_, i) => start0[Math.min(i, start0.length - 1)]);
  if (fitSub) x0.push(s0 / sScale);

  const paramsOf = (x: number[]): ForwardModelParams => ({
    ...p0,
    cycles: { ...p0.cycles, productionFactors: x.slice(0, nc).map((v) => Math.min(1, Math.max(0, v))) },
    ...(fitSub ? { subsidence: { kind: 'constant' as const, rateMPerMyr: Math.max(0, x[nc] * sScale) } } : {}),
  });
  const penalty = (x: number[]) => {
    let q = 0;
    for (let i = 0; i < nc; i++) q += Math.max(0, -x[i]) ** 2 + Math.max(0, x[i] - 1) ** 2;
    if (fitSub) q += Math.max(0, -x[nc]) ** 2;
    return 1e6 * q;
  };
  const maxIterations = o.maxIterations ?? 150 * x0.length;
  // runs: about 1.5 per iteration, plus the probes afterwards (2 per fitted value)
  const budget = 1.5 * maxIterations + 2 * x0.length + 2;
  let runs = 0;
  const counted = (p: ForwardModelParams) => {
    const r = runParsed(p);
    runs++;
    if (o.onProgress && o.onProgress(Math.min(0.99, runs / budget)) === false) throw new ForwardModelCancelled();
    return r;
  };
  const objective = (x: number[]) => {
    const r = topMisfits(counted(paramsOf(x)), tops).rmsM;
    return r * r + penalty(x);
  };
  const nm = nelderMead(objective, x0, { step: 0.1, maxIterations, fTol: 1e-8, xTol: 1e-4 });
  const best = paramsOf(nm.x);
  const run = runParsed(best);
  const mis = topMisfits(run, tops);
  const factors = best.cycles.productionFactors;
  const subsidence = fitSub && best.subsidence.kind === 'constant' ? best.subsidence.rateMPerMyr : null;

  const warnings: string[] = [];
  const poor = o.poorMisfitM ?? 5;
  if (mis.rmsM > poor) warnings.push(`Poor fit: RMS vertical misfit ${mis.rmsM.toFixed(2)} m is above ${poor} m.`);
  if (!nm.converged) warnings.push(`The optimiser stopped after ${nm.iterations} iterations without converging.`);
  const step = o.probeStep ?? 0.05;
  const rmsAt = (x: number[]) => topMisfits(counted(paramsOf(x)), tops).rmsM;
  const threshold = mis.rmsM * 1.01 + 0.01;
  for (let i = 0; i < x0.length; i++) {
    const isFactor = i < nc;
    const d = isFactor ? step : 0.05 * Math.max(nm.x[i], 0.01);
    const up = [...nm.x];
    up[i] = isFactor ? Math.min(1, nm.x[i] + d) : nm.x[i] + d;
    const dn = [...nm.x];
    dn[i] = Math.max(0, nm.x[i] - d);
    const label = isFactor ? `production factor of cycle ${i + 1}` : 'subsidence rate';
    if (rmsAt(up) < threshold && rmsAt(dn) < threshold)
      warnings.push(`Non-unique: the ${label} is poorly constrained (changing it by ${isFactor ? d : `${d * sScale} m/Myr`} either way changes the misfit by less than 1 %).`);
    if (isFactor && (factors[i] < 0.001 || factors[i] > 0.999)) warnings.push(`The ${label} sits at its bound (${factors[i].toFixed(3)}).`);
  }
  return { factors, subsidenceMPerMyr: subsidence, ...mis, iterations: nm.iterations, evaluations: nm.evaluations, converged: nm.converged, warnings, run };
}
