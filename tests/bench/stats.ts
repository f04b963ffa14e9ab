/** Small summaries the benchmarks print. */

/** The middle value (the upper one of an even count). */
export const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

/** The nearest-rank percentile p (0-100) of xs. */
export const percentile = (xs: number[], p: number) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.ceil((p / 100) * s.length) - 1)];
};

/** Milliseconds to one decimal, with the unit. */
export const ms = (v: number) => `${v.toFixed(1)} ms`;
