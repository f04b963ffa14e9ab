/**
 * Streaming percentile of |amplitude| for clipping.
 *
 * Method: a histogram keyed by the top bits of each |amplitude| as a float32
 * (exponent and the top 10 mantissa bits), so every bin spans a relative
 * width of at most 2^-10. The percentile answered is the upper edge of the
 * bin holding the rank-⌈p·n⌉ value, so with q the true value (in float32):
 * q ≤ answer ≤ q · (1 + 2^-10), i.e. a relative error below 0.1 %, plus the
 * float32 rounding of the input (≤ 2^-24 relative). Memory is fixed at
 * 2^18 counters (2 MiB), whatever the number of samples; NaN and ±∞ (and
 * float64 values beyond float32's range) are counted apart and left out. Values below 2^-136 (zero and the smallest float32
 * denormals) share the lowest bin, which answers 0.
 */
const MANTISSA_BITS = 10;
const SHIFT = 23 - MANTISSA_BITS;
const BINS = 1 << (8 + MANTISSA_BITS);

export class AbsAmplitudeHistogram {
  readonly counts = new Float64Array(BINS);
  total = 0;
  nonFinite = 0;
  /** Bit pattern of the largest finite |amplitude| as float32 (bit order = value order for non-negative floats). */
  private maxBits = 0;
  private scratch = new Float32Array(0);
  private readonly f = new Float32Array(1);
  private readonly u = new Uint32Array(this.f.buffer);

  get max(): number {
    this.u[0] = this.maxBits;
    return this.f[0];
  }

  add(samples: ArrayLike<number>): void {
    const n = samples.length;
    let bits: Uint32Array;
    if (samples instanceof Float32Array) bits = new Uint32Array(samples.buffer, samples.byteOffset, n); // already float32: read its bits
    else {
      if (this.scratch.length < n) this.scratch = new Float32Array(n);
      const f = this.scratch.subarray(0, n);
      f.set(samples); // native conversion to float32
      bits = new Uint32Array(f.buffer, f.byteOffset, n);
    }
    const counts = this.counts;
    let maxBits = this.maxBits;
    let nonFinite = 0;
    for (let i = 0; i < n; i++) {
      const a = bits[i] & 0x7fffffff; // |v|
      if (a >= 0x7f800000) { nonFinite++; continue; } // ±∞ and NaN
      counts[a >>> SHIFT]++;
      if (a > maxBits) maxBits = a;
    }
    this.maxBits = maxBits;
    this.nonFinite += nonFinite;
    this.total += n;
  }

  /** The p-th percentile (0 < p ≤ 100) of |amplitude| over finite samples, within the stated error bound. */
  percentile(p: number): number {
    if (!(p > 0 && p <= 100)) throw new RangeError(`percentile must be in (0, 100], got ${p}`);
    const n = this.total - this.nonFinite;
    if (n === 0) return 0;
    const rank = Math.ceil((p / 100) * n);
    let seen = 0;
    for (let b = 0; b < BINS; b++) {
      seen += this.counts[b];
      if (seen >= rank) {
        if (b === 0) return 0;
        this.u[0] = ((b + 1) << SHIFT) >>> 0;
        const upperEdge = this.f[0];
        return Math.min(upperEdge, this.max);
      }
    }
    return this.max;
  }
}
