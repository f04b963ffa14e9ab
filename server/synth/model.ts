// Over 500 lines: one pipeline (earth model in depth, interpretation geometry, TWT conversion, rendering) whose stages share private helpers; split it only with its tests (tests/unit/synth).
/**
 * Geometric earth model for the synthetic demo sections.
 *
 * The model is defined in depth (x metres along the line, z metres down): a water layer over
 * a flat seafloor, a layered basin fill (gently dipping, mildly undulating surfaces deposited
 * one after the other so that they onlap or drape a carbonate buildup), the buildup itself
 * (a base and a stack of growth cycles) and older strata below the base.
 *
 * Every region has an interval velocity (water, overburden, carbonate — exactly the
 * `buildup` velocity model of the measurement spec §3) and a density, hence an acoustic
 * impedance. Depths are converted to two-way time (TWT) along vertical rays with those
 * velocities, so the fast carbonate pulls the base up in time. The TWT geometry written into
 * the interpretation is computed with the same conversion that places the reflections in the
 * image, so the picture and the geometry agree.
 *
 * Rendering: reflection coefficients at every interface of every trace, stamped with a
 * sampled Ricker wavelet (sparse convolution), plus weak lens-shaped reflections inside the
 * carbonate and seeded band-limited noise; amplitude → 8-bit grey (mid-grey = zero).
 */
import seedrandom from 'seedrandom';
import { convolveSame, rickerSampled, rickerTable, stampSpike } from './ricker';
import type { ResolvedVelocityModel } from '../../shared/measure/velocity';
import type { TieInput } from '../../shared/schemas/interpretation';

export type Pt = [number, number];

// ---------------------------------------------------------------------------------------------
// Model definition
// ---------------------------------------------------------------------------------------------

/** One growth cycle of the buildup, described in depth. */
export interface CycleSpec {
  /** x (m) of the left and right break of slope of this cycle's top */
  marginLeftX: number;
  marginRightX: number;
  /** depth (m) of the top at the two margins */
  marginLeftDepthM: number;
  marginRightDepthM: number;
  /** the top rises this many metres above the chord between the margins (parabolic dome) */
  domeM?: number;
  /** dip of the flank just below the margin, degrees; flanks flatten with distance (concave up) */
  flankLeftDeg: number;
  flankRightDeg: number;
  /** length scale (m) over which the flank slope decays to a quarter; default 500 */
  flankBendM?: number;
  /** bulk density (g/cm³) of the cycle; impedance = carbonate velocity × density */
  density: number;
  ageTopMa?: number;
}

export interface BuildupSpec {
  name: string;
  /** oldest first */
  cycles: CycleSpec[];
  topIsDrowningSurface: boolean;
  /** weak lens-shaped internal reflections per km of cycle width (default 6) */
  lensesPerKm?: number;
}

export interface Undulation {
  ampM: number;
  wavelengthM: number;
  phase: number;
}

export interface EarthModelDef {
  xRangeM: [number, number];
  twtRangeMs: [number, number];
  velocities: { water: number; overburden: number; carbonate: number };
  densities: { water: number; fill: [number, number]; substrate: [number, number] };
  seafloorDepthM: number;
  /** regional base surface (the horizon the buildup grew on) */
  base: {
    /** depth at xRangeM[0] */
    depthM: number;
    /** metres of depth per metre of x (positive: deepening to the right) */
    dip: number;
    undulations: Undulation[];
    /** a gentle antecedent high under the buildup (Gaussian) */
    high?: { x: number; widthM: number; heightM: number };
  };
  /** basin fill between the base and the seafloor */
  fill: {
    layers: number;
    /** largest random undulation of a fill surface, metres */
    wobbleM: number;
    /** thickness kept over the buildup's top, as a fraction of the layer's basin thickness */
    drapeFraction: number;
    /** the drape thins away from the youngest top's margins to nothing over this distance (m);
     *  beyond it the layer onlaps the flank */
    drapeTaperM: number;
    /** layers whose level lies deeper than this depth never drape (starved onlap fill) */
    onlapBelowDepthM?: number;
  };
  /** older strata below the base */
  substrate: { layers: number; thicknessM: number };
  buildup: BuildupSpec;
}

export interface RenderOptions {
  width: number;
  height: number;
  /** Ricker peak frequency (Hz), default 30 */
  fHz?: number;
  /** seed of the random noise and of the random layer properties, default 'cayline' */
  seed?: string;
  /** noise RMS in reflection-coefficient units (default 0.006) */
  noise?: number;
  /** amplitude shown as full black / white (default 0.07) */
  clip?: number;
}

// ---------------------------------------------------------------------------------------------
// Validation (clear errors naming the field path)
// ---------------------------------------------------------------------------------------------

function fail(path: string, msg: string): never {
  throw new Error(`${path}: ${msg}`);
}
function num(v: unknown, path: string, opts: { min?: number; max?: number; positive?: boolean } = {}): number {
  if (typeof v !== 'number' || !Number.isFinite(v)) fail(path, 'must be a finite number');
  if (opts.positive && v <= 0) fail(path, 'must be greater than 0');
  if (opts.min !== undefined && v < opts.min) fail(path, `must be at least ${opts.min}`);
  if (opts.max !== undefined && v > opts.max) fail(path, `must be at most ${opts.max}`);
  return v;
}
function range(v: unknown, path: string): [number, number] {
  if (!Array.isArray(v) || v.length !== 2) fail(path, 'must be a pair [min, max]');
  const a = num(v[0], `${path}[0]`);
  const b = num(v[1], `${path}[1]`);
  if (!(b > a)) fail(path, 'second value must be greater than the first');
  return [a, b];
}

export function validateModelDef(def: EarthModelDef, path = 'model'): void {
  if (!def || typeof def !== 'object') fail(path, 'must be an object');
  range(def.xRangeM, `${path}.xRangeM`);
  const twt = range(def.twtRangeMs, `${path}.twtRangeMs`);
  num(twt[0], `${path}.twtRangeMs[0]`, { min: 0 });
  if (!def.velocities) fail(`${path}.velocities`, 'is required');
  for (const k of ['water', 'overburden', 'carbonate'] as const) num(def.velocities[k], `${path}.velocities.${k}`, { positive: true });
  if (!def.densities) fail(`${path}.densities`, 'is required');
  num(def.densities.water, `${path}.densities.water`, { positive: true });
  range(def.densities.fill, `${path}.densities.fill`);
  range(def.densities.substrate, `${path}.densities.substrate`);
  num(def.seafloorDepthM, `${path}.seafloorDepthM`, { positive: true });
  if (!def.base) fail(`${path}.base`, 'is required');
  num(def.base.depthM, `${path}.base.depthM`, { positive: true });
  num(def.base.dip, `${path}.base.dip`, { min: -0.2, max: 0.2 });
  if (!Array.isArray(def.base.undulations)) fail(`${path}.base.undulations`, 'must be an array');
  def.base.undulations.forEach((u, i) => {
    num(u.ampM, `${path}.base.undulations[${i}].ampM`, { min: 0 });
    num(u.wavelengthM, `${path}.base.undulations[${i}].wavelengthM`, { positive: true });
    num(u.phase, `${path}.base.undulations[${i}].phase`);
  });
  if (def.base.high) {
    num(def.base.high.x, `${path}.base.high.x`);
    num(def.base.high.widthM, `${path}.base.high.widthM`, { positive: true });
    num(def.base.high.heightM, `${path}.base.high.heightM`, { min: 0 });
  }
  if (!def.fill) fail(`${path}.fill`, 'is required');
  num(def.fill.layers, `${path}.fill.layers`, { min: 1, max: 1000 });
  num(def.fill.wobbleM, `${path}.fill.wobbleM`, { min: 0 });
  num(def.fill.drapeFraction, `${path}.fill.drapeFraction`, { min: 0, max: 1 });
  num(def.fill.drapeTaperM, `${path}.fill.drapeTaperM`, { positive: true });
  if (def.fill.onlapBelowDepthM !== undefined) num(def.fill.onlapBelowDepthM, `${path}.fill.onlapBelowDepthM`);
  if (!def.substrate) fail(`${path}.substrate`, 'is required');
  num(def.substrate.layers, `${path}.substrate.layers`, { min: 0, max: 1000 });
  num(def.substrate.thicknessM, `${path}.substrate.thicknessM`, { positive: true });
  const b = def.buildup;
  if (!b) fail(`${path}.buildup`, 'is required');
  if (typeof b.name !== 'string' || !b.name.trim()) fail(`${path}.buildup.name`, 'must be a non-empty string');
  if (typeof b.topIsDrowningSurface !== 'boolean') fail(`${path}.buildup.topIsDrowningSurface`, 'must be true or false');
  if (!Array.isArray(b.cycles) || b.cycles.length < 1) fail(`${path}.buildup.cycles`, 'must hold at least one cycle');
  if (b.lensesPerKm !== undefined) num(b.lensesPerKm, `${path}.buildup.lensesPerKm`, { min: 0 });
  b.cycles.forEach((c, i) => {
    const p = `${path}.buildup.cycles[${i}]`;
    const l = num(c.marginLeftX, `${p}.marginLeftX`);
    const r = num(c.marginRightX, `${p}.marginRightX`);
    if (!(r > l)) fail(`${p}.marginRightX`, 'must be greater than marginLeftX');
    if (l <= def.xRangeM[0] || r >= def.xRangeM[1]) fail(`${p}`, 'margins must lie inside xRangeM');
    num(c.marginLeftDepthM, `${p}.marginLeftDepthM`, { positive: true });
    num(c.marginRightDepthM, `${p}.marginRightDepthM`, { positive: true });
    if (c.domeM !== undefined) num(c.domeM, `${p}.domeM`);
    num(c.flankLeftDeg, `${p}.flankLeftDeg`, { positive: true, max: 80 });
    num(c.flankRightDeg, `${p}.flankRightDeg`, { positive: true, max: 80 });
    if (c.flankBendM !== undefined) num(c.flankBendM, `${p}.flankBendM`, { positive: true });
    num(c.density, `${p}.density`, { positive: true });
    if (c.ageTopMa !== undefined) num(c.ageTopMa, `${p}.ageTopMa`, { min: 0 });
  });
}

// ---------------------------------------------------------------------------------------------
// Analytic surfaces
// ---------------------------------------------------------------------------------------------

function undulate(x: number, us: Undulation[]): number {
  let s = 0;
  for (const u of us) s += u.ampM * Math.sin((2 * Math.PI * x) / u.wavelengthM + u.phase);
  return s;
}

/** Depth of cycle `c`'s own upper surface (top between the margins, flanks outside), unclipped. */
export function cycleSurfaceDepth(c: CycleSpec, x: number): number {
  const L = c.marginLeftX;
  const R = c.marginRightX;
  if (x >= L && x <= R) {
    const s = (x - L) / (R - L);
    return c.marginLeftDepthM + (c.marginRightDepthM - c.marginLeftDepthM) * s - (c.domeM ?? 0) * 4 * s * (1 - s);
  }
  const ell = c.flankBendM ?? 500;
  const left = x < L;
  const d = left ? L - x : x - R;
  const tan = Math.tan(((left ? c.flankLeftDeg : c.flankRightDeg) * Math.PI) / 180);
  const z0 = left ? c.marginLeftDepthM : c.marginRightDepthM;
  return z0 + tan * (0.75 * ell * (1 - Math.exp(-d / ell)) + 0.25 * d);
}

/**
 * The earth model with its derived surfaces. Fill surfaces are computed on an x grid (they
 * depend on deposition history); everything else is analytic.
 */
export class EarthModel {
  readonly def: EarthModelDef;
  readonly gridDx: number;
  readonly gridX0: number;
  readonly gridN: number;
  /** fill surfaces, index 0 = deepest (oldest) layer top */
  readonly fillTops: Float64Array[];
  /** impedances: fill layer k (k = 0..layers, layer `layers` is the youngest below the seafloor) */
  readonly fillImp: Float64Array;
  /** slow lateral impedance variation of each fill layer: relative amplitude, wavenumber, phase */
  readonly fillVar: { amp: Float64Array; k: Float64Array; phase: Float64Array };
  readonly substrateImp: Float64Array;
  readonly substrateWobble: Undulation[][];
  readonly terminations: { x: number; z: number }[];
  /** x where each cycle's flanks meet the older surface (the cycle ends there), [left, right] */
  readonly toes: [number, number][] = [];

  constructor(def: EarthModelDef, seed = 'cayline') {
    validateModelDef(def);
    this.def = def;
    const rng = seedrandom.alea(`${seed}:model`);
    const [x0, x1] = def.xRangeM;
    this.gridDx = 2;
    this.gridX0 = x0;
    this.gridN = Math.ceil((x1 - x0) / this.gridDx) + 1;

    const { overburden } = def.velocities;
    const rnd = (a: number, b: number) => a + (b - a) * rng();

    // Validate the buildup against the base and the seafloor; find where each cycle ends.
    const zsf = def.seafloorDepthM;
    def.buildup.cycles.forEach((c, i) => {
      const p = `model.buildup.cycles[${i}]`;
      for (const [side, x, z] of [
        ['marginLeftDepthM', c.marginLeftX, c.marginLeftDepthM],
        ['marginRightDepthM', c.marginRightX, c.marginRightDepthM],
      ] as const) {
        const below = this.envelopeDepth(x, i);
        if (!(z < below - 1)) fail(`${p}.${side}`, `the top must lie above the older surface there (${below.toFixed(1)} m)`);
        if (!(z > zsf + 20)) fail(`${p}.${side}`, 'the top must lie more than 20 m below the seafloor');
      }
      this.toes.push([findToe(this, i, 'left'), findToe(this, i, 'right')]);
    });
    const zb0 = this.baseDepth(x0);
    if (!(zb0 > zsf + 50)) fail('model.base.depthM', 'the base must lie more than 50 m below the seafloor');

    // Fill impedances (random densities in the given range, a few stronger markers).
    const [f0, f1] = def.densities.fill;
    const nFill = def.fill.layers;
    this.fillImp = new Float64Array(nFill + 1);
    for (let k = 0; k <= nFill; k++) {
      let rho = rnd(f0, f1);
      if (rng() < 0.12) rho = rng() < 0.5 ? f0 - 0.08 : f1 + 0.08; // marker beds
      // slight compaction trend: older (deeper) fill a little denser
      rho += 0.08 * (1 - k / nFill);
      this.fillImp[k] = overburden * rho;
    }
    this.fillVar = { amp: new Float64Array(nFill + 1), k: new Float64Array(nFill + 1), phase: new Float64Array(nFill + 1) };
    for (let k = 0; k <= nFill; k++) {
      this.fillVar.amp[k] = rnd(0.004, 0.02);
      this.fillVar.k[k] = (2 * Math.PI) / rnd(1500, 6000);
      this.fillVar.phase[k] = rnd(0, 2 * Math.PI);
    }
    const [s0, s1] = def.densities.substrate;
    this.substrateImp = new Float64Array(def.substrate.layers + 1);
    for (let j = 0; j <= def.substrate.layers; j++) this.substrateImp[j] = overburden * rnd(s0, s1);
    this.substrateWobble = [];
    for (let j = 0; j < def.substrate.layers; j++) {
      this.substrateWobble.push([
        { ampM: rnd(0, 0.25) * def.substrate.thicknessM, wavelengthM: rnd(2500, 7000), phase: rnd(0, 2 * Math.PI) },
      ]);
    }

    // Fill levels: fractions between the regional base and the seafloor, with jitter and wobble.
    const levels: { phi: number; wob: Undulation[] }[] = [];
    for (let k = 0; k < nFill; k++) {
      const phi = (k + 1 + (rng() - 0.5) * 0.6) / (nFill + 1);
      const wob: Undulation[] = [
        { ampM: rnd(0.3, 1) * def.fill.wobbleM, wavelengthM: rnd(2500, 8000), phase: rnd(0, 2 * Math.PI) },
        { ampM: rnd(0, 0.4) * def.fill.wobbleM, wavelengthM: rnd(900, 2500), phase: rnd(0, 2 * Math.PI) },
      ];
      levels.push({ phi, wob });
    }

    // Deposition, deepest first, on the grid.
    const n = this.gridN;
    const C = new Float64Array(n);
    const env = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const x = x0 + i * this.gridDx;
      env[i] = this.envelopeDepth(x);
      C[i] = env[i];
    }
    // Drape mask: 1 over the youngest top, thinning away from its margins, 0 on the lower flanks.
    const youngest = def.buildup.cycles[def.buildup.cycles.length - 1];
    const mask = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const x = x0 + i * this.gridDx;
      const d = x < youngest.marginLeftX ? youngest.marginLeftX - x : x > youngest.marginRightX ? x - youngest.marginRightX : 0;
      const m = Math.max(0, 1 - d / def.fill.drapeTaperM);
      mask[i] = m * m;
    }
    const regional = new Float64Array(n);
    for (let i = 0; i < n; i++) regional[i] = this.regionalBaseDepth(x0 + i * this.gridDx);
    this.fillTops = [];
    this.terminations = [];
    let prevPhi = 0;
    for (let k = 0; k < nFill; k++) {
      const { phi, wob } = levels[k];
      const flat = new Float64Array(n);
      const taper = 1 - phi; // wobble fades toward the seafloor
      let meanLevel = 0;
      for (let i = 0; i < n; i++) {
        const x = x0 + i * this.gridDx;
        flat[i] = zsf + (regional[i] - zsf) * (1 - phi) + undulate(x, wob) * taper;
        meanLevel += flat[i];
      }
      meanLevel /= n;
      const drape =
        def.fill.onlapBelowDepthM !== undefined && meanLevel > def.fill.onlapBelowDepthM ? 0 : def.fill.drapeFraction;
      const top = new Float64Array(n);
      const onFlat = new Uint8Array(n);
      const g = new Float64Array(n); // (C − δ) − flat: positive where the layer has its basin level
      for (let i = 0; i < n; i++) {
        const basinThick = (regional[i] - zsf) * (phi - prevPhi);
        const delta = drape > 0 ? drape * basinThick * mask[i] : 0;
        const cap = C[i] - delta;
        g[i] = cap - flat[i];
        let z = flat[i] < cap ? flat[i] : cap;
        onFlat[i] = flat[i] < cap ? 1 : 0;
        if (z < zsf + 0.5) z = Math.min(zsf + 0.5, C[i]);
        top[i] = z;
      }
      // Terminations: the layer keeps its basin level on one side and has zero thickness on the
      // other, against the buildup.
      for (let i = 0; i < n - 1; i++) {
        const a = C[i] - top[i] > 1e-6 && onFlat[i] === 1;
        const b = C[i + 1] - top[i + 1] > 1e-6 && onFlat[i + 1] === 1;
        if (a === b) continue;
        const thinSide = a ? i + 1 : i;
        if (C[thinSide] - top[thinSide] > 1e-6) continue; // not pinched out: a drape, no termination
        const t = g[i] / (g[i] - g[i + 1]);
        const xs = x0 + (i + (Number.isFinite(t) ? Math.min(1, Math.max(0, t)) : 0.5)) * this.gridDx;
        const zEnv = this.envelopeDepth(xs);
        if (!(zEnv < this.baseDepth(xs) - 1)) continue; // onlap onto the base, not the buildup
        const cHere = C[i] + (C[i + 1] - C[i]) * (Number.isFinite(t) ? Math.min(1, Math.max(0, t)) : 0.5);
        if (Math.abs(cHere - zEnv) > 1) continue; // against an older drape, not the buildup
        this.terminations.push({ x: xs, z: zEnv });
      }
      this.fillTops.push(top);
      C.set(top);
      prevPhi = phi;
    }
  }

  /** Regional base depth without the antecedent high. */
  regionalBaseDepth(x: number): number {
    const b = this.def.base;
    return b.depthM + b.dip * (x - this.def.xRangeM[0]) + undulate(x, b.undulations);
  }

  /** Depth of the buildup's base surface (regional base minus the antecedent high). */
  baseDepth(x: number): number {
    const b = this.def.base;
    let z = this.regionalBaseDepth(x);
    if (b.high) z -= b.high.heightM * Math.exp(-(((x - b.high.x) / b.high.widthM) ** 2));
    return z;
  }

  /**
   * U_k(x): the upper envelope after `k` cycles (k = 0: the base), i.e. the shallowest of the
   * base and cycles 1..k at x. Default k = all cycles.
   */
  envelopeDepth(x: number, k = this.def.buildup.cycles.length): number {
    let z = this.baseDepth(x);
    for (let i = 0; i < k; i++) {
      const s = this.cycleDepth(i, x);
      if (s < z) z = s;
    }
    return z;
  }

  /** Depth of cycle i's upper surface between its toes; +Infinity outside (the cycle ends at its toes). */
  cycleDepth(i: number, x: number): number {
    const t = this.toes[i];
    if (x < t[0] || x > t[1]) return Infinity;
    return cycleSurfaceDepth(this.def.buildup.cycles[i], x);
  }

  /** Fill surface k (0 = oldest) at x, linear in the grid. */
  fillTopDepth(k: number, x: number): number {
    const f = (x - this.gridX0) / this.gridDx;
    let i = Math.floor(f);
    if (i < 0) i = 0;
    if (i > this.gridN - 2) i = this.gridN - 2;
    const w = f - i;
    const a = this.fillTops[k];
    return a[i] + (a[i + 1] - a[i]) * w;
  }

  /** TWT (ms) of the point (x, z) along a vertical ray through water, overburden and carbonate. */
  twtAt(x: number, z: number): number {
    const { water, overburden, carbonate } = this.def.velocities;
    const zsf = this.def.seafloorDepthM;
    if (z <= zsf) return (2000 * z) / water;
    let t = (2000 * zsf) / water;
    const env = this.envelopeDepth(x);
    const zb = this.baseDepth(x);
    if (env < zb) {
      t += (2000 * (Math.min(z, env) - zsf)) / overburden;
      if (z > env) {
        t += (2000 * (Math.min(z, zb) - env)) / carbonate;
        if (z > zb) t += (2000 * (z - zb)) / overburden;
      }
    } else {
      t += (2000 * (z - zsf)) / overburden;
    }
    return t;
  }

  /** Seafloor TWT (ms). */
  seafloorMs(): number {
    return (2000 * this.def.seafloorDepthM) / this.def.velocities.water;
  }
}

// ---------------------------------------------------------------------------------------------
// Interpretation geometry (measurement spec §4)
// ---------------------------------------------------------------------------------------------

export interface CycleGeometry {
  index: number;
  top: Pt[];
  marginLeft: Pt;
  marginRight: Pt;
  flankLeft: Pt[];
  flankRight: Pt[];
  ageTopMa?: number;
}
export interface BuildupGeometry {
  name: string;
  base: Pt[];
  cycles: CycleGeometry[];
  terminations: { type: 'onlap' | 'downlap' | 'toplap' | 'truncation'; at: Pt }[];
  topIsDrowningSurface: boolean;
}
/** The engine's `buildup` velocity model with plain velocities (shared/measure/velocity.ts). */
export type BuildupVelocityModel = Extract<ResolvedVelocityModel, { kind: 'buildup' }>;
/** A Tie as the interpretation schema gives it (shared/schemas/interpretation.ts). */
export type Tie = TieInput;
export interface Interpretation {
  format: 'cayline.interpretation/1';
  verticalDomain: 'twt_ms' | 'depth_m';
  coordinates: 'world' | 'pixels';
  calibration: Tie[] | null;
  velocity: BuildupVelocityModel;
  buildups: BuildupGeometry[];
}

/** Finds where cycle `i`'s flank meets the older surface, searching outward from its margin. */
function findToe(model: EarthModel, i: number, side: 'left' | 'right'): number {
  const c = model.def.buildup.cycles[i];
  const dir = side === 'left' ? -1 : 1;
  const start = side === 'left' ? c.marginLeftX : c.marginRightX;
  const [x0, x1] = model.def.xRangeM;
  const above = (x: number) => cycleSurfaceDepth(c, x) < model.envelopeDepth(x, i);
  let a = start;
  let b = start;
  const step = 1;
  for (;;) {
    b = a + dir * step;
    if (b < x0 || b > x1) {
      fail(`model.buildup.cycles[${i}].flank${side === 'left' ? 'Left' : 'Right'}Deg`, 'the flank does not reach the older surface inside the section');
    }
    if (!above(b)) break;
    a = b;
  }
  for (let it = 0; it < 50; it++) {
    const m = (a + b) / 2;
    if (above(m)) a = m;
    else b = m;
  }
  return (a + b) / 2;
}

const r2 = (v: number) => Math.round(v * 100) / 100;
const r3 = (v: number) => Math.round(v * 1000) / 1000;

/** x positions from a to b every `step` or less, plus the `extra` ones inside; rounded to 1 cm, distinct. */
function sampleXs(a: number, b: number, step: number, extra: number[]): number[] {
  const xs = new Set<number>([r2(a), r2(b)]);
  const n = Math.max(1, Math.ceil((b - a) / step));
  for (let k = 1; k < n; k++) xs.add(r2(a + ((b - a) * k) / n));
  for (const e of extra) if (e > a && e < b) xs.add(r2(e));
  return [...xs].sort((p, q) => p - q);
}

export interface ModelGeometry {
  /** in TWT (the image domain) */
  twt: BuildupGeometry;
  /** the same points in depth (the model's own domain) */
  depth: BuildupGeometry;
  velocity: BuildupVelocityModel;
}

/** The buildup as an interpretation buildup, in TWT (and in depth for reference). */
export function buildupGeometry(model: EarthModel): ModelGeometry {
  const cs = model.def.buildup.cycles;
  const toes = model.toes;
  const breaks = [...toes.flat(), ...cs.flatMap((c) => [c.marginLeftX, c.marginRightX])];
  const make = (toDomain: (x: number, z: number) => number): BuildupGeometry => {
    const pt = (x: number, z: number): Pt => [r2(x), r2(toDomain(x, z))];
    const cycles: CycleGeometry[] = cs.map((c, i) => {
      const [tl, tr] = toes[i];
      const surf = (x: number) => cycleSurfaceDepth(c, x);
      const flankL = sampleXs(tl, c.marginLeftX, 40, breaks).map((x) => pt(x, surf(x)));
      const flankR = sampleXs(c.marginRightX, tr, 40, breaks).map((x) => pt(x, surf(x)));
      const topXs = sampleXs(tl, tr, 50, [...breaks, ...flankL.map((p) => p[0]), ...flankR.map((p) => p[0])]);
      const g: CycleGeometry = {
        index: i + 1,
        top: topXs.map((x) => pt(x, surf(x))),
        marginLeft: pt(c.marginLeftX, c.marginLeftDepthM),
        marginRight: pt(c.marginRightX, c.marginRightDepthM),
        flankLeft: flankL,
        flankRight: flankR,
      };
      if (c.ageTopMa !== undefined) g.ageTopMa = c.ageTopMa;
      return g;
    });
    const bl = Math.min(...toes.map((t) => t[0]));
    const br = Math.max(...toes.map((t) => t[1]));
    const base = sampleXs(bl, br, 50, breaks).map((x) => pt(x, model.baseDepth(x)));
    const terminations = model.terminations
      .slice()
      .sort((p, q) => p.x - q.x)
      .map((t) => ({ type: 'onlap' as const, at: pt(t.x, t.z) }));
    return {
      name: model.def.buildup.name,
      base,
      cycles,
      terminations,
      topIsDrowningSurface: model.def.buildup.topIsDrowningSurface,
    };
  };
  const v = model.def.velocities;
  return {
    twt: make((x, z) => model.twtAt(x, z)),
    depth: make((_x, z) => z),
    velocity: {
      kind: 'buildup',
      water: { v: v.water, seafloorMs: r3(model.seafloorMs()) },
      overburden: { v: v.overburden },
      carbonate: { v: v.carbonate },
    },
  };
}

/** Maps a buildup's points with `f`, keeping everything else. */
export function mapBuildup(b: BuildupGeometry, f: (p: Pt) => Pt): BuildupGeometry {
  return {
    name: b.name,
    base: b.base.map(f),
    cycles: b.cycles.map((c) => {
      const o: CycleGeometry = {
        index: c.index,
        top: c.top.map(f),
        marginLeft: f(c.marginLeft),
        marginRight: f(c.marginRight),
        flankLeft: c.flankLeft.map(f),
        flankRight: c.flankRight.map(f),
      };
      if (c.ageTopMa !== undefined) o.ageTopMa = c.ageTopMa;
      return o;
    }),
    terminations: b.terminations.map((t) => ({ type: t.type, at: f(t.at) })),
    topIsDrowningSurface: b.topIsDrowningSurface,
  };
}

// ---------------------------------------------------------------------------------------------
// Rendering
// ---------------------------------------------------------------------------------------------

interface Lens {
  cycle: number;
  xc: number;
  half: number;
  frac: number;
  bulge: number;
  r: number;
}

/** Reflection coefficient for a downgoing wave from impedance i1 into i2 (normal incidence). */
export function reflectionCoefficient(i1: number, i2: number): number {
  return (i2 - i1) / (i2 + i1);
}

export interface RenderResult {
  /** 8-bit grey, row-major, one channel */
  grey: Uint8Array;
  /** the amplitudes behind the grey values (row-major), kept only when asked for */
  amplitude?: Float32Array;
  width: number;
  height: number;
}

/**
 * Renders the model into a width × height greyscale image. Column u is the trace at
 * x = x0 + (u + ½)·Δx, row v the sample at t = t0 + (v + ½)·Δt, with Δx, Δt the world size of
 * a pixel, so pixel coordinate (u, v) ↔ world (x0 + u·Δx, t0 + v·Δt).
 */
export function renderModel(model: EarthModel, opts: RenderOptions & { keepAmplitude?: boolean }): RenderResult {
  const { width, height } = opts;
  if (!Number.isInteger(width) || width < 1) fail('options.width', 'must be a positive integer');
  if (!Number.isInteger(height) || height < 1) fail('options.height', 'must be a positive integer');
  const fHz = opts.fHz ?? 30;
  num(fHz, 'options.fHz', { positive: true });
  const noise = num(opts.noise ?? 0.006, 'options.noise', { min: 0 });
  const clip = num(opts.clip ?? 0.07, 'options.clip', { positive: true });
  const seed = opts.seed ?? 'cayline';
  const def = model.def;
  const [x0, x1] = def.xRangeM;
  const [t0, t1] = def.twtRangeMs;
  const dxPx = (x1 - x0) / width;
  const dtPx = (t1 - t0) / height;
  // Internal time sampling: at most 1 ms, an odd number of samples per row so the middle one
  // sits exactly at the row centre.
  let sub = Math.max(1, Math.ceil(dtPx / 1));
  if (sub % 2 === 0) sub += 1;
  const dt = dtPx / sub; // ms
  const ns = height * sub;
  const wt = rickerTable(fHz, dt / 1000);
  const rng = seedrandom.alea(`${seed}:render`);
  const { water, overburden, carbonate } = def.velocities;
  const cs = def.buildup.cycles;
  const nc = cs.length;
  const nFill = def.fill.layers;

  // Lenses inside the carbonate cycles.
  const lenses: Lens[] = [];
  const perKm = def.buildup.lensesPerKm ?? 6;
  cs.forEach((c, i) => {
    const span = c.marginRightX - c.marginLeftX + 600;
    const count = Math.round((perKm * span) / 1000);
    for (let k = 0; k < count; k++) {
      lenses.push({
        cycle: i,
        xc: c.marginLeftX - 300 + rng() * span,
        half: 80 + rng() * 280,
        frac: 0.15 + rng() * 0.7,
        bulge: (rng() - 0.3) * 0.2,
        r: (rng() < 0.5 ? -1 : 1) * (0.012 + rng() * 0.025),
      });
    }
  });

  // Noise bank: band-limited (white noise convolved with the wavelet), unit RMS.
  const bankN = 48;
  const bankLen = ns + 256;
  const bank: Float32Array[] = [];
  if (noise > 0) {
    const w = rickerSampled(fHz, dt / 1000);
    for (let b = 0; b < bankN; b++) {
      const white = new Float64Array(bankLen);
      for (let i = 0; i < bankLen; i++) white[i] = rng() + rng() + rng() - 1.5;
      const col = convolveSame(white, w);
      let ss = 0;
      for (let i = 0; i < bankLen; i++) ss += col[i] * col[i];
      const k = 1 / Math.sqrt(ss / bankLen || 1);
      const f = new Float32Array(bankLen);
      for (let i = 0; i < bankLen; i++) f[i] = col[i] * k;
      bank.push(f);
    }
  }
  const noiseEvery = 3;
  const nodes = Math.ceil(width / noiseEvery) + 2;
  const nodeBank = new Int32Array(nodes);
  const nodeOff = new Int32Array(nodes);
  const nodeAmp = new Float32Array(nodes);
  for (let j = 0; j < nodes; j++) {
    nodeBank[j] = Math.floor(rng() * bankN) % bankN;
    nodeOff[j] = Math.floor(rng() * 256);
    nodeAmp[j] = (rng() < 0.5 ? -1 : 1) * noise * (0.8 + 0.4 * rng());
  }

  const grey = new Uint8Array(width * height);
  const amplitude = opts.keepAmplitude ? new Float32Array(width * height) : undefined;
  const trace = new Float64Array(ns);
  // interval scratch (depth top, impedance, velocity, kind)
  const maxIv = nFill + 2 + nc + def.substrate.layers + 4;
  const ivTop = new Float64Array(maxIv);
  const ivImp = new Float64Array(maxIv);
  const ivVel = new Float64Array(maxIv);
  const cycTopT = new Float64Array(nc);
  const cycTopZ = new Float64Array(nc);
  const cycThick = new Float64Array(nc);
  const U = new Float64Array(nc + 1);
  const zsf = def.seafloorDepthM;
  const waterImp = water * def.densities.water;
  const sampleOf = (tMs: number) => (tMs - t0) / dt - 0.5;
  const half = Math.floor(sub / 2);

  for (let u = 0; u < width; u++) {
    const x = x0 + (u + 0.5) * dxPx;
    trace.fill(0);
    // Surfaces at this x.
    const zb = model.baseDepth(x);
    U[0] = zb;
    for (let i = 0; i < nc; i++) {
      const s = model.cycleDepth(i, x);
      U[i + 1] = s < U[i] ? s : U[i];
    }
    const env = U[nc];
    // Intervals from the top down.
    let m = 0;
    ivTop[m] = 0;
    ivImp[m] = waterImp;
    ivVel[m++] = water;
    // fill, youngest first: interval k spans [top_k, top_{k-1}) (top_{-1} = env)
    ivTop[m] = zsf;
    const fv = model.fillVar;
    ivImp[m] = model.fillImp[nFill] * (1 + fv.amp[nFill] * Math.sin(fv.k[nFill] * x + fv.phase[nFill]));
    ivVel[m++] = overburden;
    for (let k = nFill - 1; k >= 0; k--) {
      ivTop[m] = model.fillTopDepth(k, x);
      ivImp[m] = model.fillImp[k] * (1 + fv.amp[k] * Math.sin(fv.k[k] * x + fv.phase[k]));
      ivVel[m++] = overburden;
    }
    for (let i = nc; i >= 1; i--) {
      cycThick[i - 1] = U[i - 1] - U[i];
      cycTopZ[i - 1] = U[i];
      ivTop[m] = U[i];
      ivImp[m] = carbonate * cs[i - 1].density;
      ivVel[m++] = carbonate;
    }
    ivTop[m] = zb;
    ivImp[m] = model.substrateImp[0];
    ivVel[m++] = overburden;
    const zReg = model.regionalBaseDepth(x);
    let prevS = zb;
    for (let j = 0; j < def.substrate.layers; j++) {
      let s = zReg + (j + 1) * def.substrate.thicknessM + undulate(x, model.substrateWobble[j]);
      if (s < prevS + 0.1) s = prevS + 0.1;
      ivTop[m] = s;
      ivImp[m] = model.substrateImp[j + 1];
      ivVel[m++] = overburden;
      prevS = s;
    }
    // Walk down, accumulating TWT; a reflection wherever impedance changes.
    let t = 0;
    let lastImp = ivImp[0];
    for (let q = 1; q < m; q++) {
      const thickAbove = ivTop[q] - ivTop[q - 1];
      if (thickAbove > 0) t += (2000 * thickAbove) / ivVel[q - 1];
      if (q < m - 1 && ivTop[q + 1] - ivTop[q] <= 1e-9) continue; // empty interval
      if (t > t1 + 100) break;
      const imp = ivImp[q];
      if (imp !== lastImp) stampSpike(trace, sampleOf(t), reflectionCoefficient(lastImp, imp), wt);
      lastImp = imp;
      // TWT of each cycle top (for the lenses)
      const ci = q - (nFill + 2); // interval index of cycle nc is nFill+2
      if (ci >= 0 && ci < nc) cycTopT[nc - 1 - ci] = t;
    }
    // Lenses.
    if (env < zb) {
      for (const L of lenses) {
        const d = (x - L.xc) / L.half;
        if (d <= -1 || d >= 1) continue;
        const th = cycThick[L.cycle];
        if (th < 4) continue;
        const frac = Math.min(0.95, Math.max(0.05, L.frac - L.bulge * (1 - d * d)));
        const tt = cycTopT[L.cycle] + (2000 * frac * th) / carbonate;
        const taper = Math.cos((Math.PI / 2) * d);
        stampSpike(trace, sampleOf(tt), L.r * taper * taper, wt);
      }
    }
    // Noise, blended between nodes every `noiseEvery` columns.
    if (noise > 0) {
      const fpos = u / noiseEvery;
      const j = Math.floor(fpos);
      const w = fpos - j;
      const bA = bank[nodeBank[j]];
      const bB = bank[nodeBank[j + 1]];
      const oA = nodeOff[j];
      const oB = nodeOff[j + 1];
      const aA = nodeAmp[j] * (1 - w);
      const aB = nodeAmp[j + 1] * w;
      for (let i = 0; i < ns; i++) trace[i] += aA * bA[i + oA] + aB * bB[i + oB];
    }
    // To grey: positive amplitude dark, zero mid-grey, clipped.
    for (let v = 0; v < height; v++) {
      const a = trace[v * sub + half];
      let g = 128 - (127 * a) / clip;
      if (g < 1) g = 1;
      else if (g > 255) g = 255;
      grey[v * width + u] = Math.round(g);
      if (amplitude) amplitude[v * width + u] = a;
    }
  }
  return { grey, amplitude, width, height };
}
