// Over 500 lines: five named phases of one sampler whose hot loops (the sweep's pruning, the complex intervals) stay whole for speed; its flanks are in linear-flanks.ts.
/**
 * Fast Monte Carlo sampler for one buildup, exploiting that every velocity
 * model of measurement-spec §3 is linear in its velocities: a vertex's
 * depth is z = Σ_k V_k · C_k, with coefficients C_k fixed by its TWT (and, for
 * the `buildup` model, by the TWT envelope at its x), e.g. z = Σ v_i·Δt_i/2000
 * for layers (Sheriff & Geldart 1995) or z = v0·(exp(k·t/2000) − 1)/k for the
 * linear law with fixed k (Geldart & Sheriff 2004).
 *
 * Made once per buildup: the coefficients of every vertex, and for every
 * grid interval of the envelope sweep the pieces that can be the shallowest
 * for some velocity set inside the ranges' box (a piece is dropped where
 * another is at least as shallow at both ends for every velocity set: the
 * minimum of a linear form over a box is taken corner-wise). Where a single
 * piece remains and the base lies below it for every velocity set, the
 * interval's area and first moment are linear in the velocities and are
 * summed into a few coefficient vectors. Each draw then costs a few dot
 * products, the crest among the vertices that can be shallowest, the
 * remaining ("complex") intervals evaluated exactly, and the flanks.
 *
 * Exactness: in exact arithmetic the result equals the direct recomputation
 * (tests compare the two); if the model turns out not to be linear within
 * 1e-9 relative, the caller falls back to the direct sampler.
 *
 * Phases, each a named function below: `vertexCoefficients` (C_k of every
 * vertex, with the linearity check), `crestCandidates`, `sweepIntervals`
 * (the engine's envelope plan, pruned per interval into linear sums and
 * complex intervals), then per draw `crestAndHeight`, `complexIntervalArea`
 * (the engine's trapezoid rule, envelope.ts `addTrapezoid`) and
 * `flankAngleOfDraw` (the engine's resampling and regression, flank.ts).
 */
import { flankAngleOfDraw, flankScratch } from './linear-flanks';
import { segmentIndex } from './geometry';
import { addTrapezoid, piecesOf, planEnvelope, type EnvelopePlan } from './envelope';
import type { PreparedBuildup } from './prepare';
import { makeTwtToDepth, modelFromVector, velocityParams, type VelocityModel } from './velocity';

export interface LinearDraw {
  heightM: number;
  areaM2: number;
  volumeM3: number;
  /** Flank angle per cycle, NaN without a flank. */
  left: Float64Array;
  right: Float64Array;
}

/** Per-draw results of a batch, indexed by draw; a flank array is null where that flank was not traced (nothing is written). */
export interface LinearBatch {
  heightM: Float64Array;
  areaM2: Float64Array;
  volumeM3: Float64Array;
  left: (Float64Array | null)[];
  right: (Float64Array | null)[];
}

export interface LinearSampler {
  draw(V: Float64Array, out: LinearDraw): void;
  /**
   * The same numbers as `draw` for `draws` velocity sets stored one after
   * the other in `Vs` (K values each, resolve order). Flanks are done one
   * flank at a time over all draws, so each flank's data stays in cache.
   */
  drawMany(Vs: Float64Array, draws: number, out: LinearBatch): void;
  /** Intervals evaluated exactly in every draw (for diagnostics and tests). */
  complexIntervals: number;
}

// ---------------------------------------------------------------------------
// phase 1: depth coefficients of every vertex

/** z = Σ_k V_k · C[row·K + k] for every envelope-source vertex (C) and base vertex (CB). */
interface Coefficients {
  K: number;
  lo: Float64Array;
  hi: Float64Array;
  mode: Float64Array;
  C: Float64Array;
  CB: Float64Array;
  plan: EnvelopePlan;
}

/**
 * Coefficients of one surface's vertices into `out` from row `row0`, each
 * checked against the direct conversion at the modes; false when the model
 * is not linear there (1e-9 relative).
 */
function surfaceCoefficients(
  ys: ArrayLike<number>,
  te: ArrayLike<number> | null,
  convs: ((t: number, te: number) => number)[],
  mode: Float64Array,
  convMode: (t: number, te: number) => number,
  out: Float64Array,
  row0: number,
): boolean {
  const K = convs.length;
  for (let i = 0; i < ys.length; i++) {
    const tei = te ? te[i] : NaN;
    const row = (row0 + i) * K;
    let z = 0;
    for (let k = 0; k < K; k++) {
      out[row + k] = convs[k](ys[i], tei);
      z += mode[k] * out[row + k];
    }
    const zd = convMode(ys[i], tei);
    if (!(Math.abs(z - zd) <= 1e-9 * Math.max(1, Math.abs(zd)))) return false;
  }
  return true;
}

function vertexCoefficients(b: PreparedBuildup, model: VelocityModel): Coefficients | null {
  const params = velocityParams(model);
  const K = params.length;
  const lo = Float64Array.from(params, (p) => p.min);
  const hi = Float64Array.from(params, (p) => p.max);
  const mode = Float64Array.from(params, (p) => p.mode);
  // conversion with velocity k set to 1 and the others to 0: the coefficient C_k
  const convs = params.map((_, k) => makeTwtToDepth(modelFromVector(model, params.map((__, j) => (j === k ? 1 : 0)))));
  const convMode = makeTwtToDepth(modelFromVector(model, mode));
  const sources = b.sources;
  const plan = planEnvelope(piecesOf(sources), (s) => sources[s].xs, sources.length, b.base.xs);
  const C = new Float64Array(plan.srcOff[sources.length] * K);
  for (let s = 0; s < sources.length; s++) {
    if (!surfaceCoefficients(sources[s].ys, sources[s].te, convs, mode, convMode, C, plan.srcOff[s])) return null;
  }
  const CB = new Float64Array(b.base.ys.length * K);
  if (!surfaceCoefficients(b.base.ys, b.base.te, convs, mode, convMode, CB, 0)) return null;
  return { K, lo, hi, mode, C, CB, plan };
}

/** Smallest and largest value of the linear form d·V over the box lo ≤ V ≤ hi (corner-wise). */
function boxBounds(lo: Float64Array, hi: Float64Array) {
  const K = lo.length;
  return {
    min(d: Float64Array, o = 0) {
      let s = 0;
      for (let k = 0; k < K; k++) { const v = d[o + k]; s += v >= 0 ? v * lo[k] : v * hi[k]; }
      return s;
    },
    max(d: Float64Array, o = 0) {
      let s = 0;
      for (let k = 0; k < K; k++) { const v = d[o + k]; s += v >= 0 ? v * hi[k] : v * lo[k]; }
      return s;
    },
  };
}
type Box = ReturnType<typeof boxBounds>;

const dot = (arr: Float64Array, o: number, V: Float64Array, K: number) => {
  let s = 0;
  for (let k = 0; k < K; k++) s += arr[o + k] * V[k];
  return s;
};

// ---------------------------------------------------------------------------
// phase 2: crest candidates

/** Vertices of the youngest top that can be the shallowest for some velocity set. */
interface CrestCandidates {
  /** Row offsets (vertex · K) in C, x and per-draw depth scratch. */
  rows: Int32Array;
  x: Float64Array;
  z: Float64Array;
  /** x range of the candidates: intervals outside it are wholly left or right of any crest. */
  xMin: number;
  xMax: number;
  /** Crest x at the modes: the reference of the linear first moments. */
  xref: number;
}

function crestCandidates(b: PreparedBuildup, co: Coefficients, box: Box): CrestCandidates {
  const { K, C, mode, plan } = co;
  const tmp = new Float64Array(K);
  const ys = b.sources.indexOf(b.tops[b.tops.length - 1]);
  const yOff = plan.srcOff[ys];
  const yN = plan.srcOff[ys + 1] - yOff;
  let c0 = 0;
  let c0z = Infinity;
  for (let i = 0; i < yN; i++) {
    let z = 0;
    for (let k = 0; k < K; k++) z += mode[k] * C[(yOff + i) * K + k];
    if (z < c0z) { c0z = z; c0 = i; }
  }
  // keep the vertices not strictly deeper than the mode crest for every velocity set
  const idx: number[] = [];
  for (let i = 0; i < yN; i++) {
    for (let k = 0; k < K; k++) tmp[k] = C[(yOff + i) * K + k] - C[(yOff + c0) * K + k];
    if (!(box.min(tmp) > 0)) idx.push(i);
  }
  const youngXs = b.sources[ys].xs;
  let xMin = Infinity;
  let xMax = -Infinity;
  for (const i of idx) { xMin = Math.min(xMin, youngXs[i]); xMax = Math.max(xMax, youngXs[i]); }
  return {
    rows: Int32Array.from(idx, (i) => (yOff + i) * K),
    x: Float64Array.from(idx, (i) => youngXs[i]),
    z: new Float64Array(idx.length),
    xMin,
    xMax,
    xref: youngXs[c0],
  };
}

// ---------------------------------------------------------------------------
// phase 3: the envelope sweep, per grid interval

/**
 * Linear area and first-moment sums (about `xref`) of the simple intervals
 * left and right of every possible crest, and the complex intervals: x pair,
 * candidate count, then base coefficients at both ends and each candidate
 * piece's coefficients at both ends.
 */
interface IntervalSums {
  aL: Float64Array;
  mL: Float64Array;
  aR: Float64Array;
  mR: Float64Array;
  cxXs: Float64Array;
  cxN: Int32Array;
  cxC: Float64Array;
  maxCandidates: number;
}

/**
 * Walk the grid of the engine's envelope plan. Per interval: the base
 * coefficients at both ends, each active piece's coefficients at both ends;
 * drop a piece another is at least as shallow as at both ends for every
 * velocity set; with one piece left and the base below it for every set, add
 * the interval's area and moment to the linear sums; otherwise keep it as a
 * complex interval, evaluated per draw.
 */
function sweepIntervals(b: PreparedBuildup, co: Coefficients, crest: CrestCandidates, box: Box): IntervalSums {
  const { K, C, CB, mode, plan } = co;
  const { xs, g0, g1, off, a: ea, b: eb, w: ew, order } = plan;
  const { xMin: xcMin, xMax: xcMax, xref } = crest;
  const tmp = new Float64Array(K);
  const aL = new Float64Array(K), mL = new Float64Array(K), aR = new Float64Array(K), mR = new Float64Array(K);
  const np = g0.length;
  const active = new Int32Array(np);
  let na = 0;
  let next = 0;
  const TL = new Float64Array(np * K);
  const TR = new Float64Array(np * K);
  const vL = new Float64Array(np);
  const vR = new Float64Array(np);
  const keep = new Uint8Array(np);
  const BL = new Float64Array(K), BR = new Float64Array(K), HL = new Float64Array(K), HR = new Float64Array(K);
  const cxX: number[] = []; // xa, xb per complex interval
  const cxCount: number[] = [];
  const cxCoef: number[] = []; // per complex interval: BL, BR, then per candidate TL, TR
  const bx = b.base.xs;
  const nb = bx.length;
  let bi = 0;
  const dominatedBoth = (p: number, q: number) => {
    for (let k = 0; k < K; k++) tmp[k] = TL[p * K + k] - TL[q * K + k];
    if (!(box.min(tmp) >= 0)) return false;
    for (let k = 0; k < K; k++) tmp[k] = TR[p * K + k] - TR[q * K + k];
    return box.min(tmp) >= 0;
  };
  for (let j = 0; j < xs.length - 1; j++) {
    let m = 0;
    for (let k = 0; k < na; k++) if (g1[active[k]] > j) active[m++] = active[k];
    na = m;
    while (next < np && g0[order[next]] <= j) {
      const p = order[next++];
      if (g1[p] > j) active[na++] = p;
    }
    if (na === 0) continue;
    const xa = xs[j];
    const xb = xs[j + 1];
    // base coefficients at both ends, from the base segment covering (xa, xb)
    const xm = 0.5 * (xa + xb);
    if (xm <= bx[0] || xm >= bx[nb - 1]) {
      const r = xm <= bx[0] ? 0 : nb - 1;
      for (let k = 0; k < K; k++) { BL[k] = CB[r * K + k]; BR[k] = CB[r * K + k]; }
    } else {
      while (bi < nb - 1 && bx[bi + 1] <= xm) bi++;
      while (bi > 0 && bx[bi] > xm) bi--;
      const span = bx[bi + 1] - bx[bi];
      const ta = (xa - bx[bi]) / span;
      const tb = (xb - bx[bi]) / span;
      for (let k = 0; k < K; k++) {
        const c0k = CB[bi * K + k];
        const d = CB[(bi + 1) * K + k] - c0k;
        BL[k] = c0k + ta * d;
        BR[k] = c0k + tb * d;
      }
    }
    // active pieces at both ends; the shallowest at the modes on each side
    let qL = -1, qR = -1;
    for (let t = 0; t < na; t++) {
      const p = active[t];
      const e0 = off[p] + j - g0[p];
      const e1 = e0 + 1;
      let sl = 0, sr = 0;
      for (let k = 0; k < K; k++) {
        const l = C[ea[e0] * K + k] + ew[e0] * (C[eb[e0] * K + k] - C[ea[e0] * K + k]);
        const r = C[ea[e1] * K + k] + ew[e1] * (C[eb[e1] * K + k] - C[ea[e1] * K + k]);
        TL[p * K + k] = l;
        TR[p * K + k] = r;
        sl += mode[k] * l;
        sr += mode[k] * r;
      }
      vL[p] = sl;
      vR[p] = sr;
      if (qL < 0 || sl < vL[qL]) qL = p;
      if (qR < 0 || sr < vR[qR]) qR = p;
    }
    const qRkept = qR === qL || !dominatedBoth(qR, qL);
    let count = 0;
    let only = -1;
    for (let t = 0; t < na; t++) {
      const p = active[t];
      let k1 = 1;
      if (p === qL) k1 = 1;
      else if (p === qR) k1 = qRkept ? 1 : 0;
      else if (dominatedBoth(p, qL) || (qRkept && dominatedBoth(p, qR))) k1 = 0;
      keep[p] = k1;
      if (k1) { count++; only = p; }
    }
    let simple = false;
    if (count === 1) {
      for (let k = 0; k < K; k++) { HL[k] = BL[k] - TL[only * K + k]; HR[k] = BR[k] - TR[only * K + k]; }
      if (box.max(HL) <= 0 && box.max(HR) <= 0) continue; // base never below the envelope here: no area
      if (box.min(HL) >= 0 && box.min(HR) >= 0 && (xb <= xcMin || xa >= xcMax)) {
        simple = true;
        const d = xb - xa;
        const pa = xa - xref;
        const pb = xb - xref;
        const A = xb <= xcMin ? aL : aR;
        const M = xb <= xcMin ? mL : mR;
        for (let k = 0; k < K; k++) {
          A[k] += (d / 2) * (HL[k] + HR[k]);
          M[k] += (d / 6) * (pa * (2 * HL[k] + HR[k]) + pb * (HL[k] + 2 * HR[k]));
        }
      }
    }
    if (!simple) {
      cxX.push(xa, xb);
      cxCount.push(count);
      for (let k = 0; k < K; k++) cxCoef.push(BL[k]);
      for (let k = 0; k < K; k++) cxCoef.push(BR[k]);
      for (let t = 0; t < na; t++) {
        const p = active[t];
        if (!keep[p]) continue;
        for (let k = 0; k < K; k++) cxCoef.push(TL[p * K + k]);
        for (let k = 0; k < K; k++) cxCoef.push(TR[p * K + k]);
      }
    }
  }
  return {
    aL, mL, aR, mR,
    cxXs: Float64Array.from(cxX),
    cxN: Int32Array.from(cxCount),
    cxC: Float64Array.from(cxCoef),
    maxCandidates: cxCount.reduce((x, y) => Math.max(x, y), 1),
  };
}

// ---------------------------------------------------------------------------
// per draw: crest and height, complex intervals

/** Crest depth and x for velocities V (the same rule as crestOf in buildup.ts). */
function crestOfDraw(co: Coefficients, crest: CrestCandidates, V: Float64Array): { zmin: number; xc: number } {
  const { K, C } = co;
  const { rows, x, z } = crest;
  let zmin = Infinity;
  for (let c = 0; c < rows.length; c++) { const zc = dot(C, rows[c], V, K); z[c] = zc; if (zc < zmin) zmin = zc; }
  const eps = 1e-9 * Math.abs(zmin);
  let xlo = Infinity, xhi = -Infinity;
  for (let c = 0; c < rows.length; c++) {
    if (z[c] <= zmin + eps) { if (x[c] < xlo) xlo = x[c]; if (x[c] > xhi) xhi = x[c]; }
  }
  return { zmin, xc: (xlo + xhi) / 2 };
}

/** Base depth at x for velocities V: `interpolateAt(base xs, base depths, x)`, forming only the depths it reads. */
function baseDepthAt(bx: Float64Array, co: Coefficients, x: number, V: Float64Array): number {
  const { K, CB } = co;
  const nb = bx.length;
  if (x <= bx[0]) {
    if (x < bx[0]) return dot(CB, 0, V, K);
    let i = 0;
    while (i + 1 < nb && bx[i + 1] === bx[0]) i++;
    return dot(CB, i * K, V, K);
  }
  if (x >= bx[nb - 1]) return dot(CB, (nb - 1) * K, V, K);
  const i = segmentIndex(bx, x);
  const x0 = bx[i];
  const x1 = bx[i + 1];
  if (x1 === x0) return dot(CB, (i + 1) * K, V, K);
  const w = (x - x0) / (x1 - x0);
  const z0 = dot(CB, i * K, V, K);
  return z0 + w * (dot(CB, (i + 1) * K, V, K) - z0);
}

/**
 * Area and first moments about xc of the complex intervals for velocities V,
 * added into acc (areaLeft, areaRight, momentLeft, momentRight) by the
 * engine's trapezoid rule: per interval, the lower envelope of the candidate
 * pieces (straight lines on [xa, xb]) against the straight base.
 */
function complexIntervalArea(sums: IntervalSums, K: number, V: Float64Array, xc: number, cl: Float64Array, cr: Float64Array, acc: Float64Array): void {
  const { cxXs, cxN, cxC } = sums;
  let o = 0;
  for (let q = 0; q < cxN.length; q++) {
    const xa = cxXs[2 * q];
    const xb = cxXs[2 * q + 1];
    const bl = dot(cxC, o, V, K);
    const br = dot(cxC, o + K, V, K);
    o += 2 * K;
    const m = cxN[q];
    let argL = 0;
    for (let c = 0; c < m; c++) {
      cl[c] = dot(cxC, o, V, K);
      cr[c] = dot(cxC, o + K, V, K);
      o += 2 * K;
      if (cl[c] < cl[argL] || (cl[c] === cl[argL] && cr[c] < cr[argL])) argL = c;
    }
    // walk the lower envelope of the candidate lines from the left end
    let s = 0;
    let cur = argL;
    for (let guard = 0; guard <= m; guard++) {
      let best = 1;
      let nxt = -1;
      for (let c = 0; c < m; c++) {
        if (c === cur) continue;
        const dR = cr[c] - cr[cur];
        if (!(dR < 0)) continue;
        const dL = cl[c] - cl[cur];
        let t = dL / (dL - dR);
        if (t < s) t = s;
        if (t < best || (t === best && nxt >= 0 && cr[c] < cr[nxt])) { best = t; nxt = c; }
      }
      if (best > s) {
        const x0 = xa + s * (xb - xa);
        const x1 = best === 1 ? xb : xa + best * (xb - xa);
        const h0 = bl + s * (br - bl) - (cl[cur] + s * (cr[cur] - cl[cur]));
        const h1 = bl + best * (br - bl) - (cl[cur] + best * (cr[cur] - cl[cur]));
        if (x0 < xc && xc < x1) {
          const tc = (xc - x0) / (x1 - x0);
          const hc = h0 + tc * (h1 - h0);
          addTrapezoid(acc, x0, xc, h0, hc, xc);
          addTrapezoid(acc, xc, x1, hc, h1, xc);
        } else addTrapezoid(acc, x0, x1, h0, h1, xc);
      }
      if (nxt < 0 || best >= 1) break;
      s = best;
      cur = nxt;
    }
  }
}

// ---------------------------------------------------------------------------
// the sampler

/** Build the fast sampler, or null if the model is not linear in its velocities for this geometry. */
export function linearSamplerFor(b: PreparedBuildup, model: VelocityModel): LinearSampler | null {
  const co = vertexCoefficients(b, model);
  if (!co) return null;
  const { K, C, plan } = co;
  const box = boxBounds(co.lo, co.hi);
  const crest = crestCandidates(b, co, box);
  const sums = sweepIntervals(b, co, crest, box);
  const n = b.tops.length;
  const bx = b.base.xs;
  const cl = new Float64Array(sums.maxCandidates);
  const cr = new Float64Array(sums.maxCandidates);
  const flanks = [...b.flanksL, ...b.flanksR].map((f) => {
    const s = f ? b.sources.indexOf(f) : -1;
    return s >= 0 ? flankScratch(b.sources[s].xs, C, plan.srcOff[s], K) : null;
  });
  const acc = new Float64Array(4);

  /** Height, area and volume for velocities V. */
  const core = (V: Float64Array, out: { heightM: number; areaM2: number; volumeM3: number }) => {
    const { zmin, xc } = crestOfDraw(co, crest, V);
    out.heightM = baseDepthAt(bx, co, xc, V) - zmin;
    // linear sums (moments about xref, moved to xc) plus the complex intervals (about xc)
    const dxc = xc - crest.xref;
    const aLv = dot(sums.aL, 0, V, K);
    const aRv = dot(sums.aR, 0, V, K);
    acc.fill(0);
    complexIntervalArea(sums, K, V, xc, cl, cr, acc);
    const momLeft = dxc * aLv - dot(sums.mL, 0, V, K) + acc[2];
    const momRight = dot(sums.mR, 0, V, K) - dxc * aRv + acc[3];
    out.areaM2 = aLv + acc[0] + (aRv + acc[1]);
    out.volumeM3 = Math.PI * (momLeft + momRight);
  };
  const Vd = new Float64Array(K);
  const one = { heightM: 0, areaM2: 0, volumeM3: 0 };

  return {
    complexIntervals: sums.cxN.length,
    draw(V, out) {
      core(V, out);
      for (let f = 0; f < flanks.length; f++) {
        const fd = flanks[f];
        (f < n ? out.left : out.right)[f % n] = fd ? flankAngleOfDraw(fd, V) : NaN;
      }
    },
    drawMany(Vs, draws, out) {
      for (let d = 0; d < draws; d++) {
        for (let k = 0; k < K; k++) Vd[k] = Vs[d * K + k];
        core(Vd, one);
        out.heightM[d] = one.heightM;
        out.areaM2[d] = one.areaM2;
        out.volumeM3[d] = one.volumeM3;
      }
      for (let f = 0; f < flanks.length; f++) {
        const fd = flanks[f];
        const dst = (f < n ? out.left : out.right)[f % n];
        if (!dst) continue;
        for (let d = 0; d < draws; d++) {
          for (let k = 0; k < K; k++) Vd[k] = Vs[d * K + k];
          dst[d] = fd ? flankAngleOfDraw(fd, Vd) : NaN;
        }
      }
    },
  };
}
