/**
 * Amplitudes to 8-bit pixels for the tile pyramid: colour ramps, clipping at a
 * percentile of |amplitude| and automatic gain control (AGC). Pure functions,
 * unit-tested in tests/unit/segy/render.test.ts.
 *
 * Ramps (256-entry lookup tables, index 0 = −clip, 255 = +clip, amplitudes
 * beyond ±clip take the end colours):
 * - `grey`: −clip white (255) → 0 mid grey (128) → +clip black (0), one
 *   channel: peaks dark, troughs light (a common practice of variable-density
 *   displays).
 * - `diverging`: Cayline's own blue – warm white – orange-brown ramp, linear
 *   interpolation in sRGB between these stops:
 *     −1.0 #1d3a6e (deep blue)   −0.5 #6e98c9 (mid blue)   0.0 #f5f2eb (warm white)
 *     +0.5 #d8a15c (light orange) +1.0 #6b3f14 (dark brown)
 *   CIE L* falls steadily from the white centre to both ends (95 → 62 → 25 on
 *   the blue side, 95 → 70 → 31 on the brown side), so the ramp reads in
 *   lightness alone, and its two arms sit on the blue–yellow axis that
 *   red–green colour-blind viewers keep (the unit test simulates deuteranopia
 *   and protanopia and checks that the two arms stay apart).
 *
 * AGC: each output sample is the input divided by the RMS of the input over a
 * centred window of `windowSamples` samples (odd; truncated at the trace
 * ends); a window whose RMS is 0 gives 0. The window in ms is turned into
 * samples with the sample interval: `2·round(ms / dt / 2) + 1`.
 */

export const RAMP_STOPS: Record<'diverging', ReadonlyArray<readonly [number, string]>> = {
  diverging: [
    [-1, '#1d3a6e'],
    [-0.5, '#6e98c9'],
    [0, '#f5f2eb'],
    [0.5, '#d8a15c'],
    [1, '#6b3f14'],
  ],
};

export function hexRgb(hex: string): [number, number, number] {
  const n = parseInt(hex.slice(1), 16);
  return [(n >> 16) & 255, (n >> 8) & 255, n & 255];
}

/** The ramp as a 256 × channels lookup table (channels 1 for grey, 3 for the diverging ramp). */
export function rampLut(ramp: 'grey' | 'diverging'): { channels: 1 | 3; lut: Uint8Array } {
  if (ramp === 'grey') {
    const lut = new Uint8Array(256);
    for (let i = 0; i < 256; i++) lut[i] = 255 - i;
    return { channels: 1, lut };
  }
  const stops = RAMP_STOPS.diverging.map(([t, h]) => [t, hexRgb(h)] as const);
  const lut = new Uint8Array(256 * 3);
  for (let i = 0; i < 256; i++) {
    const t = (i / 255) * 2 - 1;
    let k = 0;
    while (k < stops.length - 2 && t > stops[k + 1][0]) k++;
    const [t0, c0] = stops[k];
    const [t1, c1] = stops[k + 1];
    const f = Math.min(1, Math.max(0, (t - t0) / (t1 - t0)));
    for (let c = 0; c < 3; c++) lut[3 * i + c] = Math.round(c0[c] + (c1[c] - c0[c]) * f);
  }
  return { channels: 3, lut };
}

/**
 * Lookup index of an amplitude for a clip value (> 0): −clip → 0, 0 → 127.5
 * rounded, +clip → 255; that is `Math.round((v / clip + 1) · 127.5)` clamped
 * to 0–255, NaN → 128. Written without `Math.round` (several times slower in
 * V8 than `Math.floor`, and this runs once per rendered sample): for x in
 * [0.5, 255] `Math.floor(x + 0.5)` is `Math.round(x)` exactly, as x + 0.5 can
 * round up to an integer only for x just below 0.5 (0.5 − 2⁻⁵⁴), which falls
 * to the `x < 0.5` branch (tests/unit/segy/render.test.ts checks both forms
 * agree at the edges).
 */
export function rampIndex(v: number, clip: number): number {
  const t = v / clip;
  if (t <= -1) return 0;
  if (t >= 1) return 255;
  if (!(t === t)) return 128; // NaN shows as zero amplitude
  const x = (t + 1) * 127.5;
  return x < 0.5 ? 0 : Math.floor(x + 0.5);
}

/** AGC window in samples (odd, ≥ 1) for a window in ms and a sample interval in ms. */
export function agcWindowSamples(windowMs: number, intervalMs: number): number {
  if (!(windowMs > 0 && intervalMs > 0)) throw new RangeError('AGC window and sample interval must be > 0');
  return 2 * Math.round(windowMs / intervalMs / 2) + 1;
}

/**
 * RMS AGC of `x[from..to)` written to `out[0..to-from)`, using the samples of
 * `x` within the centred window (half width (window − 1) / 2) as far as `x`
 * reaches: give a segment padded by the half width on both sides (or cut at
 * the trace ends) and the result equals that of the whole trace.
 */
export function agcInto(x: ArrayLike<number>, windowSamples: number, from: number, to: number, out: Float32Array | Float64Array): void {
  const n = x.length;
  const h = (windowSamples - 1) >> 1;
  // prefix sums of squares over the part the windows reach
  const lo = Math.max(0, from - h);
  const hi = Math.min(n, to + h);
  const ps = new Float64Array(hi - lo + 1);
  for (let k = lo; k < hi; k++) ps[k - lo + 1] = ps[k - lo] + x[k] * x[k];
  for (let j = from; j < to; j++) {
    const a = Math.max(lo, j - h);
    const b = Math.min(hi, j + h + 1);
    const ms = (ps[b - lo] - ps[a - lo]) / (b - a);
    out[j - from] = ms > 0 ? x[j] / Math.sqrt(ms) : 0;
  }
}

/** AGC of a whole trace. */
export function agc(x: ArrayLike<number>, windowSamples: number): Float64Array {
  const out = new Float64Array(x.length);
  agcInto(x, windowSamples, 0, x.length, out);
  return out;
}
