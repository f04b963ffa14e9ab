/**
 * Ricker wavelet and sparse convolution helpers for the synthetic demo sections.
 *
 * Ricker wavelet (Ricker 1953, Geophysics 18):
 *   w(t) = (1 − 2π²f²t²) · exp(−π²f²t²)
 * with t in seconds and f the peak frequency in Hz. w(0) = 1 and the zero
 * crossings are at t = ±1 / (π f √2).
 */

/** Value of the zero-phase Ricker wavelet of peak frequency `fHz` at time `tSeconds`. */
export function ricker(tSeconds: number, fHz: number): number {
  if (!Number.isFinite(tSeconds)) throw new Error('ricker: tSeconds must be a finite number');
  if (!Number.isFinite(fHz) || fHz <= 0) throw new Error('ricker: fHz must be a positive number');
  const a = Math.PI * Math.PI * fHz * fHz * tSeconds * tSeconds;
  return (1 - 2 * a) * Math.exp(-a);
}

/** Default half length of a sampled wavelet, in periods of the peak frequency (1.5/f: |w| < 1e-6 beyond). */
export const RICKER_HALF_PERIODS = 1.5;

export interface SampledWavelet {
  /** samples w(k·dt) for k = −half … +half */
  values: Float64Array;
  /** index of t = 0 in `values` (= half) */
  centre: number;
  /** sample interval in seconds */
  dtSeconds: number;
  fHz: number;
}

/**
 * Ricker wavelet sampled at `dtSeconds`, symmetric about t = 0, over ±`halfLengthSeconds`
 * (default 1.5 / f, where the wavelet has decayed below 1e-6 of its peak).
 */
export function rickerSampled(fHz: number, dtSeconds: number, halfLengthSeconds = RICKER_HALF_PERIODS / fHz): SampledWavelet {
  if (!Number.isFinite(fHz) || fHz <= 0) throw new Error('rickerSampled: fHz must be a positive number');
  if (!Number.isFinite(dtSeconds) || dtSeconds <= 0) throw new Error('rickerSampled: dtSeconds must be a positive number');
  if (!Number.isFinite(halfLengthSeconds) || halfLengthSeconds <= 0) {
    throw new Error('rickerSampled: halfLengthSeconds must be a positive number');
  }
  const half = Math.max(1, Math.ceil(halfLengthSeconds / dtSeconds - 1e-9));
  const values = new Float64Array(2 * half + 1);
  for (let k = -half; k <= half; k++) values[k + half] = ricker(k * dtSeconds, fHz);
  return { values, centre: half, dtSeconds, fHz };
}

/**
 * Dense linear convolution of a reflectivity series with a sampled wavelet, output aligned
 * with the input ("same" length, wavelet centred). Used as the straightforward reference;
 * the renderer uses the sparse stamping below.
 */
export function convolveSame(reflectivity: ArrayLike<number>, wavelet: SampledWavelet): Float64Array {
  const n = reflectivity.length;
  const out = new Float64Array(n);
  const w = wavelet.values;
  const c = wavelet.centre;
  for (let i = 0; i < n; i++) {
    const r = reflectivity[i];
    if (r === 0) continue;
    for (let k = 0; k < w.length; k++) {
      const j = i + k - c;
      if (j >= 0 && j < n) out[j] += r * w[k];
    }
  }
  return out;
}

/**
 * Finely tabulated wavelet for stamping spikes at fractional sample positions.
 * `table[k]` = w((k − centre) · step) with step = dt / oversample.
 */
export interface WaveletTable {
  table: Float64Array;
  centre: number;
  oversample: number;
  /** half support in output samples */
  halfSamples: number;
}

export function rickerTable(fHz: number, dtSeconds: number, oversample = 32, halfLengthSeconds = RICKER_HALF_PERIODS / fHz): WaveletTable {
  const fine = rickerSampled(fHz, dtSeconds / oversample, halfLengthSeconds);
  return {
    table: fine.values,
    centre: fine.centre,
    oversample,
    halfSamples: Math.floor(fine.centre / oversample),
  };
}

/**
 * Adds r · w(t_j − p) to `trace` for every output sample j, where `p` is the spike position in
 * (fractional) samples. The wavelet value between table entries is interpolated linearly.
 * This is convolution of a sparse spike series, done spike by spike.
 */
export function stampSpike(trace: Float32Array | Float64Array, p: number, r: number, wt: WaveletTable): void {
  if (r === 0 || !Number.isFinite(p)) return;
  const n = trace.length;
  const { table, centre, oversample, halfSamples } = wt;
  let j0 = Math.ceil(p - halfSamples);
  let j1 = Math.floor(p + halfSamples);
  if (j0 < 0) j0 = 0;
  if (j1 > n - 1) j1 = n - 1;
  const last = table.length - 1;
  for (let j = j0; j <= j1; j++) {
    const f = (j - p) * oversample + centre;
    const i = Math.floor(f);
    if (i < 0 || i > last) continue;
    const frac = f - i;
    trace[j] += r * (i === last ? table[last] : table[i] + (table[i + 1] - table[i]) * frac);
  }
}
