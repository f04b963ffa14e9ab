/**
 * Velocity models: two-way time (TWT, ms) ↔ depth (m), measurement-spec §3.
 *
 * Vertical-ray conversion with interval velocities, z = Σ v_i·Δt_i / 2 (t in
 * s, TWT): Sheriff & Geldart, *Exploration Seismology* (2nd ed., 1995);
 * Yilmaz, *Seismic Data Analysis* (SEG, 2001). Linear law v(z) = v0 + k·z,
 * z = (v0/k)(exp(k·t/2) − 1), inverse t = (2/k)·ln(1 + k·z/v0): Geldart &
 * Sheriff, *Problems in Exploration Seismology and their Solutions* (SEG,
 * 2004), eq. 4.17a. Dip on a time-migrated section, tan θ = (v/2)·dt/dx
 * (same sources); the engine assumes migrated sections.
 *
 * Units: velocities m/s, TWT ms, depth m, k 1/s. Every velocity may be a
 * range `{min, mode, max}` (m/s): the deterministic value is the mode, Monte
 * Carlo draws are triangular.
 *
 * Choices: negative TWT (above the datum) converts with the first layer's
 * velocity; the last layer extends downwards without end; for `buildup`, an
 * envelope above the seafloor is clamped to the seafloor (water is never
 * counted as carbonate), and `k` of the linear law is a plain number ≥ 0.
 */
import { envelopeAt, type Envelope } from './envelope';
import { DEG } from './geometry';

export interface Range { min: number; mode: number; max: number }
export type Speed = number | Range;

export type VelocityModel<S = Speed> =
  | { kind: 'constant'; v: S }
  | { kind: 'layers'; layers: { topMs: number; v: S }[] }
  | { kind: 'linear'; v0: S; k: number }
  | { kind: 'buildup'; water: { v: S; seafloorMs: number }; overburden: { v: S }; carbonate: { v: S } };

/** A model with every velocity a plain number. */
export type ResolvedVelocityModel = VelocityModel<number>;

export function isRange(s: Speed): s is Range {
  return typeof s === 'object' && s !== null;
}

/** Replace every velocity of the model by `pick(value, fieldPath)`, visiting fields in a fixed order. */
export function resolveVelocityModel(model: VelocityModel, pick: (s: Speed, path: string) => number): ResolvedVelocityModel {
  switch (model.kind) {
    case 'constant':
      return { kind: 'constant', v: pick(model.v, 'v') };
    case 'layers':
      return { kind: 'layers', layers: model.layers.map((l, i) => ({ topMs: l.topMs, v: pick(l.v, `layers[${i}].v`) })) };
    case 'linear':
      return { kind: 'linear', v0: pick(model.v0, 'v0'), k: model.k };
    case 'buildup':
      return {
        kind: 'buildup',
        water: { v: pick(model.water.v, 'water.v'), seafloorMs: model.water.seafloorMs },
        overburden: { v: pick(model.overburden.v, 'overburden.v') },
        carbonate: { v: pick(model.carbonate.v, 'carbonate.v') },
      };
  }
}

/** The deterministic model: every range replaced by its mode. */
export function modeOf(model: VelocityModel): ResolvedVelocityModel {
  return resolveVelocityModel(model, (s) => (isRange(s) ? s.mode : s));
}

/** Whether any velocity of the model is a range. */
export function hasRanges(model: VelocityModel): boolean {
  let any = false;
  resolveVelocityModel(model, (s) => { if (isRange(s)) any = true; return 0; });
  return any;
}

/**
 * Inverse-CDF draw from the triangular distribution (min, mode, max) for a
 * uniform `u` in [0, 1) (e.g. Evans, Hastings & Peacock, *Statistical
 * Distributions*, ch. "Triangular").
 */
export function triangularQuantile(r: Range, u: number): number {
  const { min: a, mode: c, max: b } = r;
  if (!(b > a)) return a;
  const fc = (c - a) / (b - a);
  if (u < fc) return a + Math.sqrt(u * (b - a) * (c - a));
  return b - Math.sqrt((1 - u) * (b - a) * (b - c));
}

/** One Monte Carlo velocity set: each range drawn independently (triangular), plain numbers kept. */
export function drawVelocityModel(model: VelocityModel, rng: () => number): ResolvedVelocityModel {
  return resolveVelocityModel(model, (s) => (isRange(s) ? triangularQuantile(s, rng()) : s));
}

/**
 * A fast converter (tMs, envelopeTwtAtX) → depth for a resolved model. The
 * envelope value is used by `buildup` only (NaN = no envelope at that x).
 */
export function makeTwtToDepth(model: ResolvedVelocityModel): (tMs: number, envTwt: number) => number {
  switch (model.kind) {
    case 'constant': {
      const h = model.v / 2000;
      return (t) => h * t;
    }
    case 'layers': {
      const tops = model.layers.map((l) => l.topMs);
      const vs = model.layers.map((l) => l.v);
      const zTop: number[] = [0];
      for (let i = 1; i < tops.length; i++) zTop.push(zTop[i - 1] + (vs[i - 1] * (tops[i] - tops[i - 1])) / 2000);
      const n = tops.length;
      return (t) => {
        if (t <= tops[0]) return (vs[0] * (t - tops[0])) / 2000 + zTop[0];
        let lo = 0;
        let hi = n - 1;
        while (lo < hi) {
          const mid = (lo + hi + 1) >> 1;
          if (tops[mid] <= t) lo = mid;
          else hi = mid - 1;
        }
        return zTop[lo] + (vs[lo] * (t - tops[lo])) / 2000;
      };
    }
    case 'linear': {
      const { v0, k } = model;
      if (k === 0) return (t) => (v0 * t) / 2000;
      return (t) => (v0 / k) * Math.expm1((k * t) / 2000);
    }
    case 'buildup': {
      const vw = model.water.v;
      const sf = model.water.seafloorMs;
      const vo = model.overburden.v;
      const vc = model.carbonate.v;
      const zsf = (vw * sf) / 2000;
      return (t, te) => {
        if (t <= sf) return (vw * t) / 2000;
        const top = te === te ? Math.max(te, sf) : Infinity;
        if (t <= top) return zsf + (vo * (t - sf)) / 2000;
        return zsf + (vo * (top - sf)) / 2000 + (vc * (t - top)) / 2000;
      };
    }
  }
}

/**
 * Depth (m) of a point at TWT `tMs`. For `buildup` pass the point's `x` and
 * the buildup's TWT envelope (an Envelope, or its value at x; omitted or NaN =
 * the ray crosses no carbonate).
 */
export function twtToDepth(model: ResolvedVelocityModel, tMs: number, x?: number, envelopeTwt?: Envelope | number | null): number {
  let te = NaN;
  if (typeof envelopeTwt === 'number') te = envelopeTwt;
  else if (envelopeTwt && x !== undefined) te = envelopeAt(envelopeTwt, x);
  return makeTwtToDepth(model)(tMs, te);
}

/** A fast converter depth → TWT (the inverse of `makeTwtToDepth`); `envDepth` is the depth envelope at x for `buildup`. */
export function makeDepthToTwt(model: ResolvedVelocityModel): (zM: number, envDepth: number) => number {
  switch (model.kind) {
    case 'constant':
      return (z) => (2000 * z) / model.v;
    case 'layers': {
      const tops = model.layers.map((l) => l.topMs);
      const vs = model.layers.map((l) => l.v);
      const zTop: number[] = [0];
      for (let i = 1; i < tops.length; i++) zTop.push(zTop[i - 1] + (vs[i - 1] * (tops[i] - tops[i - 1])) / 2000);
      return (z) => {
        let i = 0;
        while (i + 1 < zTop.length && zTop[i + 1] <= z) i++;
        return tops[i] + (2000 * (z - zTop[i])) / vs[i];
      };
    }
    case 'linear': {
      const { v0, k } = model;
      if (k === 0) return (z) => (2000 * z) / v0;
      return (z) => (2000 / k) * Math.log1p((k * z) / v0);
    }
    case 'buildup': {
      const vw = model.water.v;
      const sf = model.water.seafloorMs;
      const vo = model.overburden.v;
      const vc = model.carbonate.v;
      const zsf = (vw * sf) / 2000;
      return (z, ze) => {
        if (z <= zsf) return (2000 * z) / vw;
        const top = ze === ze ? Math.max(ze, zsf) : Infinity;
        if (z <= top) return sf + (2000 * (z - zsf)) / vo;
        return sf + (2000 * (top - zsf)) / vo + (2000 * (z - top)) / vc;
      };
    }
  }
}

/**
 * TWT (ms) of a point at depth `zM`: the exact inverse of `twtToDepth`. For
 * `buildup` pass the buildup's envelope in depth (Envelope or value at x).
 * For the linear law, t = (2/k)·ln(1 + k·z/v0) (Geldart & Sheriff 2004).
 */
export function depthToTwt(model: ResolvedVelocityModel, zM: number, x?: number, envelopeDepth?: Envelope | number | null): number {
  let ze = NaN;
  if (typeof envelopeDepth === 'number') ze = envelopeDepth;
  else if (envelopeDepth && x !== undefined) ze = envelopeAt(envelopeDepth, x);
  return makeDepthToTwt(model)(zM, ze);
}

/**
 * Highest instantaneous velocity (m/s) the linear law may reach within the
 * section. Sedimentary and crystalline crust stay below about 7 km/s (from
 * memory); Cayline refuses a law that goes beyond 20 km/s, well clear of any
 * rock, where the exponential has stopped describing a real section.
 */
export const LINEAR_LAW_MAX_VELOCITY = 20_000;

/**
 * Why a linear law v(z) = v0 + k·z cannot convert TWTs up to `tMaxMs`, or
 * null when it can. z = (v0/k)(e^{k·t/2} − 1) grows exponentially with k·t:
 * a k that makes the deepest depth non-finite, or the velocity there exceed
 * LINEAR_LAW_MAX_VELOCITY, is refused (v0 taken at its range maximum). The
 * message is about `k`, the field to change.
 */
export function linearLawProblem(v0: Speed, k: number, tMaxMs: number): string | null {
  if (!(k > 0) || !(tMaxMs > 0)) return null;
  const v0max = isRange(v0) ? v0.max : v0;
  const growth = (k * tMaxMs) / 2000;
  const zMax = (v0max / k) * Math.expm1(growth);
  const vMax = v0max * Math.exp(growth);
  if (Number.isFinite(zMax) && Number.isFinite(vMax) && vMax <= LINEAR_LAW_MAX_VELOCITY) return null;
  const at = Number.isFinite(zMax) ? `v = ${vMax.toPrecision(3)} m/s at z = ${zMax.toPrecision(3)} m` : 'depths that overflow (not finite)';
  return `k = ${k} 1/s is too large for this section: at its deepest TWT (${tMaxMs} ms) the linear law v(z) = v0 + k·z gives ${at}, beyond ${LINEAR_LAW_MAX_VELOCITY} m/s; use a smaller k (sediments: about 0.3–1.3 1/s, from memory)`;
}

/** Instantaneous velocity (m/s) of the linear law at TWT `tMs`: v0·exp(k·t/2), t in s (Geldart & Sheriff 2004). */
export function linearVelocityAtTwt(v0: number, k: number, tMs: number): number {
  return v0 * Math.exp((k * tMs) / 2000);
}

/**
 * True dip (degrees) from a time gradient on a migrated section:
 * tan θ = (v/2)·dt/dx, dt/dx in ms/m, v in m/s (Sheriff & Geldart 1995).
 */
export function dipFromTimeGradient(dtdxMsPerM: number, vMs: number): number {
  return Math.atan((vMs / 2) * (dtdxMsPerM / 1000)) * DEG;
}

const fmtV = (s: Speed) => (isRange(s) ? `${s.min}–${s.max} m/s (mode ${s.mode})` : `${s} m/s`);

/** The velocity model in words, for reports. */
export function describeVelocityModel(model: VelocityModel): string {
  switch (model.kind) {
    case 'constant':
      return `Constant velocity ${fmtV(model.v)}: z = v·t/2000 (t TWT in ms).`;
    case 'layers':
      return `Layered interval velocities: ${model.layers.map((l) => `from ${l.topMs} ms at ${fmtV(l.v)}`).join('; ')}; z = Σ v_i·Δt_i/2000 along a vertical ray.`;
    case 'linear':
      return `Linear velocity law v(z) = v0 + k·z with v0 = ${fmtV(model.v0)} and k = ${model.k} 1/s: z = (v0/k)(exp(k·t/2000) − 1).`;
    case 'buildup':
      return `Buildup model along a vertical ray: water ${fmtV(model.water.v)} down to the seafloor at ${model.water.seafloorMs} ms, overburden ${fmtV(model.overburden.v)} down to the buildup's upper envelope (smallest TWT of its tops and flanks at each x), carbonate ${fmtV(model.carbonate.v)} below it, which undoes the velocity pull-up under the buildup.`;
  }
}

// ---- velocities as a vector (the Monte Carlo's draws) ----

export interface VelocityParam {
  path: string;
  min: number;
  mode: number;
  max: number;
  range: Range | null;
}

/** The velocities of a model in resolve order (fixed values have min = mode = max). */
export function velocityParams(model: VelocityModel): VelocityParam[] {
  const out: VelocityParam[] = [];
  resolveVelocityModel(model, (s: Speed, path) => {
    if (isRange(s)) out.push({ path, min: s.min, mode: s.mode, max: s.max, range: s });
    else out.push({ path, min: s, mode: s, max: s, range: null });
    return 0;
  });
  return out;
}

/** The model with its velocities taken from a vector (resolve order). */
export function modelFromVector(model: VelocityModel, v: ArrayLike<number>) {
  let i = 0;
  return resolveVelocityModel(model, () => v[i++]);
}
