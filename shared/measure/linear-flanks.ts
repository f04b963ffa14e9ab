/**
 * Flank angles of the linearised Monte Carlo (linear-ranges.ts): a flank's
 * depths are z_i = Σ_k V_k · C_ik, so per draw only the arc length is
 * recomputed from preallocated coefficient columns; resampling and the
 * regression are the engine's own (flank.ts `resampleEqualArc`,
 * `majorAxisDipDeg`), so the angle equals `flankAngles(xs, depths)` bit for
 * bit when the depths are.
 */
import { FLANK_SAMPLES, majorAxisDipDeg, resampleEqualArc } from './flank';

/**
 * One flank's preallocated data for the per-draw angle: x, x steps squared,
 * the depth coefficients that vary along the flank (one array per velocity,
 * read sequentially), the ones that do not (e.g. the water layer above a
 * flank below the seafloor) as single numbers, and scratch for the
 * cumulative arc length and the resampled points.
 */
export interface FlankScratch {
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

export function flankScratch(xs: Float64Array, C: Float64Array, row0: number, K: number): FlankScratch {
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
 * Flank angle for one velocity set V: the engine's own arithmetic
 * (flank.ts `resampleEqualArc` at FLANK_SAMPLES equal-arc-length points,
 * `majorAxisDipDeg`) on the depths above, so it equals
 * `flankAngles(xs, depths).flankAngleDeg` (bit for bit when the depths are);
 * NaN where that is null. The steepest segment is not computed (the ranges
 * do not report it), and each sample's segment search starts from the
 * segment it fell on in the previous draw.
 */
export function flankAngleOfDraw(f: FlankScratch, V: Float64Array): number {
  if (f.n < 2) return NaN;
  const total = arcLength(f, constantDepth(f, V), V);
  if (!(total > 0)) return NaN;
  resampleEqualArc(f.xs, f.z, f.cum, f.n, total, f.sx, f.sz, f.hint);
  return majorAxisDipDeg(f.sx, f.sz);
}
