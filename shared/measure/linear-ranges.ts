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
 */
import { FLANK_SAMPLES } from './flank';
import { DEG, segmentIndex } from './geometry';
import { piecesOf, planEnvelope } from './envelope';
import type { PreparedBuildup } from './prepare';
import { isRange, makeTwtToDepth, resolveVelocityModel, type Range, type Speed, type VelocityModel } from './velocity';

export interface VelocityParam {
  path: string;
  min: number;
  mode: number;
  max: number;
  range: Range | null;
}

/** The velocities of a model in resolve order (fixed values have min = mode = max). */
export function velocityParams(model: VelocityModel): VelocityParam[] {
  const out: VelocityParam[] = [];
  resolveVelocityModel(model, (s: Speed, path) => {
    if (isRange(s)) out.push({ path, min: s.min, mode: s.mode, max: s.max, range: s });
    else out.push({ path, min: s, mode: s, max: s, range: null });
    return 0;
  });
  return out;
}

/** The model with its velocities taken from a vector (resolve order). */
export function modelFromVector(model: VelocityModel, v: ArrayLike<number>) {
  let i = 0;
  return resolveVelocityModel(model, () => v[i++]);
}

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

/** Build the fast sampler, or null if the model is not linear in its velocities for this geometry. */
export function linearSamplerFor(b: PreparedBuildup, model: VelocityModel): LinearSampler | null {
  const params = velocityParams(model);
  const K = params.length;
  const lo = Float64Array.from(params, (p) => p.min);
  const hi = Float64Array.from(params, (p) => p.max);
  const mode = Float64Array.from(params, (p) => p.mode);
  const convs = params.map((_, k) => makeTwtToDepth(modelFromVector(model, params.map((__, j) => (j === k ? 1 : 0)))));
  const convMode = makeTwtToDepth(modelFromVector(model, mode));
  const sources = b.sources;
  const ns = sources.length;
  const plan = planEnvelope(piecesOf(sources), (s) => sources[s].xs, ns, b.base.xs);
  const { xs, g0, g1, off, srcOff, a: ea, b: eb, w: ew, order } = plan;
  const total = srcOff[ns];

  // vertex coefficients, checked against the direct conversion at the modes
  const C = new Float64Array(total * K);
  for (let s = 0; s < ns; s++) {
    const sf = sources[s];
    for (let i = 0; i < sf.ys.length; i++) {
      const te = sf.te ? sf.te[i] : NaN;
      const row = (srcOff[s] + i) * K;
      let z = 0;
      for (let k = 0; k < K; k++) {
        C[row + k] = convs[k](sf.ys[i], te);
        z += mode[k] * C[row + k];
      }
      const zd = convMode(sf.ys[i], te);
      if (!(Math.abs(z - zd) <= 1e-9 * Math.max(1, Math.abs(zd)))) return null;
    }
  }
  const nb = b.base.ys.length;
  const CB = new Float64Array(nb * K);
  for (let i = 0; i < nb; i++) {
    const te = b.base.te ? b.base.te[i] : NaN;
    let z = 0;
    for (let k = 0; k < K; k++) {
      CB[i * K + k] = convs[k](b.base.ys[i], te);
      z += mode[k] * CB[i * K + k];
    }
    const zd = convMode(b.base.ys[i], te);
    if (!(Math.abs(z - zd) <= 1e-9 * Math.max(1, Math.abs(zd)))) return null;
  }

  const minBox = (d: Float64Array, o = 0) => {
    let s = 0;
    for (let k = 0; k < K; k++) { const v = d[o + k]; s += v >= 0 ? v * lo[k] : v * hi[k]; }
    return s;
  };
  const maxBox = (d: Float64Array, o = 0) => {
    let s = 0;
    for (let k = 0; k < K; k++) { const v = d[o + k]; s += v >= 0 ? v * hi[k] : v * lo[k]; }
    return s;
  };
  const tmp = new Float64Array(K);

  // crest candidates: vertices of the youngest top not strictly deeper than the mode crest for every velocity set
  const n = b.tops.length;
  const ys = sources.indexOf(b.tops[n - 1]);
  const yOff = srcOff[ys];
  const yN = srcOff[ys + 1] - yOff;
  let c0 = 0;
  let c0z = Infinity;
  for (let i = 0; i < yN; i++) {
    let z = 0;
    for (let k = 0; k < K; k++) z += mode[k] * C[(yOff + i) * K + k];
    if (z < c0z) { c0z = z; c0 = i; }
  }
  const crestIdx: number[] = [];
  for (let i = 0; i < yN; i++) {
    for (let k = 0; k < K; k++) tmp[k] = C[(yOff + i) * K + k] - C[(yOff + c0) * K + k];
    if (!(minBox(tmp) > 0)) crestIdx.push(i);
  }
  const youngXs = sources[ys].xs;
  let xcMin = Infinity;
  let xcMax = -Infinity;
  for (const i of crestIdx) { xcMin = Math.min(xcMin, youngXs[i]); xcMax = Math.max(xcMax, youngXs[i]); }
  const xref = youngXs[c0];
  const crestRows = Int32Array.from(crestIdx, (i) => (yOff + i) * K);
  const crestX = Float64Array.from(crestIdx, (i) => youngXs[i]);
  const crestZ = new Float64Array(crestIdx.length);

  // sweep: linear sums for simple intervals, stored coefficients for complex ones
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
  let bi = 0;
  const dominatedBoth = (p: number, q: number) => {
    for (let k = 0; k < K; k++) tmp[k] = TL[p * K + k] - TL[q * K + k];
    if (!(minBox(tmp) >= 0)) return false;
    for (let k = 0; k < K; k++) tmp[k] = TR[p * K + k] - TR[q * K + k];
    return minBox(tmp) >= 0;
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
      if (maxBox(HL) <= 0 && maxBox(HR) <= 0) continue; // base never below the envelope here: no area
      if (minBox(HL) >= 0 && minBox(HR) >= 0 && (xb <= xcMin || xa >= xcMax)) {
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
  const cxXs = Float64Array.from(cxX);
  const cxN = Int32Array.from(cxCount);
  const cxC = Float64Array.from(cxCoef);
  const maxCand = cxCount.reduce((x, y) => Math.max(x, y), 1);
  const cl = new Float64Array(maxCand);
  const cr = new Float64Array(maxCand);
  const flankSrc = [...b.flanksL, ...b.flanksR].map((f) => (f ? sources.indexOf(f) : -1));
  const flanks = flankSrc.map((s) => (s >= 0 ? flankScratch(sources[s].xs, C, srcOff[s], K) : null));
  const acc = new Float64Array(4);
  const dot = (arr: Float64Array, o: number, V: Float64Array) => {
    let s = 0;
    for (let k = 0; k < K; k++) s += arr[o + k] * V[k];
    return s;
  };
  const addTrap = (a: number, bb: number, ha: number, hb: number, xc: number) => {
    if (!(bb > a) || (ha <= 0 && hb <= 0)) return;
    if (ha < 0) { a = a + ((bb - a) * -ha) / (hb - ha); ha = 0; }
    else if (hb < 0) { bb = a + ((bb - a) * ha) / (ha - hb); hb = 0; }
    const d = bb - a;
    const area = ((ha + hb) / 2) * d;
    const mom = (d / 6) * ((a - xref) * (2 * ha + hb) + (bb - xref) * (ha + 2 * hb));
    if (bb <= xc) { acc[0] += area; acc[2] += mom; }
    else { acc[1] += area; acc[3] += mom; }
  };

  /** `interpolateAt(base xs, base depths, x)`, forming only the depths it reads. */
  const baseAt = (x: number, V: Float64Array) => {
    if (x <= bx[0]) {
      if (x < bx[0]) return dot(CB, 0, V);
      let i = 0;
      while (i + 1 < nb && bx[i + 1] === bx[0]) i++;
      return dot(CB, i * K, V);
    }
    if (x >= bx[nb - 1]) return dot(CB, (nb - 1) * K, V);
    const i = segmentIndex(bx, x);
    const x0 = bx[i];
    const x1 = bx[i + 1];
    if (x1 === x0) return dot(CB, (i + 1) * K, V);
    const w = (x - x0) / (x1 - x0);
    const z0 = dot(CB, i * K, V);
    return z0 + w * (dot(CB, (i + 1) * K, V) - z0);
  };

  const core = (V: Float64Array, out: { heightM: number; areaM2: number; volumeM3: number }) => {
    // crest
    let zmin = Infinity;
    for (let c = 0; c < crestRows.length; c++) { const z = dot(C, crestRows[c], V); crestZ[c] = z; if (z < zmin) zmin = z; }
    const eps = 1e-9 * Math.abs(zmin); // same rule as crestOf (buildup.ts)
    let xlo = Infinity, xhi = -Infinity;
    for (let c = 0; c < crestRows.length; c++) {
      if (crestZ[c] <= zmin + eps) { if (crestX[c] < xlo) xlo = crestX[c]; if (crestX[c] > xhi) xhi = crestX[c]; }
    }
    const xc = (xlo + xhi) / 2;
    out.heightM = baseAt(xc, V) - zmin;
    // area and moments: linear sums plus complex intervals
    acc[0] = dot(aL, 0, V); acc[1] = dot(aR, 0, V); acc[2] = dot(mL, 0, V); acc[3] = dot(mR, 0, V);
    let o = 0;
    for (let q = 0; q < cxN.length; q++) {
      const xa = cxXs[2 * q];
      const xb = cxXs[2 * q + 1];
      const bl = dot(cxC, o, V);
      const br = dot(cxC, o + K, V);
      o += 2 * K;
      const m = cxN[q];
      let argL = 0;
      for (let c = 0; c < m; c++) {
        cl[c] = dot(cxC, o, V);
        cr[c] = dot(cxC, o + K, V);
        o += 2 * K;
        if (cl[c] < cl[argL] || (cl[c] === cl[argL] && cr[c] < cr[argL])) argL = c;
      }
      // lower envelope of the candidate lines on [xa, xb], integrated against the straight base
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
            addTrap(x0, xc, h0, hc, xc);
            addTrap(xc, x1, hc, h1, xc);
          } else addTrap(x0, x1, h0, h1, xc);
        }
        if (nxt < 0 || best >= 1) break;
        s = best;
        cur = nxt;
      }
    }
    const dxc = xc - xref;
    const momLeft = dxc * acc[0] - acc[2];
    const momRight = acc[3] - dxc * acc[1];
    out.areaM2 = acc[0] + acc[1];
    out.volumeM3 = Math.PI * (momLeft + momRight);
  };
  const Vd = new Float64Array(K);
  const one = { heightM: 0, areaM2: 0, volumeM3: 0 };

  return {
    complexIntervals: cxN.length,
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

/**
 * One flank's preallocated data for the per-draw angle: x, x steps squared,
 * the depth coefficients that vary along the flank (one array per velocity,
 * read sequentially), the ones that do not (e.g. the water layer above a
 * flank below the seafloor) as single numbers, and scratch for the
 * cumulative arc length and the resampled points.
 */
interface FlankScratch {
  n: number;
  xs: Float64Array;
  dxx: Float64Array;
  /** Velocities with a constant coefficient along the flank, and that coefficient. */
  constK: Int32Array;
  constC: Float64Array;
  /** Velocities whose coefficient varies, and the coefficient per vertex. */
  varK: Int32Array;
  varC: Float64Array[];
  z: Float64Array;
  cum: Float64Array;
  /** Segment of each sample in the previous draw: the starting guess of the next. */
  hint: Int32Array;
  sx: Float64Array;
  sz: Float64Array;
}

function flankScratch(xs: Float64Array, C: Float64Array, row0: number, K: number): FlankScratch {
  const n = xs.length;
  const dxx = new Float64Array(n);
  for (let i = 1; i < n; i++) {
    const dx = xs[i] - xs[i - 1];
    dxx[i] = dx * dx;
  }
  const constK: number[] = [];
  const constC: number[] = [];
  const varK: number[] = [];
  const varC: Float64Array[] = [];
  for (let k = 0; k < K; k++) {
    const col = new Float64Array(n);
    let same = true;
    for (let i = 0; i < n; i++) {
      col[i] = C[(row0 + i) * K + k];
      if (!Object.is(col[i], col[0])) same = false;
    }
    if (same) { constK.push(k); constC.push(col[0]); }
    else { varK.push(k); varC.push(col); }
  }
  return {
    n, xs, dxx,
    constK: Int32Array.from(constK), constC: Float64Array.from(constC),
    varK: Int32Array.from(varK), varC,
    z: new Float64Array(n), cum: new Float64Array(n), hint: new Int32Array(FLANK_SAMPLES), sx: new Float64Array(FLANK_SAMPLES), sz: new Float64Array(FLANK_SAMPLES),
  };
}

/** The constant part of the flank's depths for velocities V. */
function constantDepth(f: FlankScratch, V: Float64Array): number {
  let a = 0;
  for (let j = 0; j < f.constK.length; j++) a += f.constC[j] * V[f.constK[j]];
  return a;
}

/**
 * Depth of vertex i: the constant part plus the varying terms in velocity
 * order — the same sums as the arc-length loops below, so the same bits.
 */
function depthAt(f: FlankScratch, a: number, V: Float64Array, i: number): number {
  let z = a;
  for (let j = 0; j < f.varK.length; j++) z += f.varC[j][i] * V[f.varK[j]];
  return z;
}

/**
 * Cumulative arc length of the flank for velocities V (depths z = a + Σ
 * varying terms, summed like `depthAt`); returns the total. When the
 * constant coefficients come first in velocity order (as for the water
 * layer of the `buildup` model) the depths are bit-for-bit Σ_k C_k·V_k.
 */
function arcLength(f: FlankScratch, a: number, V: Float64Array): number {
  const n = f.n, z = f.z, cum = f.cum, dxx = f.dxx;
  const nv = f.varK.length;
  cum[0] = 0;
  let c = 0;
  if (nv === 1) {
    const c0 = f.varC[0];
    const v0 = V[f.varK[0]];
    let zp = a + c0[0] * v0;
    z[0] = zp;
    for (let i = 1; i < n; i++) {
      const zi = a + c0[i] * v0;
      const dz = zi - zp;
      c += Math.sqrt(dxx[i] + dz * dz);
      z[i] = zi;
      cum[i] = c;
      zp = zi;
    }
  } else if (nv === 2) {
    const c0 = f.varC[0], c1 = f.varC[1];
    const v0 = V[f.varK[0]], v1 = V[f.varK[1]];
    let zp = a + c0[0] * v0 + c1[0] * v1;
    z[0] = zp;
    for (let i = 1; i < n; i++) {
      const zi = a + c0[i] * v0 + c1[i] * v1;
      const dz = zi - zp;
      c += Math.sqrt(dxx[i] + dz * dz);
      z[i] = zi;
      cum[i] = c;
      zp = zi;
    }
  } else if (nv === 3) {
    const c0 = f.varC[0], c1 = f.varC[1], c2 = f.varC[2];
    const v0 = V[f.varK[0]], v1 = V[f.varK[1]], v2 = V[f.varK[2]];
    let zp = a + c0[0] * v0 + c1[0] * v1 + c2[0] * v2;
    z[0] = zp;
    for (let i = 1; i < n; i++) {
      const zi = a + c0[i] * v0 + c1[i] * v1 + c2[i] * v2;
      const dz = zi - zp;
      c += Math.sqrt(dxx[i] + dz * dz);
      z[i] = zi;
      cum[i] = c;
      zp = zi;
    }
  } else {
    let zp = depthAt(f, a, V, 0);
    z[0] = zp;
    for (let i = 1; i < n; i++) {
      const zi = depthAt(f, a, V, i);
      const dz = zi - zp;
      c += Math.sqrt(dxx[i] + dz * dz);
      z[i] = zi;
      cum[i] = c;
      zp = zi;
    }
  }
  return c;
}

/**
 * The segment a sample at arc length s falls on: the smallest j in
 * [lo, last] with j = last or cum[j + 1] ≥ s (the one the forward scan of
 * `flankAngles` stops at; the condition is monotone in j because cum is
 * non-decreasing). Starts from a guess (the previous draw's segment, which
 * rarely moves between draws) and walks a few steps, then bisects.
 */
function segmentOf(cum: Float64Array, s: number, lo: number, last: number, guess: number): number {
  let j = guess < lo ? lo : guess > last ? last : guess;
  if (j < last && cum[j + 1] < s) {
    // condition false at j: move up
    for (let step = 0; step < 8; step++) {
      j++;
      if (j === last || cum[j + 1] >= s) return j;
    }
    let a = j + 1; // false below a
    let b = last; // true at b
    while (a < b) {
      const mid = (a + b) >> 1;
      if (cum[mid + 1] < s) a = mid + 1;
      else b = mid;
    }
    return b;
  }
  // condition true at j: move down while it holds at j − 1
  for (let step = 0; step < 8; step++) {
    if (j === lo || cum[j] < s) return j;
    j--;
  }
  if (j === lo || cum[j] < s) return j;
  let a = lo; // search [lo, j] for the first true
  let b = j;
  while (a < b) {
    const mid = (a + b) >> 1;
    if (mid === last || cum[mid + 1] >= s) b = mid;
    else a = mid + 1;
  }
  return b;
}

/**
 * Flank angle for one velocity set V: the same arithmetic as `flankAngles`
 * (cumulative arc length, FLANK_SAMPLES equal-arc-length points, two-pass
 * orthogonal regression) on the depths above, so it equals
 * `flankAngles(xs, depths).flankAngleDeg` (bit for bit when the depths are);
 * NaN where that is null. The steepest segment is not computed (the ranges
 * do not report it), and each sample's segment is found by `segmentOf`
 * from the segment it fell on in the previous draw.
 */
function flankAngleOfDraw(f: FlankScratch, V: Float64Array): number {
  const n = f.n;
  if (n < 2) return NaN;
  const a = constantDepth(f, V);
  const total = arcLength(f, a, V);
  if (!(total > 0)) return NaN;
  const xs = f.xs, z = f.z, cum = f.cum, hint = f.hint, sx = f.sx, sz = f.sz;
  const m = FLANK_SAMPLES;
  const last = n - 2;
  let seg = 0;
  let mx = 0;
  let mz = 0;
  for (let k = 0; k < m; k++) {
    const s = k === m - 1 ? total : (total * k) / (m - 1);
    seg = segmentOf(cum, s, seg, last, hint[k]);
    hint[k] = seg;
    const len = cum[seg + 1] - cum[seg];
    const t = len > 0 ? (s - cum[seg]) / len : 0;
    const x = xs[seg] + t * (xs[seg + 1] - xs[seg]);
    const zz = z[seg] + t * (z[seg + 1] - z[seg]);
    sx[k] = x;
    sz[k] = zz;
    mx += x;
    mz += zz;
  }
  mx /= m;
  mz /= m;
  let sxx = 0, szz = 0, sxz = 0;
  for (let k = 0; k < m; k++) {
    const dx = sx[k] - mx;
    const dz = sz[k] - mz;
    sxx += dx * dx;
    szz += dz * dz;
    sxz += dx * dz;
  }
  // major axis of the covariance (orthogonal regression), folded to 0–90° below horizontal
  const theta = Math.abs(0.5 * Math.atan2(2 * sxz, sxx - szz)) * DEG;
  return theta > 90 ? 180 - theta : theta;
}
