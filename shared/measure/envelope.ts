/**
 * Upper envelope of section surfaces and the area/volume below it.
 *
 * Units: metres in the depth domain (x, z with z down), milliseconds for
 * TWT envelopes. The "upper" envelope is the shallowest surface: at each x the
 * smallest z among the pieces that span that x (measurement-spec §6).
 *
 * Method: every surface is split into x-monotone pieces; the union of their
 * vertex x positions forms a grid, fixed for a buildup because velocity
 * conversion moves points only vertically. A plan made once maps every grid
 * position to a segment and a weight of each piece, so that evaluating the
 * envelope for a new set of depths (one Monte Carlo draw) is a single linear
 * sweep: O(total coverage), no O(n²). Inside a grid interval every piece is a
 * straight line, so the envelope there is the lower envelope of a few lines,
 * with its crossing points inserted exactly.
 *
 * Area is ∫ max(0, z_base − z_env) dx integrated exactly piece by piece
 * (trapezoids with zero crossings), equal to the shoelace area of the
 * profile polygon. Volume of revolution uses Pappus's centroid theorem
 * V = 2π·d·A for each half-profile (Pappus; see e.g. Stewart, Calculus,
 * "Volumes" chapter), with the first moment ∫ |x − x_c|·h(x) dx computed
 * exactly for each trapezoid.
 */
import { monotoneRuns, type Point } from './geometry';

/** A piece of a surface: source index and vertex indices ordered by strictly increasing x. */
export interface EnvelopePiece {
  src: number;
  idx: number[];
}

export interface EnvelopePlan {
  /** Sorted distinct x of all piece vertices. */
  xs: Float64Array;
  /** Per piece: first and last grid index. */
  g0: Int32Array;
  g1: Int32Array;
  /** Per piece: offset of its grid entries in a/b/w. */
  off: Int32Array;
  /** Per source surface: offset of its vertices in the flat z array (last entry = total). */
  srcOff: Int32Array;
  /** Per grid entry: flat vertex indices a, b and weight, value = z[a] + w·(z[b] − z[a]). */
  a: Int32Array;
  b: Int32Array;
  w: Float64Array;
  /** Piece numbers sorted by g0. */
  order: Int32Array;
}

/** Envelope as `n` sorted, non-overlapping straight sub-pieces (x0→x1, z0→z1); gaps where no surface spans x. */
export interface Envelope {
  n: number;
  x0: Float64Array;
  x1: Float64Array;
  z0: Float64Array;
  z1: Float64Array;
}

/**
 * Build a sweep plan from pieces whose vertex x positions come from
 * `xsOf(src)` for sources 0..sourceCount−1; `extraXs` adds grid positions
 * (e.g. the base's vertices, so the base is straight on every interval).
 */
export function planEnvelope(pieces: readonly EnvelopePiece[], xsOf: (src: number) => ArrayLike<number>, sourceCount?: number, extraXs?: ArrayLike<number>): EnvelopePlan {
  const ns = sourceCount ?? pieces.reduce((m, p) => Math.max(m, p.src + 1), 0);
  const srcOff = new Int32Array(ns + 1);
  for (let s = 0; s < ns; s++) srcOff[s + 1] = srcOff[s] + xsOf(s).length;
  let count = extraXs ? extraXs.length : 0;
  for (const p of pieces) count += p.idx.length;
  const all = new Float64Array(count);
  let q = 0;
  if (extraXs) for (let i = 0; i < extraXs.length; i++) all[q++] = extraXs[i];
  for (const p of pieces) {
    const xs = xsOf(p.src);
    for (const i of p.idx) all[q++] = xs[i];
  }
  all.sort();
  let G = 0;
  for (let i = 0; i < count; i++) if (G === 0 || all[G - 1] !== all[i]) all[G++] = all[i];
  const xs = all.slice(0, G);
  const np = pieces.length;
  const g0 = new Int32Array(np);
  const g1 = new Int32Array(np);
  const off = new Int32Array(np);
  let total = 0;
  const findGrid = (x: number) => {
    let lo = 0;
    let hi = G - 1;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (xs[mid] < x) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  };
  for (let p = 0; p < np; p++) {
    const px = xsOf(pieces[p].src);
    const idx = pieces[p].idx;
    g0[p] = findGrid(px[idx[0]]);
    g1[p] = findGrid(px[idx[idx.length - 1]]);
    off[p] = total;
    total += g1[p] - g0[p] + 1;
  }
  const a = new Int32Array(total);
  const b = new Int32Array(total);
  const w = new Float64Array(total);
  for (let p = 0; p < np; p++) {
    const px = xsOf(pieces[p].src);
    const base = srcOff[pieces[p].src];
    const idx = pieces[p].idx;
    const last = idx.length - 2;
    let k = 0;
    let xa = px[idx[0]];
    let xb = px[idx[1]];
    for (let g = g0[p], e = off[p]; g <= g1[p]; g++, e++) {
      const x = xs[g];
      while (k < last && xb < x) {
        k++;
        xa = xb;
        xb = px[idx[k + 1]];
      }
      a[e] = base + idx[k];
      b[e] = base + idx[k + 1];
      const t = (x - xa) / (xb - xa);
      w[e] = t < 0 ? 0 : t > 1 ? 1 : t;
    }
  }
  const order = Int32Array.from(Array.from({ length: np }, (_, i) => i).sort((p, q2) => g0[p] - g0[q2] || p - q2));
  return { xs, g0, g1, off, srcOff, a, b, w, order };
}

/** Concatenate per-source z arrays into the flat layout of a plan (reusing `out` when it fits). */
export function flattenZ(plan: EnvelopePlan, zOf: readonly ArrayLike<number>[], out?: Float64Array): Float64Array {
  const total = plan.srcOff[plan.srcOff.length - 1];
  const Z = out && out.length === total ? out : new Float64Array(total);
  const ns = Math.min(zOf.length, plan.srcOff.length - 1);
  for (let s = 0; s < ns; s++) {
    const z = zOf[s];
    const o = plan.srcOff[s];
    for (let i = 0; i < z.length; i++) Z[o + i] = z[i];
  }
  return Z;
}

function grow(env: Envelope): void {
  const cap = env.x0.length * 2 + 16;
  for (const k of ['x0', 'x1', 'z0', 'z1'] as const) {
    const next = new Float64Array(cap);
    next.set(env[k]);
    env[k] = next;
  }
}

/** Evaluate the envelope for the z values of each source surface (same vertex order as planned). */
export function evaluateEnvelope(plan: EnvelopePlan, zOf: readonly ArrayLike<number>[]): Envelope {
  return evaluateEnvelopeFlat(plan, flattenZ(plan, zOf));
}

/** Evaluate the envelope from z values in the plan's flat layout (see `flattenZ`). One linear sweep. */
export function evaluateEnvelopeFlat(plan: EnvelopePlan, Z: Float64Array, reuse?: Envelope): Envelope {
  const { xs, g0, g1, off, a, b, w, order } = plan;
  const G = xs.length;
  const np = g0.length;
  const cap = 2 * G + 16;
  const env: Envelope = reuse && reuse.x0.length >= cap ? reuse : { n: 0, x0: new Float64Array(cap), x1: new Float64Array(cap), z0: new Float64Array(cap), z1: new Float64Array(cap) };
  let n = 0;
  const active = new Int32Array(np);
  let na = 0;
  const lastG = new Int32Array(np).fill(-1);
  const lastV = new Float64Array(np);
  const tl = new Float64Array(np);
  const tr = new Float64Array(np);
  let next = 0;
  for (let j = 0; j < G - 1; j++) {
    // drop pieces that end at or before j; add pieces starting at j
    let m = 0;
    for (let k = 0; k < na; k++) if (g1[active[k]] > j) active[m++] = active[k];
    na = m;
    while (next < np && g0[order[next]] <= j) {
      const p = order[next++];
      if (g1[p] > j) active[na++] = p;
    }
    if (na === 0) continue;
    let minL = Infinity;
    let minR = Infinity;
    let argL = -1;
    let argR = -1;
    for (let k = 0; k < na; k++) {
      const p = active[k];
      let vl: number;
      if (lastG[p] === j) vl = lastV[p];
      else {
        const e = off[p] + j - g0[p];
        const za = Z[a[e]];
        vl = za + w[e] * (Z[b[e]] - za);
      }
      const e1 = off[p] + j + 1 - g0[p];
      const zb = Z[a[e1]];
      const vr = zb + w[e1] * (Z[b[e1]] - zb);
      lastG[p] = j + 1;
      lastV[p] = vr;
      tl[k] = vl;
      tr[k] = vr;
      if (vl < minL || (vl === minL && vr < tr[argL])) { minL = vl; argL = k; }
      if (vr < minR || (vr === minR && vl < tl[argR])) { minR = vr; argR = k; }
    }
    const xa = xs[j];
    const xb = xs[j + 1];
    if (n + na + 1 > env.x0.length) grow(env);
    if (argL === argR || (tl[argR] === minL && tr[argR] === minR)) {
      env.x0[n] = xa; env.x1[n] = xb; env.z0[n] = minL; env.z1[n] = minR; n++;
      continue;
    }
    // lower envelope of the active lines on [xa, xb], parameter t in [0, 1]
    let s = 0;
    let cur = argL;
    for (let guard = 0; guard <= na; guard++) {
      let best = 1;
      let nxt = -1;
      const cl = tl[cur];
      const cr = tr[cur];
      for (let q = 0; q < na; q++) {
        if (q === cur) continue;
        const dR = tr[q] - cr;
        if (!(dR < 0)) continue;
        const dL = tl[q] - cl;
        let t = dL / (dL - dR);
        if (t < s) t = s;
        if (t < best || (t === best && nxt >= 0 && tr[q] < tr[nxt])) { best = t; nxt = q; }
      }
      if (best > s) {
        env.x0[n] = xa + s * (xb - xa);
        env.x1[n] = best === 1 ? xb : xa + best * (xb - xa);
        env.z0[n] = cl + s * (cr - cl);
        env.z1[n] = cl + best * (cr - cl);
        n++;
      }
      if (nxt < 0 || best >= 1) break;
      s = best;
      cur = nxt;
    }
  }
  env.n = n;
  return env;
}

/** Envelope value at x (the smallest of the sub-pieces touching x), or NaN where no surface spans x. O(log n). */
export function envelopeAt(env: Envelope, x: number): number {
  const n = env.n;
  if (n === 0 || x < env.x0[0] || x > env.x1[n - 1]) return NaN;
  let lo = 0;
  let hi = n - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (env.x0[mid] <= x) lo = mid;
    else hi = mid - 1;
  }
  let best = NaN;
  for (let k = lo; k >= 0 && k >= lo - 2; k--) {
    if (env.x0[k] <= x && x <= env.x1[k]) {
      const span = env.x1[k] - env.x0[k];
      const t = span > 0 ? (x - env.x0[k]) / span : 0;
      const z = env.z0[k] + t * (env.z1[k] - env.z0[k]);
      if (!(z >= best)) best = z;
    }
  }
  return best;
}

/** Split polylines into x-monotone pieces ready for `planEnvelope` (source = polyline index). */
export function piecesOf(polylines: readonly { xs: ArrayLike<number> }[]): EnvelopePiece[] {
  const out: EnvelopePiece[] = [];
  polylines.forEach((pl, src) => {
    for (const idx of monotoneRuns(pl.xs)) out.push({ src, idx });
  });
  return out;
}

/** Convenience: upper envelope (smallest z at each x) of any set of polylines. */
export function upperEnvelope(polylines: readonly (readonly Point[])[]): Envelope {
  const cols = polylines.map((pl) => ({ xs: pl.map((p) => p[0]), zs: pl.map((p) => p[1]) }));
  const plan = planEnvelope(piecesOf(cols), (s) => cols[s].xs, cols.length);
  return evaluateEnvelope(plan, cols.map((c) => c.zs));
}

export interface ProfileIntegral {
  /** Area between base and envelope where the base lies below the envelope (m²). */
  area: number;
  areaLeft: number;
  areaRight: number;
  /** First moments ∫ |x − xc| h dx of the left and right half-profiles (m³). */
  momentLeft: number;
  momentRight: number;
}

/**
 * ∫ max(0, z_base(x) − z_env(x)) dx over the x where the envelope exists, split
 * at `xc` into left and right half-profiles with their first moments about xc.
 * The base is evaluated linearly with its nearest end value outside its range.
 * One merge pass over envelope pieces and base vertices: O(n + m).
 */
export function integrateProfile(env: Envelope, baseXs: ArrayLike<number>, baseZs: ArrayLike<number>, xc: number): ProfileIntegral {
  const acc = new Float64Array(4); // areaLeft, areaRight, momentLeft, momentRight
  const nb = baseXs.length;
  const bx0 = baseXs[0];
  const bxn = baseXs[nb - 1];
  let bi = 0;
  let k = 0; // first base vertex with x > current position
  for (let i = 0; i < env.n; i++) {
    const x0 = env.x0[i];
    const x1 = env.x1[i];
    if (!(x1 > x0)) continue;
    const z0 = env.z0[i];
    const dz = (env.z1[i] - z0) / (x1 - x0);
    while (k < nb && baseXs[k] <= x0) k++;
    let a = x0;
    for (;;) {
      const atBase = k < nb && baseXs[k] < x1;
      const b = atBase ? baseXs[k] : x1;
      if (b > a) {
        // base segment covering (a, b)
        const xm = 0.5 * (a + b);
        let sx0: number, sz0: number, slope: number;
        if (xm <= bx0) { sx0 = bx0; sz0 = baseZs[0]; slope = 0; }
        else if (xm >= bxn) { sx0 = bxn; sz0 = baseZs[nb - 1]; slope = 0; }
        else {
          while (bi < nb - 1 && baseXs[bi + 1] <= xm) bi++;
          while (bi > 0 && baseXs[bi] > xm) bi--;
          sx0 = baseXs[bi];
          sz0 = baseZs[bi];
          slope = (baseZs[bi + 1] - sz0) / (baseXs[bi + 1] - sx0);
        }
        const ha = sz0 + (a - sx0) * slope - (z0 + (a - x0) * dz);
        const hb = sz0 + (b - sx0) * slope - (z0 + (b - x0) * dz);
        if (a < xc && xc < b) {
          const hc = sz0 + (xc - sx0) * slope - (z0 + (xc - x0) * dz);
          addTrapezoid(acc, a, xc, ha, hc, xc);
          addTrapezoid(acc, xc, b, hc, hb, xc);
        } else addTrapezoid(acc, a, b, ha, hb, xc);
      }
      if (!atBase) break;
      a = b;
      k++;
    }
  }
  return { area: acc[0] + acc[1], areaLeft: acc[0], areaRight: acc[1], momentLeft: acc[2], momentRight: acc[3] };
}

/**
 * Add the positive part of a trapezoid with linear height ha → hb over [a, b]
 * to the left or right accumulators (areaLeft, areaRight, momentLeft,
 * momentRight; first moments about xc, both positive). Also used per draw by
 * the linearised Monte Carlo (linear-ranges.ts).
 */
export function addTrapezoid(acc: Float64Array, a: number, b: number, ha: number, hb: number, xc: number): void {
  if (!(b > a)) return;
  if (ha <= 0 && hb <= 0) return;
  if (ha < 0) { a = a + ((b - a) * -ha) / (hb - ha); ha = 0; }
  else if (hb < 0) { b = a + ((b - a) * ha) / (ha - hb); hb = 0; }
  const d = b - a;
  const area = ((ha + hb) / 2) * d;
  const mom = (d / 6) * ((a - xc) * (2 * ha + hb) + (b - xc) * (ha + 2 * hb));
  if (b <= xc) { acc[0] += area; acc[2] -= mom; }
  else { acc[1] += area; acc[3] += mom; }
}
