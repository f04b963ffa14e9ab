/**
 * Downhill simplex minimisation — Nelder & Mead (1965), "A simplex method for
 * function minimization", *The Computer Journal* 7(4), 308–313: reflection
 * (α = 1), expansion (γ = 2), contraction (β = ½) and, when contraction
 * fails, shrinking every vertex halfway towards the best one. Stops when the
 * spread of the function values over the simplex falls below `fTol` and its
 * largest edge from the best vertex below `xTol`, or after `maxIterations`.
 *
 * Written here because the npm package `fmin` (0.0.4) declares
 * `"type": "module"` but ships a UMD build as its entry, which Node cannot
 * import as ES module.
 */
export interface NelderMeadOptions {
  /** Initial step per coordinate (default 0.1, or 5 % of a non-zero start value, whichever is larger). */
  step?: number | number[];
  maxIterations?: number;
  fTol?: number;
  xTol?: number;
}

export interface NelderMeadResult {
  x: number[];
  fx: number;
  iterations: number;
  evaluations: number;
  converged: boolean;
}

export function nelderMead(f: (x: number[]) => number, x0: readonly number[], o: NelderMeadOptions = {}): NelderMeadResult {
  const n = x0.length;
  const maxIt = o.maxIterations ?? 200 * n;
  const fTol = o.fTol ?? 1e-10;
  const xTol = o.xTol ?? 1e-8;
  let evaluations = 0;
  const F = (x: number[]) => {
    evaluations++;
    const v = f(x);
    return Number.isNaN(v) ? Infinity : v;
  };
  const stepOf = (i: number) => {
    if (Array.isArray(o.step)) return o.step[i];
    if (typeof o.step === 'number') return o.step;
    return Math.max(0.1, Math.abs(x0[i]) * 0.05);
  };
  const simplex: { x: number[]; fx: number }[] = [{ x: [...x0], fx: F([...x0]) }];
  for (let i = 0; i < n; i++) {
    const x = [...x0];
    x[i] += stepOf(i);
    simplex.push({ x, fx: F(x) });
  }
  const combine = (a: number[], b: number[], t: number) => a.map((ai, i) => ai + t * (b[i] - ai));
  let it = 0;
  let converged = false;
  for (; it < maxIt; it++) {
    simplex.sort((a, b) => a.fx - b.fx);
    const best = simplex[0];
    const worst = simplex[n];
    let size = 0;
    for (let j = 1; j <= n; j++) for (let i = 0; i < n; i++) size = Math.max(size, Math.abs(simplex[j].x[i] - best.x[i]));
    if (Math.abs(worst.fx - best.fx) <= fTol && size <= xTol) {
      converged = true;
      break;
    }
    const centroid = new Array(n).fill(0);
    for (let j = 0; j < n; j++) for (let i = 0; i < n; i++) centroid[i] += simplex[j].x[i] / n;
    // reflection: xr = c + α(c − xw)
    const xr = combine(centroid, worst.x, -1);
    const fr = F(xr);
    if (fr < best.fx) {
      // expansion: xe = c + γ(xr − c)
      const xe = combine(centroid, xr, 2);
      const fe = F(xe);
      simplex[n] = fe < fr ? { x: xe, fx: fe } : { x: xr, fx: fr };
      continue;
    }
    if (fr < simplex[n - 1].fx) {
      simplex[n] = { x: xr, fx: fr };
      continue;
    }
    // contraction towards the better of the worst and the reflected point
    const outside = fr < worst.fx;
    const xc = outside ? combine(centroid, xr, 0.5) : combine(centroid, worst.x, 0.5);
    const fc = F(xc);
    if (fc < (outside ? fr : worst.fx)) {
      simplex[n] = { x: xc, fx: fc };
      continue;
    }
    // shrink towards the best vertex
    for (let j = 1; j <= n; j++) {
      const x = combine(best.x, simplex[j].x, 0.5);
      simplex[j] = { x, fx: F(x) };
    }
  }
  simplex.sort((a, b) => a.fx - b.fx);
  return { x: simplex[0].x, fx: simplex[0].fx, iterations: it, evaluations, converged };
}
