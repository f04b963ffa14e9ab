/**
 * Growth forward model (measurement-spec §10): light-limited vertical growth
 * per column over an antecedent profile under a relative sea level.
 *
 * - Growth `G(d) = Gm · tanh(I0 · e^(−k·d) / Ik)` for water depth d > 0 —
 *   Bosscher & Schlager (1992), "Computer simulation of reef growth",
 *   *Sedimentology* 39 (the engine's `shared/measure/growth.ts`) — times the
 *   production factor of the current cycle; none when exposed (d < 0), where
 *   an optional lowering rate wears the column down (never below the
 *   antecedent profile, never below sea level).
 * - Relative sea level RSL(t) = E(t) − E(0) + S(t) − S(0): eustasy E (table
 *   or sum of sinusoids) plus subsidence S (constant rate or table). The
 *   frame is that of the antecedent profile (z down, 0 = sea level at t = 0);
 *   the sea surface lies at z = −RSL(t). Subsidence is uniform, so every
 *   surface keeps this frame and the output is in the profile's frame.
 * - Time stepping: explicit Euler. Each step uses the water depth at its
 *   start, and a column never grows above the sea surface at the step's end
 *   (keep-up stops at sea level). A top exactly at the surface (d = 0) grows
 *   at G(0) but only into the room a rise made during the step, so it keeps
 *   up instead of flickering between 0 and one step's rise.
 * - Angle-of-repose rule: after each step, wherever the top between two
 *   neighbouring columns is steeper than `slopeLimitDeg`, half the excess
 *   height is moved from the higher column to the lower one (at most the
 *   sediment the higher column has grown: the antecedent profile is not
 *   moved), in alternating passes until a pass moves no more than 0.1 mm
 *   (at most RELAX_MAX_PASSES = 32 passes per step, each scanning only
 *   around the pairs that moved in the pass before; an excess left carries
 *   over to the next step, in practice below 1 cm). Columns are equally
 *   wide, so each move conserves mass exactly. Default 35°, the angle of repose of loose sand
 *   and rubble (about 35–45°, Kenter 1990; Schlager 2005, fig. 3.14 — ranges
 *   from memory, references.md).
 * - Cycle boundaries at chosen times or at lowstands (steps where RSL is
 *   lower than at the step before and not higher than at the step after);
 *   the end of the run always closes the last cycle. The surface at each
 *   boundary is kept (one Float64Array of the columns each).
 *
 * - The light term tanh(I0·e^(−k·d)/Ik) is read from a table at 0.0125/k
 *   spacing with cubic Hermite interpolation (values and exact slopes at the
 *   knots; error below 1e-9 of Gm, `lightTable`), one exp and one tanh per
 *   knot instead of per column and step; below the table's last knot the
 *   term is under 1e-12 and taken as 0.
 *
 * Memory: columns × (kept surfaces + 3) Float64 values; see
 * FORWARD_MODEL_LIMITS in shared/schemas/forward-model.ts.
 *
 * Pure TypeScript: no DOM, no Node-only APIs (runs in a Web Worker and on the
 * server).
 */
import { describeIssues } from '../schemas/interpretation';
import { FORWARD_MODEL_LIMITS, forwardModelParamsSchema, type ForwardModelParams } from '../schemas/forward-model';
import { MeasureInputError } from '../measure/errors';
import { depthForGrowthFraction, growthRate } from '../measure/growth';

/** Growth fraction of Gm below which a top counts as drowned (issue: "G < 1 % of Gm"). */
export const DROWNING_GROWTH_FRACTION = 0.01;

/** Relaxation passes of the angle-of-repose rule per time step; what is left carries over to the next step. */
export const RELAX_MAX_PASSES = 32;

export interface ModelRun {
  params: ForwardModelParams;
  /** Column x positions (m), ascending, equally spaced. */
  xs: Float64Array;
  /** Antecedent profile at the columns (m, z down). */
  base: Float64Array;
  /** The top at each cycle boundary (oldest first). */
  surfaces: Float64Array[];
  /** Times of the boundaries (yr from the start); the last is the end of the run. */
  boundaryTimesYr: number[];
  /** Production factor used in each cycle. */
  factors: number[];
  /** z of the sea surface at each boundary (m, profile frame). */
  seaZAtBoundaries: number[];
  /** Water depth of the crest (shallowest column) at the end (m; ≤ 0 = at or above sea level). */
  crestWaterDepthM: number;
  /** Depth where G falls to 1 % of Gm (m). */
  drowningDepthM: number;
  /** The crest ended deeper than `drowningDepthM`. */
  drowned: boolean;
  steps: number;
}

/** Validate parameters; a refusal is a MeasureInputError whose message starts with the bad field's path. */
export function parseForwardModelParams(input: unknown): ForwardModelParams {
  const r = forwardModelParamsSchema.safeParse(input);
  if (!r.success) {
    const issues = describeIssues(r.error);
    throw new MeasureInputError(issues[0].path, issues[0].message, issues.map((i) => i.text));
  }
  return r.data;
}

/** Linear interpolation in a [t, v] table, end values held outside. */
function interpTable(rows: readonly (readonly number[])[], t: number): number {
  const n = rows.length;
  if (t <= rows[0][0]) return rows[0][1];
  if (t >= rows[n - 1][0]) return rows[n - 1][1];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (rows[mid][0] <= t) lo = mid;
    else hi = mid;
  }
  const [t0, v0] = rows[lo];
  const [t1, v1] = rows[hi];
  return v0 + ((v1 - v0) * (t - t0)) / (t1 - t0);
}

/** Relative sea-level rise since t = 0 (m, up positive) as a function of time (yr). */
export function relativeSeaLevel(p: Pick<ForwardModelParams, 'eustasy' | 'subsidence'>): (tYr: number) => number {
  const e = p.eustasy;
  const s = p.subsidence;
  let eust: (t: number) => number;
  if (e.kind === 'none') eust = () => 0;
  else if (e.kind === 'table') eust = (t) => interpTable(e.points, t);
  else {
    const terms = e.terms.map((term) => ({ a: term.amplitudeM, w: (2 * Math.PI) / term.periodYr, ph: (term.phaseDeg * Math.PI) / 180 }));
    eust = (t) => {
      let v = 0;
      for (const term of terms) v += term.a * Math.sin(term.w * t + term.ph);
      return v;
    };
  }
  const sub = s.kind === 'constant' ? (t: number) => (s.rateMPerMyr * t) / 1e6 : (t: number) => interpTable(s.points, t);
  const e0 = eust(0);
  const s0 = sub(0);
  return (t) => eust(t) - e0 + sub(t) - s0;
}

/** Resample the profile at `n` equally spaced columns (x ascending). */
export function columnsOf(profile: readonly (readonly number[])[], n: number): { xs: Float64Array; base: Float64Array } {
  const pts = profile[profile.length - 1][0] < profile[0][0] ? [...profile].reverse() : profile;
  const x0 = pts[0][0];
  const x1 = pts[pts.length - 1][0];
  const xs = new Float64Array(n);
  const base = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const x = x0 + ((x1 - x0) * i) / (n - 1);
    xs[i] = x;
    base[i] = interpTable(pts, x);
  }
  return { xs, base };
}

/**
 * Move sediment down-flank wherever the slope between neighbours exceeds
 * `maxDz` per column spacing (the angle-of-repose rule, see the module doc).
 * Mass-conserving; returns the largest excess left (m), or NaN when
 * `reportExcess` is false (the model's own loop does not use it and skips
 * that scan over every column).
 */
export function relaxSlopes(top: Float64Array, base: Float64Array, maxDz: number, maxPasses = 50, tolM = 1e-4, reportExcess = true): number {
  const n = top.length;
  // pairs (i, i+1) scanned: only around those that moved in the pass before
  let lo = 0;
  let hi = n - 2;
  for (let pass = 0; pass < maxPasses && lo <= hi; pass++) {
    let moved = 0;
    let first = n;
    let last = -1;
    const forward = (pass & 1) === 0;
    for (let k = lo; k <= hi; k++) {
      const i = forward ? k : lo + hi - k;
      const j = i + 1;
      const diff = top[j] - top[i]; // > 0: j deeper, i higher
      let m = 0;
      if (diff > maxDz) {
        m = Math.min((diff - maxDz) / 2, base[i] - top[i]);
        if (m > 0) { top[i] += m; top[j] -= m; }
      } else if (-diff > maxDz) {
        m = Math.min((-diff - maxDz) / 2, base[j] - top[j]);
        if (m > 0) { top[j] += m; top[i] -= m; }
      }
      if (m > 0) {
        if (m > moved) moved = m;
        if (i < first) first = i;
        if (i > last) last = i;
      }
    }
    if (moved <= tolM) break;
    lo = Math.max(0, first - 1);
    hi = Math.min(n - 2, last + 1);
  }
  if (!reportExcess) return Number.NaN;
  // largest excess left where the higher column still holds sediment
  let worst = 0;
  for (let i = 0; i + 1 < n; i++) {
    const diff = top[i + 1] - top[i];
    const hi = diff > 0 ? i : i + 1;
    const excess = Math.abs(diff) - maxDz;
    if (excess > worst && base[hi] - top[hi] > 1e-9) worst = excess;
  }
  return worst;
}

/** Knot spacing of the light table in units of the attenuation length 1/k: h·k = 0.0125 keeps (h·k)⁴/384 under 1e-10. */
export const LIGHT_TABLE_STEP_K = 0.0125;
/** The light term below which growth is taken as none (end of the table). */
export const LIGHT_TABLE_FLOOR = 1e-12;
const LIGHT_TABLE_MAX_KNOTS = 1 << 20;

/**
 * The light term f(d) = tanh(a·e^(−k·d)) (a = I0/Ik) as a cubic Hermite
 * table: values and slopes f'(d) = −(1 − f²)·a·k·e^(−k·d) at knots h apart,
 * interpolated by the Hermite basis (error ≤ h⁴/384 · max|f⁗| — the cubic
 * Hermite error term, e.g. Burden & Faires, Numerical Analysis, §3.4; from
 * memory). Beyond `end` (m) f < LIGHT_TABLE_FLOOR. Null when no finite table
 * does (k = 0, or an absurd a): the caller evaluates f itself.
 */
export function lightTable(a: number, k: number): { h: number; end: number; f: Float64Array; dfh: Float64Array } | null {
  const h = k > 0 ? LIGHT_TABLE_STEP_K / k : Infinity; // ≈ 2,300 knots whatever k
  // f ≈ a·e^(−k·d) once small: the depth where it falls under the floor
  const end = k > 0 ? Math.max(h, Math.log(Math.max(a, LIGHT_TABLE_FLOOR) / LIGHT_TABLE_FLOOR) / k) : Infinity;
  const knots = Math.ceil(end / h) + 2;
  if (!Number.isFinite(h) || !Number.isFinite(knots) || knots > LIGHT_TABLE_MAX_KNOTS) return null;
  const f = new Float64Array(knots);
  const dfh = new Float64Array(knots); // slope × h, as the Hermite basis takes it
  for (let j = 0; j < knots; j++) {
    const e = a * Math.exp(-k * j * h);
    const v = Math.tanh(e);
    f[j] = v;
    dfh[j] = -(1 - v * v) * e * k * h;
  }
  return { h, end: (knots - 2) * h, f, dfh };
}

/** f(d) from a light table (d ≥ 0), as the model's loop reads it. */
export function lightFromTable(t: NonNullable<ReturnType<typeof lightTable>>, d: number): number {
  if (d >= t.end) return 0;
  const u = d / t.h;
  const j = u | 0;
  const x = u - j;
  const x2 = x * x;
  const x3 = x2 * x;
  return (2 * x3 - 3 * x2 + 1) * t.f[j] + (x3 - 2 * x2 + x) * t.dfh[j] + (-2 * x3 + 3 * x2) * t.f[j + 1] + (x3 - x2) * t.dfh[j + 1];
}

export interface RunOptions {
  /** Called now and then with the fraction done (0–1); return false to cancel (throws `ForwardModelCancelled`). */
  onProgress?: (fraction: number) => boolean | void;
}

export class ForwardModelCancelled extends Error {
  constructor() {
    super('forward model run cancelled');
    this.name = 'ForwardModelCancelled';
  }
}

/** Run the model. `input` is validated first (see parseForwardModelParams). */
export function runForwardModel(input: unknown, options: RunOptions = {}): ModelRun {
  const p = parseForwardModelParams(input);
  return runParsed(p, options);
}

/** Run already-validated parameters (used by the threshold solver and the fit, which vary validated parameters). */
export function runParsed(p: ForwardModelParams, options: RunOptions = {}): ModelRun {
  const n = p.columns;
  const { xs, base } = columnsOf(p.profile, n);
  const top = Float64Array.from(base);
  const dx = xs[1] - xs[0];
  const maxDz = Math.tan((p.slopeLimitDeg * Math.PI) / 180) * dx;
  const rsl = relativeSeaLevel(p);
  const steps = Math.ceil(p.durationYr / p.stepYr - 1e-9);
  const timeOf = (s: number) => (s >= steps ? p.durationYr : s * p.stepYr);

  // boundary steps
  const boundarySteps: number[] = [];
  if (p.cycles.boundaries === 'lowstands') {
    let prev = rsl(timeOf(0));
    let cur = rsl(timeOf(1));
    for (let s = 1; s < steps; s++) {
      const next = rsl(timeOf(s + 1));
      if (cur < prev && cur <= next) boundarySteps.push(s);
      prev = cur;
      cur = next;
    }
    if (boundarySteps.length + 1 > FORWARD_MODEL_LIMITS.maxCycles)
      throw new MeasureInputError('cycles.boundaries', `the sea-level curve has ${boundarySteps.length} lowstands in the run, more than ${FORWARD_MODEL_LIMITS.maxCycles - 1}: choose boundary times instead`);
  } else {
    for (const t of p.cycles.boundaries) {
      const s = Math.min(steps - 1, Math.max(1, Math.round(t / p.stepYr)));
      if (boundarySteps[boundarySteps.length - 1] !== s) boundarySteps.push(s);
    }
  }
  boundarySteps.push(steps);

  const gm = p.growth.GmMmPerYr / 1000; // m/yr
  const a = p.growth.I0 / p.growth.Ik;
  const k = p.growth.kPerM;
  const lower = p.exposedLoweringMmPerYr / 1000;
  const factorOf = (c: number) => p.cycles.productionFactors[Math.min(c, p.cycles.productionFactors.length - 1)];

  const surfaces: Float64Array[] = [];
  const boundaryTimesYr: number[] = [];
  const factors: number[] = [];
  const seaZAtBoundaries: number[] = [];
  let cycle = 0;
  let nextBoundary = boundarySteps[0];
  let f = factorOf(0);
  let seaStart = 0 - rsl(0);
  const progressEvery = Math.max(1, Math.min(Math.floor(2e6 / n), Math.ceil(steps / 100))); // every 1 % or 2·10⁶ column-steps
  const table = lightTable(a, k);
  const invH = table ? 1 / table.h : 0;
  const tEnd = table ? table.end : 0;
  const tf = table ? table.f : new Float64Array(0);
  const tdf = table ? table.dfh : new Float64Array(0);
  for (let s = 0; s < steps; s++) {
    const t1 = timeOf(s + 1);
    const dt = t1 - timeOf(s);
    const seaEnd = 0 - rsl(t1);
    const gdt = f * gm * dt;
    for (let i = 0; i < n; i++) {
      const z = top[i];
      const d = z - seaStart;
      if (d >= 0) {
        if (gdt > 0) {
          let light: number;
          if (!table) light = Math.tanh(a * Math.exp(-k * d));
          else if (d >= tEnd) light = 0;
          else {
            // lightFromTable, inlined: the hot loop of the model
            const u = d * invH;
            const j = u | 0;
            const x = u - j;
            const x2 = x * x;
            const x3 = x2 * x;
            light = (2 * x3 - 3 * x2 + 1) * tf[j] + (x3 - 2 * x2 + x) * tdf[j] + (-2 * x3 + 3 * x2) * tf[j + 1] + (x3 - x2) * tdf[j + 1];
          }
          if (light === 0) continue;
          let nz = z - gdt * light;
          if (nz < seaEnd) nz = z < seaEnd ? z : seaEnd;
          top[i] = nz;
        }
      } else if (lower > 0) {
        let nz = z + lower * dt;
        const floor = Math.min(base[i], Math.max(z, seaEnd));
        if (nz > floor) nz = floor;
        top[i] = nz;
      }
    }
    relaxSlopes(top, base, maxDz, RELAX_MAX_PASSES, 1e-4, false);
    seaStart = seaEnd;
    if (s + 1 === nextBoundary) {
      surfaces.push(Float64Array.from(top));
      boundaryTimesYr.push(t1);
      factors.push(f);
      seaZAtBoundaries.push(seaEnd);
      cycle++;
      nextBoundary = boundarySteps[cycle];
      f = factorOf(cycle);
    }
    if (options.onProgress && (s + 1) % progressEvery === 0 && options.onProgress((s + 1) / steps) === false) throw new ForwardModelCancelled();
  }
  const drowningDepthM = depthForGrowthFraction(DROWNING_GROWTH_FRACTION, { Gm: p.growth.GmMmPerYr, I0: p.growth.I0, Ik: p.growth.Ik, k: p.growth.kPerM });
  let crest = Infinity;
  for (let i = 0; i < n; i++) if (top[i] < crest) crest = top[i];
  const crestWaterDepthM = crest - seaStart;
  return {
    params: p,
    xs,
    base,
    surfaces,
    boundaryTimesYr,
    factors,
    seaZAtBoundaries,
    crestWaterDepthM,
    drowningDepthM,
    drowned: crestWaterDepthM > drowningDepthM,
    steps,
  };
}

/** Growth rate (mm/yr) at water depth d (m) for the model's growth parameters, without the production factor; 0 when exposed (d < 0). */
export function modelGrowthRate(p: Pick<ForwardModelParams, 'growth'>, depthM: number): number {
  return depthM >= 0 ? growthRate(depthM, { Gm: p.growth.GmMmPerYr, I0: p.growth.I0, Ik: p.growth.Ik, k: p.growth.kPerM }) : 0;
}
