/**
 * The browser's live Readings against the server's numbers for the same
 * saved geometry ("confirmed by the server"): a field-by-field comparison
 * within a tiny tolerance. Used by useServerCheck; re-exported from
 * useLiveReadings.
 */
import type { MeasurementOutput } from '../../shared/measure/index';

export interface Mismatch {
  /** Field path inside the buildup, e.g. `cycles[1].left.backstepM`. */
  path: string;
  local: unknown;
  server: unknown;
  /** `path: local … , server …` */
  text: string;
}

export interface CompareOptions {
  /** Buildup to compare in each output (default 0 in both). */
  buildupIndex?: number;
  serverBuildupIndex?: number;
  /** Relative tolerance for numbers (default 1e-9). */
  relTol?: number;
  /** Absolute tolerance for numbers (default 1e-9). */
  absTol?: number;
}

/** Prose fields: their numbers are compared through the numeric fields they quote. */
const SKIP_KEYS = new Set(['evidence', 'volumeNote', 'name', 'hint']);

const show = (v: unknown): string => {
  if (typeof v === 'number') return Number.isFinite(v) ? String(Number(v.toPrecision(10))) : String(v);
  if (v === undefined) return 'missing';
  if (Array.isArray(v)) return `a list of ${v.length}`;
  if (v !== null && typeof v === 'object') return 'an object';
  return JSON.stringify(v);
};

function walk(a: unknown, b: unknown, path: string, o: Required<Pick<CompareOptions, 'relTol' | 'absTol'>>, out: Mismatch[]): void {
  const push = () => out.push({ path, local: a, server: b, text: `${path}: local ${show(a)}, server ${show(b)}` });
  if (typeof a === 'number' && typeof b === 'number') {
    if (Number.isNaN(a) && Number.isNaN(b)) return;
    if (a === b) return;
    if (!(Math.abs(a - b) <= o.absTol + o.relTol * Math.max(Math.abs(a), Math.abs(b)))) push();
    return;
  }
  if (Array.isArray(a) && Array.isArray(b)) {
    if (a.length !== b.length) {
      out.push({ path, local: a, server: b, text: `${path}: local has ${a.length} entries, server ${b.length}` });
      return;
    }
    a.forEach((x, i) => walk(x, b[i], `${path}[${i}]`, o, out));
    return;
  }
  if (a && b && typeof a === 'object' && typeof b === 'object' && !Array.isArray(a) && !Array.isArray(b)) {
    const ra = a as Record<string, unknown>;
    const rb = b as Record<string, unknown>;
    const keys = [...new Set([...Object.keys(ra), ...Object.keys(rb)])];
    for (const k of keys) {
      if (SKIP_KEYS.has(k)) continue;
      if (k === 'text' && 'kind' in ra) continue; // drowning indicator prose; its kind is compared
      walk(ra[k], rb[k], path ? `${path}.${k}` : k, o, out);
    }
    return;
  }
  if (a !== b) push();
}

/**
 * Field-by-field differences between the browser's and the server's
 * measurements of one buildup, beyond a tiny tolerance. Numbers compare
 * within `absTol + relTol·max(|a|, |b|)`; classes, counts and nulls exactly;
 * prose (evidence sentences, notes, hints) is not compared. Ranges are
 * compared only when both sides drew the same number of times (a live pass
 * may draw fewer). An empty list means the server confirms the numbers.
 */
export function compareWithServer(local: MeasurementOutput, server: MeasurementOutput, options: CompareOptions = {}): Mismatch[] {
  const o = { relTol: options.relTol ?? 1e-9, absTol: options.absTol ?? 1e-9 };
  const li = options.buildupIndex ?? 0;
  const si = options.serverBuildupIndex ?? li;
  const a = local.buildups[li];
  const b = server.buildups[si];
  const out: Mismatch[] = [];
  if (!a || !b) {
    out.push({ path: 'buildups', local: local.buildups.length, server: server.buildups.length, text: `buildups: local has ${a ? 'the buildup' : 'no buildup'} #${li}, server ${b ? 'has' : 'has no'} buildup #${si}` });
    return out;
  }
  if (local.verticalDomain !== server.verticalDomain) walk(local.verticalDomain, server.verticalDomain, 'verticalDomain', o, out);
  const { ranges: ra, ...restA } = a;
  const { ranges: rb, ...restB } = b;
  walk(restA, restB, '', o, out);
  if (ra && rb) {
    if (ra.draws === rb.draws) walk(ra, rb, 'ranges', o, out);
  } else if (!!ra !== !!rb) {
    out.push({ path: 'ranges', local: ra, server: rb, text: `ranges: ${ra ? 'local has ranges, the server none' : 'the server has ranges, local none'}` });
  }
  return out;
}
