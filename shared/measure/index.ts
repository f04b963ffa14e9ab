/**
 * Cayline measurement engine (measurement-spec.md): pure TypeScript, no DB,
 * no DOM, no Node-only APIs — the server, the browser and the command line
 * run the same code.
 *
 * `measure(input, options)` validates the interpretation and options (zod),
 * converts the geometry to depth (x, z in metres, z down), and returns the
 * whole output of spec §7, or throws `MeasureInputError` naming the path of
 * the first bad field; nothing is half-computed.
 */
import {
  depthContextSchema,
  describeIssues,
  interpretationSchema,
  measureOptionsSchema,
  type Interpretation,
  type MeasureOptions,
} from '../schemas/interpretation';
import { cycleMetrics, type CycleMetrics } from './cycles';
import { asymmetryOf, netTrajectory, profileMetrics, terminationsOnTop, type Asymmetry } from './buildup';
import { aggradationFloorM, classifyBuildup, type BuildupClass, type DrowningIndicator } from './classify';
import type { CalibrationFit } from './calibration';
import { MeasureInputError } from './errors';
import { evaluateEnvelope, envelopeAt, piecesOf, planEnvelope, type Envelope } from './envelope';
import { DEG, type Point } from './geometry';
import { converterFor, prepare, toDepth, type PreparedInterpretation } from './prepare';
import { monteCarlo, type BuildupRanges } from './uncertainty';
import { describeVelocityModel, hasRanges, makeTwtToDepth, modeOf, type ResolvedVelocityModel } from './velocity';

export * from './errors';
export * from './geometry';
export * from './envelope';
export * from './calibration';
export * from './velocity';
export * from './exaggeration';
export * from './growth';
export * from './flank';
export * from './rates';
export * from './classify';
export * from './cycles';
export * from './buildup';
export * from './uncertainty';
export * from './linear-ranges';
export type { Interpretation, InterpretationInput, MeasureOptions, MeasureOptionsInput } from '../schemas/interpretation';

export const OUTPUT_FORMAT = 'cayline.measurements/1';

export const CAUTION =
  'These numbers support, and do not replace, the judgement of a qualified interpreter and the operator’s own review and approval process.';

export interface BuildupMeasurement {
  name: string;
  classification: BuildupClass;
  evidence: string[];
  drowningIndicators: DrowningIndicator[];
  heightM: number;
  baseWidthM: number;
  aspectRatio: number;
  areaM2: number;
  volumeM3: number;
  volumeLeftM3: number;
  volumeRightM3: number;
  volumeNote: string;
  trajectoryDeg: number | null;
  netBackstepM: number | null;
  netAggradationM: number | null;
  crest: Point;
  asymmetry: Asymmetry;
  terminationsOnTop: number;
  baseAgeMa: number | null;
  cycles: CycleMetrics[];
  ranges: BuildupRanges | null;
}

export interface MeasurementOutput {
  format: typeof OUTPUT_FORMAT;
  options: MeasureOptions;
  verticalDomain: 'twt_ms' | 'depth_m';
  coordinates: 'world' | 'pixels';
  calibration: CalibrationFit | null;
  /** Velocity model used for the deterministic numbers (ranges replaced by their modes); null in the depth domain. */
  velocityUsed: ResolvedVelocityModel | null;
  assumptions: string[];
  caution: string;
  buildups: BuildupMeasurement[];
}

function fail(error: { issues: readonly unknown[] }, prefix: PropertyKey[] = []): never {
  const issues = describeIssues(error, prefix);
  const first = issues[0] ?? { path: prefix.join('.'), message: 'is invalid', text: 'invalid input' };
  throw new MeasureInputError(first.path, first.message, issues.map((i) => i.text));
}

/** Validate an interpretation (spec §4); throws MeasureInputError with the path of the first bad field. */
export function parseInterpretation(input: unknown): Interpretation {
  const r = interpretationSchema.safeParse(input);
  if (!r.success) fail(r.error);
  return r.data;
}

/** Validate measurement options (defaults filled in); errors carry the path `options.<field>`. */
export function parseOptions(options: unknown): MeasureOptions {
  const r = measureOptionsSchema.safeParse(options ?? {});
  if (!r.success) fail(r.error, ['options']);
  return r.data;
}

function assumptionsOf(p: PreparedInterpretation, o: MeasureOptions, ranged: boolean): string[] {
  const a: string[] = [];
  if (p.calibration) {
    a.push(
      `Pixels converted to section coordinates with an ${p.calibration.mode === 'axes' ? 'axes-only (no rotation)' : 'affine'} least-squares calibration from ${p.calibration.residuals.length} ties (RMS residual ${p.calibration.rmsPx.toFixed(2)} px).`,
    );
  }
  if (p.verticalDomain === 'depth_m') a.push('Vertical values are depths in metres: no velocity conversion was applied.');
  else if (p.velocity) {
    a.push(describeVelocityModel(p.velocity));
    a.push('Conversion along vertical rays: each point keeps its x; lateral velocity changes are represented only by the model above.');
    if (ranged)
      a.push(
        `Velocity ranges: deterministic numbers use the modes; ranges come from ${o.draws} seeded triangular draws (seed ${JSON.stringify(o.seed)}), velocities drawn independently, reported as P90 (low) / P50 / P10 (high) in the SPE-PRMS exceedance convention.`,
      );
  }
  a.push('The section is assumed to be migrated: true dips follow tan θ = (v/2)·dt/dx, not the sine relation of unmigrated sections.');
  a.push('Angles, thicknesses, areas and volumes are computed in the depth domain (x and z in metres, no vertical exaggeration).');
  a.push('Volumes are solids of revolution about the vertical axis through the crest (Pappus), the mean of the left and right half-profiles: an estimate that assumes a round buildup.');
  a.push(
    `Thresholds: aggrading within 90° ± ${o.aggradingToleranceDeg}°; drowned with at least ${o.drownedMinTerminations} onlap/downlap terminations within ${o.terminationToleranceM} m of the youngest top between its margins, or a flagged drowning surface.`,
  );
  return a;
}

/**
 * Measure an interpretation (spec §4 input, §7 output). `options` as in
 * `measureOptionsSchema` (defaults: aggradingToleranceDeg 10,
 * drownedMinTerminations 2, terminationToleranceM 25, asymmetryMinDeg 2,
 * draws 1000, seed "cayline").
 */
export function measure(input: unknown, options?: unknown): MeasurementOutput {
  const it = parseInterpretation(input);
  const o = parseOptions(options);
  const p = prepare(it);
  const resolved = p.velocity ? modeOf(p.velocity) : null;
  const conv = converterFor(p, resolved);
  const ranged = !!p.velocity && hasRanges(p.velocity);
  const buildups = p.buildups.map((b): BuildupMeasurement => {
    const d = toDepth(b, conv);
    const cycles = cycleMetrics(d, b.input.cycles, b.input.baseAgeMa, o.aggradingToleranceDeg);
    const prof = profileMetrics(d, b.plan);
    const net = netTrajectory(d);
    const onTop = terminationsOnTop(d, o.terminationToleranceM);
    const n = cycles.length;
    const cls = classifyBuildup({
      cycleCount: n,
      topIsDrowningSurface: b.input.topIsDrowningSurface,
      terminationsOnTop: onTop,
      netTrajectoryDeg: net.trajectoryDeg,
      netBackstepM: net.meanBackstepM,
      netAggradationM: net.meanAggradationM,
      topWidthsM: cycles.map((c) => c.topWidthM),
      thicknessesM: cycles.map((c) => c.thicknessM),
      marginsXM: [cycles[n - 1].marginLeft[0], cycles[n - 1].marginRight[0]],
      aggradationFloorM: aggradationFloorM([d.marginsL[0], d.marginsL[n - 1], d.marginsR[0], d.marginsR[n - 1]]),
      aggradingToleranceDeg: o.aggradingToleranceDeg,
      drownedMinTerminations: o.drownedMinTerminations,
      terminationToleranceM: o.terminationToleranceM,
    });
    return {
      name: b.name,
      classification: cls.classification,
      evidence: cls.evidence,
      drowningIndicators: cls.drowningIndicators,
      heightM: prof.heightM,
      baseWidthM: prof.baseWidthM,
      aspectRatio: prof.aspectRatio,
      areaM2: prof.areaM2,
      volumeM3: prof.volumeM3,
      volumeLeftM3: prof.volumeLeftM3,
      volumeRightM3: prof.volumeRightM3,
      volumeNote: 'Estimate: solid of revolution about the vertical axis through the crest (Pappus), mean of the left and right half-profiles; assumes a round buildup.',
      trajectoryDeg: net.trajectoryDeg,
      netBackstepM: net.meanBackstepM,
      netAggradationM: net.meanAggradationM,
      crest: prof.crest,
      asymmetry: asymmetryOf(cycles, net, o.asymmetryMinDeg),
      terminationsOnTop: onTop,
      baseAgeMa: b.input.baseAgeMa ?? null,
      cycles,
      ranges: null,
    };
  });
  const ranges = ranged ? monteCarlo(p, { draws: o.draws, seed: o.seed }) : null;
  if (ranges) ranges.forEach((r, i) => (buildups[i].ranges = r));
  return {
    format: OUTPUT_FORMAT,
    options: o,
    verticalDomain: p.verticalDomain,
    coordinates: p.coordinates,
    calibration: p.calibration,
    velocityUsed: p.verticalDomain === 'twt_ms' ? resolved : null,
    assumptions: assumptionsOf(p, o, ranged),
    caution: CAUTION,
    buildups,
  };
}

export interface DepthConverter {
  /** Input point (pixels or world) → section coordinates [x, y]. */
  toWorld(p: readonly number[]): [number, number];
  /** Input point (pixels or world) → depth domain [x m, z m]. */
  toDepth(p: readonly number[]): [number, number];
}

/**
 * A point converter for live readouts (cursor, Ruler) using the mode
 * velocities. For the `buildup` velocity model the envelope is that of
 * buildup `options.buildup` when given, otherwise the envelope of all
 * buildups' tops and flanks together (a ray through any buildup crosses its
 * carbonate).
 */
export function createDepthConverter(context: unknown, options?: { buildup?: number }): DepthConverter {
  const r = depthContextSchema.safeParse(context);
  if (!r.success) fail(r.error);
  const p = prepare(r.data);
  const resolved = p.velocity ? modeOf(p.velocity) : null;
  let env: Envelope | null = null;
  if (p.velocity?.kind === 'buildup') {
    const bs = options?.buildup != null ? [p.buildups[options.buildup]] : p.buildups;
    if (options?.buildup != null && !bs[0]) throw new MeasureInputError('buildup', `no buildup number ${options.buildup}`);
    const sources = bs.flatMap((b) => b.sources);
    env = sources.length ? evaluateEnvelope(planEnvelope(piecesOf(sources), (s) => sources[s].xs, sources.length), sources.map((s) => s.ys)) : null;
  }
  const conv = p.verticalDomain === 'twt_ms' && resolved ? makeTwtToDepth(resolved) : (y: number) => y;
  return {
    toWorld: (q) => p.toWorld(q),
    toDepth: (q) => {
      const [x, y] = p.toWorld(q);
      return [x, conv(y, env ? envelopeAt(env, x) : NaN)];
    },
  };
}

/** Convert one input point (pixels or world) to the depth domain [x m, z m]. */
export function toDepthDomain(context: unknown, point: readonly number[], options?: { buildup?: number }): [number, number] {
  return createDepthConverter(context, options).toDepth(point);
}

export interface RulerReading {
  a: Point;
  b: Point;
  /** Straight distance in depth (m). */
  distanceM: number;
  dxM: number;
  /** Depth difference, b minus a (m, positive = b deeper). */
  dzM: number;
  /** True angle of the line below horizontal, 0–90°. */
  angleDeg: number;
  /** Which way the line deepens ('left', 'right', or null when flat or vertical). */
  deepensTo: 'left' | 'right' | null;
}

/** Distance and true angle between two input points, both converted to depth. */
export function rulerReading(context: unknown, a: readonly number[], b: readonly number[], options?: { buildup?: number }): RulerReading {
  const c = createDepthConverter(context, options);
  const pa = c.toDepth(a);
  const pb = c.toDepth(b);
  const dx = pb[0] - pa[0];
  const dz = pb[1] - pa[1];
  const angle = Math.atan2(Math.abs(dz), Math.abs(dx)) * DEG;
  const deepensTo = dz === 0 || dx === 0 ? null : (dz > 0) === (dx > 0) ? 'right' : 'left';
  return { a: pa, b: pb, distanceM: Math.hypot(dx, dz), dxM: dx, dzM: dz, angleDeg: angle, deepensTo };
}
