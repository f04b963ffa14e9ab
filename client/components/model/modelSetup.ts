/**
 * The forward model's parameter editor as plain data (no Vue): the draft the
 * form edits, its conversion into the model's parameters (checked by the
 * shared zod schema, every refusal naming its field), the antecedent profile
 * (the buildup's traced base in depth, a drawn or a typed one), the traced
 * tops for the fit, the modelled surfaces on the section's image, the summary
 * kept with a saved run, and interpreted-versus-modelled rows.
 *
 * Frames. The section's depth is the present depth below sea level (m). The
 * model's frame has z = 0 at sea level at the start of the run. A profile in
 * present depth goes into the model shifted up by `depthOffsetM` = its
 * shallowest depth − the water depth chosen over it at the start; modelled
 * surfaces come back by adding the same offset (uniform subsidence keeps the
 * model's frame fixed to the rock, so a shift is all that separates the two;
 * compaction is not modelled).
 */
import { FORWARD_MODEL_PRESETS, profileAndTopsOf, interpretationToTwt, type ModelInterpretation, type ThresholdResult } from '../../../shared/forward-model/index';
import { forwardModelParamsSchema, type ForwardModelParamsInput } from '../../../shared/schemas/forward-model';
import type { ModelRunSummary, ProfileSource } from '../../../shared/schemas/model-runs';
import { describeIssues } from '../../../shared/schemas/interpretation';
import { fitCalibration, invertCalibration, type MeasurementOutput } from '../../../shared/measure/index';
import { toInterpretationInput, type EditorBuildup, type MeasureContext } from '../../../shared/editor/model';
import { CLASS_LABEL } from '../../canvas/palette';
import type { FitOutcome, RunOutcome } from '../../composables/forward-model.worker';

type Pt = [number, number];

export interface SinusoidDraft {
  amplitudeM: number;
  periodYr: number;
  phaseDeg: number;
}

/** What the editor edits. Lists are typed as text ("0 0\n100000 12"), parsed by `draftToParams`. */
export interface ModelDraft {
  name: string;
  presetKey: string;
  growth: { GmMmPerYr: number; I0: number; Ik: number; kPerM: number };
  slopeLimitDeg: number;
  marginSlopeDeg: number;
  exposedLoweringMmPerYr: number;
  eustasyKind: 'none' | 'table' | 'sinusoids';
  /** Rows "t_yr level_m". */
  eustasyTable: string;
  sinusoids: SinusoidDraft[];
  subsidenceKind: 'constant' | 'table';
  subsidenceRateMPerMyr: number;
  /** Rows "t_yr subsided_m". */
  subsidenceTable: string;
  stepYr: number;
  durationYr: number;
  boundaryMode: 'times' | 'lowstands';
  /** Times (yr), separated by commas or spaces. */
  boundaryTimes: string;
  /** Factors 0–1 per cycle, oldest first, separated by commas or spaces. */
  factors: string;
  columns: number;
  profileSource: ProfileSource;
  /** Rows "x_m depth_m" (present depth). */
  typedProfile: string;
  /** Points drawn on the sketch pad, [x m, present depth m]. */
  drawnProfile: Pt[];
  /** Water depth over the profile's shallowest point at the start (m). */
  startWaterDepthM: number;
}

/**
 * Defaults: the tropical reef preset's growth and slope limit, four cycles of
 * 100 kyr under a steady rise (1700 m/Myr, about the thickness of one demo
 * cycle per 100 kyr) with a 10 m, 100 kyr eustatic swing, and falling
 * production factors — a setting where the factory eventually gives up.
 * Cayline's own starting point, not a published case.
 */
export function defaultDraft(presetKey = 'tropical-reef'): ModelDraft {
  const preset = FORWARD_MODEL_PRESETS.find((p) => p.key === presetKey) ?? FORWARD_MODEL_PRESETS[0];
  return {
    name: preset.label,
    presetKey: preset.key,
    growth: { ...preset.growth },
    slopeLimitDeg: preset.slopeLimitDeg,
    marginSlopeDeg: 5,
    exposedLoweringMmPerYr: 0,
    eustasyKind: 'sinusoids',
    eustasyTable: '0 0\n200000 -10\n400000 0',
    sinusoids: [{ amplitudeM: 10, periodYr: 100_000, phaseDeg: 0 }],
    subsidenceKind: 'constant',
    subsidenceRateMPerMyr: 1700,
    subsidenceTable: '0 0\n400000 680',
    stepYr: 100,
    durationYr: 400_000,
    boundaryMode: 'times',
    boundaryTimes: '100000, 200000, 300000',
    factors: '1, 0.5, 0.25, 0.12',
    columns: 201,
    profileSource: 'traced',
    typedProfile: '',
    drawnProfile: [],
    startWaterDepthM: 10,
  };
}

/** Apply a preset's growth parameters and slope limit (everything else stays). */
export function applyPreset(d: ModelDraft, key: string): ModelDraft {
  const preset = FORWARD_MODEL_PRESETS.find((p) => p.key === key);
  if (!preset) return d;
  return { ...d, presetKey: key, growth: { ...preset.growth }, slopeLimitDeg: preset.slopeLimitDeg };
}

export interface FieldIssue {
  /** Path in the model's parameters (`stepYr`, `cycles.productionFactors[2]`, `profile`…). */
  path: string;
  message: string;
}

export class DraftError extends Error {
  constructor(public issues: FieldIssue[]) {
    super(issues.map((i) => (i.path ? `${i.path}: ${i.message}` : i.message)).join('; '));
    this.name = 'DraftError';
  }
}

/** Numbers of a list typed with commas, semicolons or spaces; a word that is not a number stays NaN, so the schema names its position. */
export function parseList(text: string): number[] {
  const parts = text.split(/[\s,;]+/).filter((s) => s.length > 0);
  return parts.map((s) => Number(s));
}

/** Rows of two numbers, one row a line ("a b" or "a, b"); blank lines skipped. */
export function parseRows(text: string): [number, number][] {
  return text
    .split(/\r?\n/)
    .map((l) => l.trim())
    .filter((l) => l.length > 0)
    .map((l) => {
      const v = l.split(/[\s,;]+/).map(Number);
      return [v[0], v.length === 2 ? v[1] : Number.NaN] as [number, number];
    });
}

/** The buildup's traced base and tops in present depth (m), or the reason they cannot be had. */
export function tracedGeometry(b: EditorBuildup | null, ctx: MeasureContext | null): { profile: Pt[]; tops: Pt[][] } | { error: string } {
  if (!b) return { error: 'Select a buildup first.' };
  if (!ctx) return { error: 'The section needs its Ties (and, in TWT, a velocity model) first.' };
  try {
    return profileAndTopsOf(toInterpretationInput(b, ctx), 0);
  } catch (e) {
    return { error: e instanceof Error ? e.message : String(e) };
  }
}

/** The antecedent profile in present depth for the chosen source. */
export function profileFor(d: ModelDraft, traced: Pt[] | null): Pt[] {
  if (d.profileSource === 'traced') return traced ?? [];
  if (d.profileSource === 'drawn') return [...d.drawnProfile].sort((a, b) => a[0] - b[0]);
  return parseRows(d.typedProfile);
}

/**
 * The model's parameters from the draft, and the offset between the section's
 * depth and the model's frame. Throws DraftError naming every bad field.
 */
export function draftToParams(d: ModelDraft, traced: Pt[] | null): { params: ForwardModelParamsInput; depthOffsetM: number } {
  const present = profileFor(d, traced);
  const finiteZ = present.map((p) => p[1]).filter(Number.isFinite);
  const depthOffsetM = finiteZ.length ? Math.min(...finiteZ) - d.startWaterDepthM : 0;
  if (!Number.isFinite(d.startWaterDepthM)) throw new DraftError([{ path: 'startWaterDepthM', message: 'must be a finite number' }]);
  const params: ForwardModelParamsInput = {
    name: d.name,
    profile: present.map(([x, z]) => [x, z - depthOffsetM]),
    columns: d.columns,
    growth: { ...d.growth },
    exposedLoweringMmPerYr: d.exposedLoweringMmPerYr,
    eustasy:
      d.eustasyKind === 'none'
        ? { kind: 'none' }
        : d.eustasyKind === 'table'
          ? { kind: 'table', points: parseRows(d.eustasyTable) }
          : { kind: 'sinusoids', terms: d.sinusoids.map((s) => ({ ...s })) },
    subsidence: d.subsidenceKind === 'constant' ? { kind: 'constant', rateMPerMyr: d.subsidenceRateMPerMyr } : { kind: 'table', points: parseRows(d.subsidenceTable) },
    stepYr: d.stepYr,
    durationYr: d.durationYr,
    cycles: { boundaries: d.boundaryMode === 'lowstands' ? 'lowstands' : parseList(d.boundaryTimes), productionFactors: parseList(d.factors) },
    slopeLimitDeg: d.slopeLimitDeg,
    marginSlopeDeg: d.marginSlopeDeg,
  };
  const r = forwardModelParamsSchema.safeParse(params);
  if (!r.success) throw new DraftError(describeIssues(r.error).map((i) => ({ path: i.path, message: i.message })));
  return { params, depthOffsetM };
}

/** The draft back from saved parameters (a saved run opened again). */
export function paramsToDraft(p: ForwardModelParamsInput, depthOffsetM: number, source: ProfileSource, base: ModelDraft = defaultDraft()): ModelDraft {
  const rows = (pts: readonly (readonly number[])[]) => pts.map((r) => `${r[0]} ${r[1]}`).join('\n');
  const present: Pt[] = p.profile.map(([x, z]) => [x, z + depthOffsetM]);
  const minZ = Math.min(...p.profile.map((q) => q[1]));
  const e = p.eustasy ?? { kind: 'none' as const };
  const s = p.subsidence ?? { kind: 'constant' as const, rateMPerMyr: 0 };
  const b = p.cycles.boundaries ?? [];
  return {
    ...base,
    name: p.name ?? base.name,
    growth: { ...p.growth },
    slopeLimitDeg: p.slopeLimitDeg ?? 35,
    marginSlopeDeg: p.marginSlopeDeg ?? 5,
    exposedLoweringMmPerYr: p.exposedLoweringMmPerYr ?? 0,
    eustasyKind: e.kind,
    eustasyTable: e.kind === 'table' ? rows(e.points) : base.eustasyTable,
    sinusoids: e.kind === 'sinusoids' ? e.terms.map((t) => ({ amplitudeM: t.amplitudeM, periodYr: t.periodYr, phaseDeg: t.phaseDeg ?? 0 })) : base.sinusoids,
    subsidenceKind: s.kind,
    subsidenceRateMPerMyr: s.kind === 'constant' ? s.rateMPerMyr : base.subsidenceRateMPerMyr,
    subsidenceTable: s.kind === 'table' ? rows(s.points) : base.subsidenceTable,
    stepYr: p.stepYr,
    durationYr: p.durationYr,
    boundaryMode: b === 'lowstands' ? 'lowstands' : 'times',
    boundaryTimes: b === 'lowstands' ? base.boundaryTimes : b.join(', '),
    factors: p.cycles.productionFactors.join(', '),
    columns: p.columns ?? 201,
    profileSource: source,
    typedProfile: source === 'typed' ? rows(present) : base.typedProfile,
    drawnProfile: source === 'drawn' ? present : base.drawnProfile,
    startWaterDepthM: minZ,
  };
}

/** Evenly spaced boundary times for `cycles` cycles over the run ("100000, 200000, …"). */
export function evenBoundaries(durationYr: number, cycles: number): string {
  const out: number[] = [];
  for (let i = 1; i < cycles; i++) out.push(Math.round((durationYr * i) / cycles));
  return out.join(', ');
}

// ---------------------------------------------------------------------------
// the modelled surfaces on the section's image

export interface OverlayLine {
  kind: 'base' | 'top' | 'flank';
  /** Cycle number (1 = oldest); 0 for the base. */
  cycle: number;
  /** Flat [u0, v0, u1, v1, …] in image pixels. */
  points: number[];
}

/**
 * The modelled surfaces in image pixels: model frame → present depth (+
 * offset) → TWT through the section's velocity model (the inverse of the
 * engine's conversion, `interpretationToTwt`) when the section is in TWT →
 * pixels through the inverse of the Ties' affine calibration.
 */
export function overlayLines(it: ModelInterpretation, depthOffsetM: number, ctx: MeasureContext): OverlayLine[] {
  const shift = (pl: readonly (readonly number[])[]): Pt[] => pl.map((p) => [p[0], p[1] + depthOffsetM]);
  const shifted: ModelInterpretation = {
    ...it,
    buildups: it.buildups.map((b) => ({
      ...b,
      base: shift(b.base),
      cycles: b.cycles.map((c) => ({
        ...c,
        top: shift(c.top),
        marginLeft: shift([c.marginLeft])[0],
        marginRight: shift([c.marginRight])[0],
        ...(c.flankLeft ? { flankLeft: shift(c.flankLeft) } : {}),
        ...(c.flankRight ? { flankRight: shift(c.flankRight) } : {}),
      })),
    })),
  };
  const world = ctx.verticalDomain === 'twt_ms' && ctx.velocity ? interpretationToTwt(shifted, ctx.velocity) : shifted;
  const affine = fitCalibration(ctx.calibrationTies.map((t) => ({ px: [t.px[0], t.px[1]], world: [t.world[0], t.world[1]] }))).affine;
  const px = (pl: readonly (readonly number[])[]) => pl.flatMap((p) => invertCalibration(affine, p));
  const out: OverlayLine[] = [];
  for (const b of world.buildups) {
    out.push({ kind: 'base', cycle: 0, points: px(b.base) });
    for (const c of b.cycles) {
      out.push({ kind: 'top', cycle: c.index, points: px(c.top) });
      if (c.flankLeft) out.push({ kind: 'flank', cycle: c.index, points: px(c.flankLeft) });
      if (c.flankRight) out.push({ kind: 'flank', cycle: c.index, points: px(c.flankRight) });
    }
  }
  return out;
}

// ---------------------------------------------------------------------------
// summary kept with a saved run

export function summaryOf(run: RunOutcome, threshold: ThresholdResult | null, fit: Omit<FitOutcome, 'run'> | null): ModelRunSummary {
  const b = run.measurement?.buildups[0] ?? null;
  const fin = (v: number | null | undefined) => (v != null && Number.isFinite(v) ? v : null);
  return {
    crestWaterDepthM: run.crestWaterDepthM,
    drowningDepthM: run.drowningDepthM,
    drowned: run.drowned,
    steps: run.steps,
    classification: b?.classification ?? null,
    heightM: fin(b?.heightM),
    baseWidthM: fin(b?.baseWidthM),
    netBackstepM: fin(b?.netBackstepM),
    netAggradationM: fin(b?.netAggradationM),
    cycles: (b?.cycles ?? []).map((c, i) => ({
      index: c.index,
      topWidthM: fin(c.topWidthM),
      thicknessM: fin(c.thicknessM),
      meanBackstepM: fin(c.meanBackstepM),
      meanAggradationM: fin(c.meanAggradationM),
      factor: fin(run.factors[i]),
    })),
    threshold: threshold
      ? { parameter: threshold.parameter, value: threshold.value, drowningDepthM: threshold.drowningDepthM, points: threshold.points.slice(0, 200) }
      : null,
    fit: fit ? { factors: fit.factors, subsidenceMPerMyr: fit.subsidenceMPerMyr, rmsM: fit.rmsM, warnings: fit.warnings.map((w) => w.slice(0, 500)).slice(0, 50) } : null,
  };
}

// ---------------------------------------------------------------------------
// interpreted and modelled side by side

export interface SideRow {
  key: string;
  label: string;
  unit: string;
  interpreted: number | string | null;
  modelled: number | string | null;
  /** modelled − interpreted, for numbers present on both sides. */
  diff: number | null;
}

function num(key: string, label: string, unit: string, a: number | null | undefined, b: number | null | undefined): SideRow {
  const x = a != null && Number.isFinite(a) ? a : null;
  const y = b != null && Number.isFinite(b) ? b : null;
  return { key, label, unit, interpreted: x, modelled: y, diff: x !== null && y !== null ? y - x : null };
}

const drowningText = (b: MeasurementOutput['buildups'][number] | null) =>
  b ? (b.classification === 'drowned' ? 'drowned' : b.drowningIndicators.length ? `${b.drowningIndicators.length} sign${b.drowningIndicators.length === 1 ? '' : 's'}` : 'no sign') : null;

/** Buildup figures, then per cycle (by index): top width, thickness, backstep, aggradation. */
export function sideBySide(interpreted: MeasurementOutput | null, modelled: MeasurementOutput | null): SideRow[] {
  const a = interpreted?.buildups[0] ?? null;
  const b = modelled?.buildups[0] ?? null;
  if (!a && !b) return [];
  const rows: SideRow[] = [
    { key: 'class', label: 'Evolution', unit: '', interpreted: a ? CLASS_LABEL[a.classification] : null, modelled: b ? CLASS_LABEL[b.classification] : null, diff: null },
    { key: 'drowning', label: 'Drowning', unit: '', interpreted: drowningText(a), modelled: drowningText(b), diff: null },
    num('height', 'Height', 'm', a?.heightM, b?.heightM),
    num('baseWidth', 'Base width', 'm', a?.baseWidthM, b?.baseWidthM),
    num('backstep', 'Net backstep', 'm', a?.netBackstepM, b?.netBackstepM),
    num('aggradation', 'Net aggradation', 'm', a?.netAggradationM, b?.netAggradationM),
    num('trajectory', 'Net trajectory', '°', a?.trajectoryDeg, b?.trajectoryDeg),
  ];
  const idx = [...new Set([...(a?.cycles ?? []), ...(b?.cycles ?? [])].map((c) => c.index))].sort((x, y) => x - y);
  for (const i of idx) {
    const ca = a?.cycles.find((c) => c.index === i);
    const cb = b?.cycles.find((c) => c.index === i);
    rows.push(
      num(`c${i}.topWidth`, `Cycle ${i} top width`, 'm', ca?.topWidthM, cb?.topWidthM),
      num(`c${i}.thickness`, `Cycle ${i} thickness`, 'm', ca?.thicknessM, cb?.thicknessM),
      num(`c${i}.backstep`, `Cycle ${i} backstep`, 'm', ca?.meanBackstepM, cb?.meanBackstepM),
      num(`c${i}.aggradation`, `Cycle ${i} aggradation`, 'm', ca?.meanAggradationM, cb?.meanAggradationM),
    );
  }
  return rows;
}
