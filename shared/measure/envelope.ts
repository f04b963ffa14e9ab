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
  /** Per piece: its source surface. */
  src: Int32Array;
  /** Per grid entry: source vertex indices a, b and weight, value = z[a] + w·(z[b] − z[a]). */
  a: Int32Array;
  b: Int32Array;
  w: Float64Array;
  /** Piece numbers sorted by g0. */
  order: Int32Array;
}

/** Envelope as sorted, non-overlapping straight sub-pieces; gaps where no surface spans x. */
export interface Envelope {
  x0: number[];
  x1: number[];
  z0: number[];
  z1: number[];
}

/** Build a sweep plan from pieces whose vertex x positions come from `xsOf(src)`. */
export function planEnvelope(pieces: readonly EnvelopePiece[], xsOf: (src: number) => ArrayLike<number>): EnvelopePlan {
  const all: number[] = [];
  for (const p of pieces) {
    const xs = xsOf(p.src);
    for (const i of p.idx) all.push(xs[i]);
  }
  all.sort((a, b) => a - b);
  const grid: number[] = [];
  for (const x of all) if (grid.length === 0 || grid[grid.length - 1] !== x) grid.push(x);
  const xs = Float64Array.from(grid);
  const np = pieces.length;
  const g0 = new Int32Array(np);
  const g1 = new Int32Array(np);
  const off = new Int32Array(np);
  const src = new Int32Array(np);
  let total = 0;
  const findGrid = (x: number) => {
    let lo = 0;
    let hi = xs.length - 1;
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
    src[p] = pieces[p].src;
    total += g1[p] - g0[p] + 1;
  }
  const a = new Int32Array(total);
  const b = new Int32Array(total);
  const w = new Float64Array(total);
  for (let p = 0; p < np; p++) {
    const px = xsOf(pieces[p].src);
    const idx = pieces[p].idx;
    let k = 0;
    for (let g = g0[p]; g <= g1[p]; g++) {
      const x = xs[g];
      while (k < idx.length - 2 && px[idx[k + 1]] < x) k++;
      const xa = px[idx[k]];
      const xb = px[idx[k + 1]];
      const e = off[p] + g - g0[p];
      a[e] = idx[k];
      b[e] = idx[k + 1];
      w[e] = xb > xa ? Math.min(1, Math.max(0, (x - xa) / (xb - xa))) : 0;
    }
  }
  const order = Int32Array.from(Array.from({ length: np }, (_, i) => i).sort((p, q) => g0[p] - g0[q] || p - q));
  return { xs, g0, g1, off, src, a, b, w, order };
}

/** Evaluate the envelope for the z values of each source surface (same vertex order as planned). */
export function evaluateEnvelope(plan: EnvelopePlan, zOf: readonly ArrayLike<number>[]): Envelope {
  const { xs, g0, g1, off, src, a, b, w, order } = plan;
  const env: Envelope = { x0: [], x1: [], z0: [], z1: [] };
  const G = xs.length;
  const np = g0.length;
  const active: number[] = [];
  const lastG = new Int32Array(np).fill(-1);
  const lastV = new Float64Array(np);
  let next = 0;
  let tl: number[] = [];
  let tr: number[] = [];
  const val = (p: number, g: number) => {
    const e = off[p] + g - g0[p];
    const z = zOf[src[p]];
    const za = z[a[e]];
    return za + w[e] * (z[b[e]] - za);
  };
  for (let j = 0; j < G - 1; j++) {
    // drop pieces that end at or before j; add pieces starting at j
    let removed = false;
    for (let k = 0; k < active.length; k++) if (g1[active[k]] <= j) { removed = true; break; }
    if (removed) {
      let m = 0;
      for (let k = 0; k < active.length; k++) if (g1[active[k]] > j) active[m++] = active[k];
      active.length = m;
    }
    while (next < np && g0[order[next]] <= j) {
      const p = order[next++];
      if (g1[p] > j) active.push(p);
    }
    const m = active.length;
    if (m === 0) continue;
    let minL = Infinity;
    let minR = Infinity;
    let argL = -1;
    let argR = -1;
    if (tl.length < m) { tl = new Array(m); tr = new Array(m); }
    for (let k = 0; k < m; k++) {
      const p = active[k];
      const vl = lastG[p] === j ? lastV[p] : val(p, j);
      const vr = val(p, j + 1);
      lastG[p] = j + 1;
      lastV[p] = vr;
      tl[k] = vl;
      tr[k] = vr;
      if (vl < minL || (vl === minL && vr < tr[argL])) { minL = vl; argL = k; }
      if (vr < minR || (vr === minR && vl < tl[argR])) { minR = vr; argR = k; }
    }
    const xa = xs[j];
    const xb = xs[j + 1];
    if (argL === argR || (tl[argR] === minL && tr[argR] === minR)) {
      env.x0.push(xa); env.x1.push(xb); env.z0.push(minL); env.z1.push(minR);
      continue;
    }
    // lower envelope of m lines on [xa, xb], parameter t in [0, 1]
    let s = 0;
    let cur = argL;
    for (let guard = 0; guard <= m; guard++) {
      let best = 1;
      let nxt = -1;
      const cl = tl[cur];
      const cr = tr[cur];
      const zs = cl + s * (cr - cl);
      for (let q = 0; q < m; q++) {
        if (q === cur) continue;
        const dR = tr[q] - cr;
        if (!(dR < 0)) continue;
        const dL = tl[q] - cl;
        let t = dL / (dL - dR);
        if (t < s) t = s;
        if (t < best || (t === best && nxt >= 0 && tr[q] < tr[nxt])) { best = t; nxt = q; }
      }
      if (best > s) {
        const ze = cl + best * (cr - cl);
        env.x0.push(xa + s * (xb - xa));
        env.x1.push(best === 1 ? xb : xa + best * (xb - xa));
        env.z0.push(zs);
        env.z1.push(ze);
      }
      if (nxt < 0 || best >= 1) break;
      s = best;
      cur = nxt;
    }
  }
  return env;
}

/** Envelope value at x (the smallest of the sub-pieces touching x), or NaN where no surface spans x. O(log n). */
export function envelopeAt(env: Envelope, x: number): number {
  const n = env.x0.length;
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
  const plan = planEnvelope(piecesOf(cols), (s) => cols[s].xs);
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
 */
export function integrateProfile(env: Envelope, baseXs: ArrayLike<number>, baseZs: ArrayLike<number>, xc: number): ProfileIntegral {
  const out: ProfileIntegral = { area: 0, areaLeft: 0, areaRight: 0, momentLeft: 0, momentRight: 0 };
  const nb = baseXs.length;
  let bi = 0; // base vertex cursor: first base vertex with x > current position
  const baseSeg = (xm: number): [number, number, number, number] => {
    // segment covering the open interval around xm; constant outside the base range
    if (xm <= baseXs[0]) return [baseXs[0] - 1, baseZs[0], baseXs[0], baseZs[0]];
    if (xm >= baseXs[nb - 1]) return [baseXs[nb - 1], baseZs[nb - 1], baseXs[nb - 1] + 1, baseZs[nb - 1]];
    while (bi < nb - 1 && baseXs[bi + 1] <= xm) bi++;
    while (bi > 0 && baseXs[bi] > xm) bi--;
    return [baseXs[bi], baseZs[bi], baseXs[bi + 1], baseZs[bi + 1]];
  };
  const addTrap = (a: number, b: number, ha: number, hb: number) => {
    if (!(b > a)) return;
    if (ha <= 0 && hb <= 0) return;
    if (ha < 0) { a = a + ((b - a) * -ha) / (hb - ha); ha = 0; }
    else if (hb < 0) { b = a + ((b - a) * ha) / (ha - hb); hb = 0; }
    const d = b - a;
    const area = ((ha + hb) / 2) * d;
    const mom = (d / 6) * ((a - xc) * (2 * ha + hb) + (b - xc) * (ha + 2 * hb));
    out.area += area;
    if (b <= xc) { out.areaLeft += area; out.momentLeft -= mom; }
    else { out.areaRight += area; out.momentRight += mom; }
  };
  const addSpan = (a: number, b: number, ea: number, eb: number) => {
    // a..b lies within one base segment
    const xm = (a + b) / 2;
    const [sx0, sz0, sx1, sz1] = baseSeg(xm);
    const bz = (x: number) => sz0 + ((x - sx0) / (sx1 - sx0)) * (sz1 - sz0);
    const ez = (x: number) => ea + ((x - a) / (b - a)) * (eb - ea);
    if (a < xc && xc < b) {
      const hc = bz(xc) - ez(xc);
      addTrap(a, xc, bz(a) - ea, hc);
      addTrap(xc, b, hc, bz(b) - eb);
    } else addTrap(a, b, bz(a) - ea, bz(b) - eb);
  };
  let k = 0; // first base vertex index with baseXs[k] > piece start
  for (let i = 0; i < env.x0.length; i++) {
    const x0 = env.x0[i];
    const x1 = env.x1[i];
    if (!(x1 > x0)) continue;
    const z0 = env.z0[i];
    const z1 = env.z1[i];
    while (k < nb && baseXs[k] <= x0) k++;
    let a = x0;
    let ea = z0;
    while (k < nb && baseXs[k] < x1) {
      const xb = baseXs[k];
      const eb = z0 + ((xb - x0) / (x1 - x0)) * (z1 - z0);
      if (xb > a) addSpan(a, xb, ea, eb);
      a = xb;
      ea = eb;
      k++;
    }
    addSpan(a, x1, ea, z1);
  }
  return out;
}
