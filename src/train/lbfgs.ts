/**
 * Limited-memory BFGS (Nocedal & Wright, "Numerical Optimization", 2nd ed.,
 * 2006: Algorithm 7.4, the two-loop recursion, inside Algorithm 7.5), with a
 * backtracking line search that accepts the first step meeting the Armijo
 * condition (their eq. 3.4, c1 = 1e-4). A pair (s, y) whose curvature s·y is
 * not positive is not kept, so the implicit inverse Hessian stays positive
 * definite. Written here rather than taken from a package: the objective is
 * a streamed pass over the shards (async), which general-purpose optimisers
 * on npm do not take, and the algorithm is short. Pure.
 */

export interface LbfgsOptions {
  /** Pairs kept (m). */
  memory?: number;
  /** At most this many iterations. */
  maxIterations?: number;
  /** Stop when ‖g‖ ≤ gtol · max(1, ‖x‖). */
  gtol?: number;
  /** Stop when the objective falls by less than ftol · max(1, |f|) in an iteration. */
  ftol?: number;
  /** Called after each iteration with its number and objective (for progress and per-epoch dev scores). */
  onIteration?: (iteration: number, f: number, x: Float64Array) => Promise<void> | void;
}

/** Objective value at x; writes the gradient into g. */
export type Objective = (x: Float64Array, g: Float64Array) => Promise<number> | number;

export interface LbfgsResult {
  x: Float64Array;
  f: number;
  iterations: number;
  evaluations: number;
  converged: 'gradient' | 'objective' | 'iterations' | 'line search';
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

export async function minimize(objective: Objective, x0: Float64Array, o: LbfgsOptions = {}): Promise<LbfgsResult> {
  const m = o.memory ?? 10;
  const maxIt = o.maxIterations ?? 100;
  const gtol = o.gtol ?? 1e-5;
  const ftol = o.ftol ?? 1e-10;
  const n = x0.length;
  let x = Float64Array.from(x0);
  let g = new Float64Array(n);
  let f = await objective(x, g);
  let evaluations = 1;
  const S: Float64Array[] = [];
  const Y: Float64Array[] = [];
  const rho: number[] = [];
  const d = new Float64Array(n);
  const alpha = new Float64Array(m);
  let xNew = new Float64Array(n);
  let gNew = new Float64Array(n);
  for (let it = 1; it <= maxIt; it++) {
    if (Math.sqrt(dot(g, g)) <= gtol * Math.max(1, Math.sqrt(dot(x, x)))) return { x, f, iterations: it - 1, evaluations, converged: 'gradient' };
    // Two-loop recursion: d = −H·g.
    for (let i = 0; i < n; i++) d[i] = -g[i];
    for (let k = S.length - 1; k >= 0; k--) {
      alpha[k] = rho[k] * dot(S[k], d);
      const yk = Y[k];
      for (let i = 0; i < n; i++) d[i] -= alpha[k] * yk[i];
    }
    const gamma = S.length > 0 ? dot(S[S.length - 1], Y[Y.length - 1]) / dot(Y[Y.length - 1], Y[Y.length - 1]) : 1 / Math.max(1e-12, Math.sqrt(dot(g, g)));
    for (let i = 0; i < n; i++) d[i] *= gamma;
    for (let k = 0; k < S.length; k++) {
      const beta = rho[k] * dot(Y[k], d);
      const sk = S[k];
      for (let i = 0; i < n; i++) d[i] += (alpha[k] - beta) * sk[i];
    }
    let slope = dot(g, d);
    if (slope >= 0) {
      // Not a descent direction (numerical trouble): restart from steepest descent.
      S.length = 0;
      Y.length = 0;
      rho.length = 0;
      for (let i = 0; i < n; i++) d[i] = -g[i] / Math.max(1e-12, Math.sqrt(dot(g, g)));
      slope = dot(g, d);
    }
    // Backtracking line search (Armijo).
    let step = 1;
    let fNew = Infinity;
    let accepted = false;
    for (let tries = 0; tries < 40; tries++) {
      for (let i = 0; i < n; i++) xNew[i] = x[i] + step * d[i];
      fNew = await objective(xNew, gNew);
      evaluations++;
      if (Number.isFinite(fNew) && fNew <= f + 1e-4 * step * slope) {
        accepted = true;
        break;
      }
      step *= 0.5;
    }
    if (!accepted) return { x, f, iterations: it - 1, evaluations, converged: 'line search' };
    const s = new Float64Array(n);
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      s[i] = xNew[i] - x[i];
      y[i] = gNew[i] - g[i];
    }
    const sy = dot(s, y);
    if (sy > 1e-12) {
      if (S.length === m) {
        S.shift();
        Y.shift();
        rho.shift();
      }
      S.push(s);
      Y.push(y);
      rho.push(1 / sy);
    }
    const fOld = f;
    [x, xNew] = [xNew, x];
    [g, gNew] = [gNew, g];
    f = fNew;
    await o.onIteration?.(it, f, x);
    if (fOld - f <= ftol * Math.max(1, Math.abs(f))) return { x, f, iterations: it, evaluations, converged: 'objective' };
  }
  return { x, f, iterations: maxIt, evaluations, converged: 'iterations' };
}
