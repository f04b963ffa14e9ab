/**
 * Synthetic test images with known events for the trace-assist tests: each
 * event is a 30 Hz Ricker wavelet (1 ms per pixel) centred on a known curve
 * v = f(u), rendered to 8-bit grey with positive amplitude dark (the demo
 * sections' polarity), plus optional seeded band-limited noise (RMS `noise`).
 */
import seedrandom from 'seedrandom';
import { convolveSame, ricker, rickerSampled } from '../../../server/synth/ricker';
import { GreySource } from '../../../shared/trace-assist/source';

export interface SynthEvent {
  /** v (image px, continuous) of the event's peak at u (continuous). */
  at: (u: number) => number;
  /** Signed strength (1 = full scale). */
  amp?: number;
  /** Columns where the event exists (default everywhere). */
  from?: number;
  to?: number;
}

export function synthImage(width: number, height: number, events: SynthEvent[], opts: { noise?: number; seed?: string; fHz?: number } = {}) {
  const amp = new Float64Array(width * height);
  const f = opts.fHz ?? 30;
  for (const e of events) {
    const a = e.amp ?? 0.8;
    for (let i = Math.max(0, e.from ?? 0); i < Math.min(width, e.to ?? width); i++) {
      const v0 = e.at(i + 0.5);
      const j0 = Math.max(0, Math.floor(v0 - 40));
      const j1 = Math.min(height - 1, Math.ceil(v0 + 40));
      for (let j = j0; j <= j1; j++) amp[j * width + i] += a * ricker((j + 0.5 - v0) / 1000, f);
    }
  }
  if (opts.noise) {
    // Band-limited noise like the demo sections' (white noise through the same wavelet, unit RMS, scaled).
    const rng = seedrandom.alea(opts.seed ?? 'noise');
    const w = rickerSampled(f, 0.001);
    for (let i = 0; i < width; i++) {
      const white = new Float64Array(height);
      for (let j = 0; j < height; j++) white[j] = rng() + rng() + rng() - 1.5;
      const col = convolveSame(white, w);
      let ss = 0;
      for (let j = 0; j < height; j++) ss += col[j] * col[j];
      const k = opts.noise / Math.sqrt(ss / height || 1);
      for (let j = 0; j < height; j++) amp[j * width + i] += col[j] * k;
    }
  }
  const grey = new Uint8Array(width * height);
  for (let k = 0; k < amp.length; k++) grey[k] = Math.max(1, Math.min(255, Math.round(128 - 127 * amp[k])));
  return { grey, width, height, source: new GreySource(grey, width, height, 'darkPositive') };
}

/** Largest |v − f(u)| over the points. */
export function maxError(points: readonly (readonly number[])[], f: (u: number) => number): number {
  let m = 0;
  for (const p of points) m = Math.max(m, Math.abs(p[1] - f(p[0])));
  return m;
}
