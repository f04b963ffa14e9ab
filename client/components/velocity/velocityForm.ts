/**
 * Form model of the velocity editor (measurement-spec §3) and its
 * conversions, kept apart from the component so they can be tested.
 *
 * The form keeps the fields of every kind at once, so switching kind and
 * back loses nothing. Each velocity is a `SpeedField`: a single value or a
 * `{ min, mode, max }` range (triangular, spec §8). `fromForm` builds the
 * model of the chosen kind and validates it with the shared
 * `velocityModelSchema`; errors come back keyed by field path (`v`,
 * `layers[1].topMs`, `water.v.mode`, …).
 */
import { toDisplayVelocity, velocityLabel, type LengthUnit } from '../../../shared/units';
import type { VelocityModel, VelocityValue } from '../../canvas/model';
import { describeIssues, velocityModelSchema } from '../../../shared/schemas/interpretation';
import { DEFAULT_VELOCITY } from '../../../shared/schemas/buildups';

export type VelocityKind = VelocityModel['kind'];
export const VELOCITY_KINDS: readonly { value: VelocityKind; label: string; hint: string }[] = [
  { value: 'buildup', label: 'Buildup-aware', hint: 'water, overburden down to the buildup, carbonate below it' },
  { value: 'constant', label: 'Constant', hint: 'one velocity everywhere' },
  { value: 'layers', label: 'Layers', hint: 'interval velocities by TWT' },
  { value: 'linear', label: 'Linear gradient', hint: 'v(z) = v0 + k·z' },
];

export interface SpeedField {
  ranged: boolean;
  value: number | null;
  min: number | null;
  mode: number | null;
  max: number | null;
}

export interface LayerRow {
  /** Stable key for list rendering. */
  key: number;
  topMs: number | null;
  v: SpeedField;
}

export interface VelocityForm {
  kind: VelocityKind;
  constant: { v: SpeedField };
  layers: LayerRow[];
  linear: { v0: SpeedField; k: number | null };
  buildup: { water: { v: SpeedField; seafloorMs: number | null }; overburden: { v: SpeedField }; carbonate: { v: SpeedField } };
}

let layerKey = 0;
const nextKey = () => ++layerKey;

export function speedField(v: VelocityValue): SpeedField {
  if (typeof v === 'number') return { ranged: false, value: v, min: null, mode: null, max: null };
  return { ranged: true, value: v.mode, min: v.min, mode: v.mode, max: v.max };
}

/** A speed field as the model value: the number, or the range (nulls are left for the schema to refuse). */
export function speedValue(f: SpeedField): unknown {
  if (!f.ranged) return f.value ?? undefined;
  return { min: f.min ?? undefined, mode: f.mode ?? undefined, max: f.max ?? undefined };
}

const round10 = (v: number) => Math.round(v / 10) * 10;

/**
 * Switch a field between a single value and a range. A value becomes the
 * mode of a ±10 % range (rounded to 10 m/s); a range becomes its mode.
 */
export function toggleRange(f: SpeedField): SpeedField {
  if (f.ranged) return { ranged: false, value: f.mode ?? f.value, min: null, mode: null, max: null };
  const v = f.value;
  if (v === null) return { ranged: true, value: null, min: null, mode: null, max: null };
  return { ranged: true, value: v, min: Math.min(v, round10(v * 0.9)), mode: v, max: Math.max(v, round10(v * 1.1)) };
}

/** A form holding `model`, with the defaults of the house model for the other kinds. */
export function toForm(model: VelocityModel): VelocityForm {
  const d = DEFAULT_VELOCITY;
  const form: VelocityForm = {
    kind: model.kind,
    constant: { v: speedField(4000) },
    layers: [
      { key: nextKey(), topMs: 0, v: speedField(d.water.v) },
      { key: nextKey(), topMs: 500, v: speedField(d.overburden.v) },
    ],
    linear: { v0: speedField(1800), k: 0.6 },
    buildup: {
      water: { v: speedField(d.water.v), seafloorMs: d.water.seafloorMs },
      overburden: { v: speedField(d.overburden.v) },
      carbonate: { v: speedField(d.carbonate.v) },
    },
  };
  switch (model.kind) {
    case 'constant':
      form.constant = { v: speedField(model.v) };
      break;
    case 'layers':
      form.layers = model.layers.map((l) => ({ key: nextKey(), topMs: l.topMs, v: speedField(l.v) }));
      break;
    case 'linear':
      form.linear = { v0: speedField(model.v0), k: model.k };
      break;
    case 'buildup':
      form.buildup = {
        water: { v: speedField(model.water.v), seafloorMs: model.water.seafloorMs },
        overburden: { v: speedField(model.overburden.v) },
        carbonate: { v: speedField(model.carbonate.v) },
      };
      break;
  }
  return form;
}

/** The model candidate of the form's kind (not yet validated). */
export function candidateOf(form: VelocityForm): Record<string, unknown> {
  const n = (v: number | null) => v ?? undefined;
  switch (form.kind) {
    case 'constant':
      return { kind: 'constant', v: speedValue(form.constant.v) };
    case 'layers':
      return { kind: 'layers', layers: form.layers.map((l) => ({ topMs: n(l.topMs), v: speedValue(l.v) })) };
    case 'linear':
      return { kind: 'linear', v0: speedValue(form.linear.v0), k: n(form.linear.k) };
    case 'buildup':
      return {
        kind: 'buildup',
        water: { v: speedValue(form.buildup.water.v), seafloorMs: n(form.buildup.water.seafloorMs) },
        overburden: { v: speedValue(form.buildup.overburden.v) },
        carbonate: { v: speedValue(form.buildup.carbonate.v) },
      };
  }
}

export interface FormResult {
  model: VelocityModel | null;
  /** Messages keyed by field path (`layers[1].topMs`, `water.v.mode`, …). */
  errors: Record<string, string>;
}

/** Build and validate the model of the form with the shared schema. */
export function fromForm(form: VelocityForm): FormResult {
  const r = velocityModelSchema.safeParse(candidateOf(form));
  if (r.success) return { model: r.data as VelocityModel, errors: {} };
  const errors: Record<string, string> = {};
  for (const i of describeIssues(r.error)) if (!(i.path in errors)) errors[i.path] = i.message;
  return { model: null, errors };
}

/** Add a layer below the last one: its top 200 ms deeper, same velocity. */
export function addLayer(rows: readonly LayerRow[]): LayerRow[] {
  const last = rows[rows.length - 1];
  const top = last ? (last.topMs ?? 0) + 200 : 0;
  const v: SpeedField = last ? { ...last.v } : speedField(2000);
  return [...rows, { key: nextKey(), topMs: top, v }];
}

/** Remove layer `i`; the first layer always starts at 0 ms, so a new first layer takes that top. Keeps at least one layer. */
export function removeLayer(rows: readonly LayerRow[], i: number): LayerRow[] {
  if (rows.length <= 1 || i < 0 || i >= rows.length) return rows.slice();
  const next = rows.filter((_, j) => j !== i);
  if (i === 0) next[0] = { ...next[0], topMs: 0 };
  return next;
}

/**
 * The model in one line: "Buildup-aware: water 1500 to 0 ms · overburden 2000–2500 · carbonate 4000–5500 m/s".
 * Velocities (stored in m/s) are shown in `unit`'s velocity (m/s or ft/s, whole numbers); TWT stays in ms.
 */
export function velocitySummary(m: VelocityModel, unit: LengthUnit = 'm'): string {
  const one = (v: number) => (unit === 'm' ? `${v}` : `${Math.round(toDisplayVelocity(v, unit))}`);
  const fmt = (v: VelocityValue) => (typeof v === 'number' ? one(v) : `${one(v.min)}–${one(v.max)}`);
  const vu = velocityLabel(unit);
  switch (m.kind) {
    case 'constant':
      return `Constant ${fmt(m.v)} ${vu}`;
    case 'layers':
      return `${m.layers.length} layer${m.layers.length === 1 ? '' : 's'}: ${m.layers.map((l) => `${fmt(l.v)} from ${l.topMs} ms`).join(' · ')} (${vu})`;
    case 'linear':
      return `Linear: v0 ${fmt(m.v0)} ${vu}, k ${m.k} 1/s`;
    case 'buildup':
      return `Buildup-aware: water ${fmt(m.water.v)} to ${m.water.seafloorMs} ms · overburden ${fmt(m.overburden.v)} · carbonate ${fmt(m.carbonate.v)} ${vu}`;
  }
}

/** Whether any velocity of the model is a range (then Readings carry P90/P50/P10). */
export function modelHasRanges(m: VelocityModel): boolean {
  const r = (v: VelocityValue) => typeof v !== 'number';
  switch (m.kind) {
    case 'constant':
      return r(m.v);
    case 'layers':
      return m.layers.some((l) => r(l.v));
    case 'linear':
      return r(m.v0);
    case 'buildup':
      return r(m.water.v) || r(m.overburden.v) || r(m.carbonate.v);
  }
}

/** Structural equality of two models (for syncing v-model without loops). */
export function sameModel(a: VelocityModel | null | undefined, b: VelocityModel | null | undefined): boolean {
  return canonical(a ?? null) === canonical(b ?? null);
}

/** JSON with object keys sorted, so key order does not matter. */
function canonical(v: unknown): string {
  if (Array.isArray(v)) return `[${v.map(canonical).join(',')}]`;
  if (v && typeof v === 'object')
    return `{${Object.keys(v)
      .sort()
      .map((k) => `${JSON.stringify(k)}:${canonical((v as Record<string, unknown>)[k])}`)
      .join(',')}}`;
  return JSON.stringify(v);
}
