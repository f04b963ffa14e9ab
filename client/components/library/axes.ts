/**
 * Axis choices for the library's crossplots and histograms.
 */

/**
 * A metric gets a logarithmic axis when its values span more than two decades
 * (max / min > 100) and every value is positive; otherwise linear. Non-finite
 * values (missing numbers) are ignored; fewer than two values stay linear.
 */
export function wantsLogAxis(values: readonly (number | null | undefined)[]): boolean {
  let min = Infinity;
  let max = -Infinity;
  let n = 0;
  for (const v of values) {
    if (v === null || v === undefined || !Number.isFinite(v)) continue;
    if (v <= 0) return false;
    if (v < min) min = v;
    if (v > max) max = v;
    n++;
  }
  return n >= 2 && max / min > 100;
}

export interface HistogramBin {
  from: number;
  to: number;
  count: number;
}

/**
 * Equal-width bins (or equal in log10 when `log`) over the finite values.
 * The bin count follows Sturges' rule, ceil(log2 n) + 1 (Sturges 1926), unless given.
 * The last bin is closed on the right so the maximum is counted.
 */
export function histogram(values: readonly (number | null | undefined)[], log = false, bins?: number): HistogramBin[] {
  const xs = values.filter((v): v is number => v !== null && v !== undefined && Number.isFinite(v) && (!log || v > 0));
  if (xs.length === 0) return [];
  const t = log ? Math.log10 : (v: number) => v;
  const inv = log ? (v: number) => 10 ** v : (v: number) => v;
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of xs) {
    const tv = t(v);
    if (tv < lo) lo = tv;
    if (tv > hi) hi = tv;
  }
  const k = Math.max(1, bins ?? Math.ceil(Math.log2(xs.length)) + 1);
  if (hi === lo) return [{ from: inv(lo), to: inv(hi), count: xs.length }];
  const width = (hi - lo) / k;
  const counts = new Array<number>(k).fill(0);
  for (const v of xs) {
    const i = Math.min(k - 1, Math.floor((t(v) - lo) / width));
    counts[i]++;
  }
  return counts.map((count, i) => ({ from: inv(lo + i * width), to: inv(i === k - 1 ? hi : lo + (i + 1) * width), count }));
}
