// 1/f corner of a noise density: fit S(f) = e_w²·(1 + (f_c/f)^α) to averaged spectral estimates by weighted
// least squares in log space. Each estimate with ν degrees of freedom is Ŝ = S·χ²_ν/ν, so
//   ln Ŝ − [ψ(ν/2) − ln(ν/2)]  has mean ln S and variance ψ'(ν/2)
// (the log-chi-square moments; e.g. Percival & Walden 1993, "Spectral Analysis for Physical Applications",
// section on the log spectrum). Levenberg–Marquardt on the parameters a = ln e_w², b = ln f_c, α; the
// uncertainties come from the inverse normal matrix with these known variances (absolute sigma).
import { digamma, trigamma } from '../special/polygamma.ts';
import { invertSmall, solveSmall } from '../linalg/small-linear.ts';

export interface CornerFitInput {
  frequency: ArrayLike<number>;
  psd: ArrayLike<number>;
  /** Degrees of freedom of each estimate: 2 × equivalent averages. */
  dof: ArrayLike<number>;
}

export interface CornerFitOptions {
  /** Fit range, Hz (inclusive). Default: every point given. */
  minFrequency?: number;
  maxFrequency?: number;
  /** Fix α (default 1, the plain 1/f model) or pass 'free' to fit it. */
  exponent?: number | 'free';
  maxIterations?: number;
  /** Where to start (ln e_w², ln f_c, α), e.g. a fit of nearly the same points; default: read off the data. */
  start?: { a: number; b: number; alpha: number };
}

export interface CornerFit {
  /** White density e_w (unit/√Hz) and its standard uncertainty. */
  whiteAsd: number;
  whiteAsdSigma: number;
  /** e_w² (unit²/Hz). */
  whitePsd: number;
  /** Corner frequency f_c (Hz), where the 1/f part equals the white part, and its uncertainty. */
  corner: number;
  cornerSigma: number;
  /** Exponent α and its uncertainty (0 when fixed). */
  exponent: number;
  exponentSigma: number;
  exponentFree: boolean;
  /** Covariance of (ln e_w², ln f_c[, α]). */
  covariance: Float64Array;
  /** Σ residual²/variance and that divided by (points − parameters): ≈ 1 when the model fits. */
  chiSquare: number;
  reducedChiSquare: number;
  points: number;
  converged: boolean;
  iterations: number;
}

/** Bias of ln(χ²_ν/ν): E = ψ(ν/2) − ln(ν/2). */
export function logChiSquareBias(dof: number): number {
  return digamma(dof / 2) - Math.log(dof / 2);
}

/** Variance of ln(χ²_ν/ν): ψ'(ν/2). */
export function logChiSquareVariance(dof: number): number {
  return trigamma(dof / 2);
}

/** ln(1 + e^z) without overflow. */
function softplus(z: number): number {
  return z > 0 ? z + Math.log1p(Math.exp(-z)) : Math.log1p(Math.exp(z));
}

function sigmoid(z: number): number {
  return z >= 0 ? 1 / (1 + Math.exp(-z)) : Math.exp(z) / (1 + Math.exp(z));
}

/** Model in log space: ln S = a + ln(1 + exp(α·(b − ln f))). */
export function logCornerModel(lnF: number, a: number, b: number, alpha: number): number {
  return a + softplus(alpha * (b - lnF));
}

export function fitCorner(input: CornerFitInput, options: CornerFitOptions = {}): CornerFit {
  const lo = options.minFrequency ?? 0;
  const hi = options.maxFrequency ?? Infinity;
  const free = options.exponent === 'free';
  const given = options.exponent ?? 1;
  const fixedAlpha = typeof given === 'number' ? given : 1;
  if (!free && !(typeof given === 'number' && given > 0 && Number.isFinite(given))) {
    throw new RangeError(`corner fit: exponent must be a positive number or 'free', got ${String(options.exponent)}`);
  }
  const n = input.frequency.length;
  if (input.psd.length !== n || input.dof.length !== n) {
    throw new RangeError('corner fit: frequency, psd and dof must have the same length');
  }
  const lnF: number[] = [];
  const y: number[] = [];
  const wt: number[] = [];
  for (let i = 0; i < n; i++) {
    const f = input.frequency[i];
    const s = input.psd[i];
    const nu = input.dof[i];
    if (!(f >= lo && f <= hi) || !(f > 0)) continue;
    if (!(s > 0) || !(nu > 0)) continue; // a zero or missing estimate carries no log-space information
    lnF.push(Math.log(f));
    y.push(Math.log(s) - logChiSquareBias(nu));
    wt.push(1 / logChiSquareVariance(nu));
  }
  const p = free ? 3 : 2;
  const m = lnF.length;
  if (m < p + 2) {
    throw new RangeError(
      `corner fit: ${m} usable points in ${lo}–${hi} Hz, need at least ${p + 2}; widen the fit range or estimate more frequencies`,
    );
  }
  // Start: white level from the top quarter of the range, corner where the level is twice that, α = 1.
  const order = lnF.map((_, i) => i).sort((i, j) => lnF[i] - lnF[j]);
  const top = order.slice(Math.floor((3 * m) / 4));
  let a = 0;
  let wsum = 0;
  for (const i of top) {
    a += wt[i] * y[i];
    wsum += wt[i];
  }
  a /= wsum;
  let b = lnF[order[0]];
  for (const i of order) {
    if (y[i] - a < Math.log(2)) {
      b = lnF[i];
      break;
    }
  }
  let alpha: number = fixedAlpha;
  const st = options.start;
  if (st && Number.isFinite(st.a) && Number.isFinite(st.b) && (!free || (Number.isFinite(st.alpha) && st.alpha > 0))) {
    a = st.a;
    b = st.b;
    if (free) alpha = st.alpha;
  }
  const chi2 = (pa: number, pb: number, pal: number): number => {
    let s = 0;
    for (let i = 0; i < m; i++) {
      const r = y[i] - logCornerModel(lnF[i], pa, pb, pal);
      s += wt[i] * r * r;
    }
    return s;
  };
  // One exponential per point gives both the model (softplus) and its slope (sigmoid): the same formulas as
  // softplus() and sigmoid() with e = exp(−|z|), so the values are bit-identical to calling them apart.
  const jtj = new Float64Array(p * p);
  const jtr = new Float64Array(p);
  const g = new Float64Array(p);
  const normal = (pa: number, pb: number, pal: number): { jtj: Float64Array; jtr: Float64Array } => {
    jtj.fill(0);
    jtr.fill(0);
    for (let i = 0; i < m; i++) {
      const d = pb - lnF[i];
      const z = pal * d;
      const e = Math.exp(-Math.abs(z));
      const sg = z >= 0 ? 1 / (1 + e) : e / (1 + e);
      const sp = z > 0 ? z + Math.log1p(e) : Math.log1p(e);
      g[0] = 1;
      g[1] = pal * sg;
      if (free) g[2] = d * sg;
      const r = y[i] - (pa + sp);
      for (let u = 0; u < p; u++) {
        jtr[u] += wt[i] * g[u] * r;
        for (let v = 0; v < p; v++) jtj[u * p + v] += wt[i] * g[u] * g[v];
      }
    }
    return { jtj, jtr };
  };
  let cost = chi2(a, b, alpha);
  let lambda = 1e-3;
  let converged = false;
  let it = 0;
  const maxIt = options.maxIterations ?? 200;
  for (; it < maxIt && !converged; it++) {
    const { jtj, jtr } = normal(a, b, alpha);
    let accepted = false;
    for (let tries = 0; tries < 30 && !accepted; tries++) {
      const damped = Float64Array.from(jtj);
      for (let u = 0; u < p; u++) damped[u * p + u] *= 1 + lambda;
      const step = solveSmall(damped, jtr, p);
      if (!step) {
        lambda *= 10;
        continue;
      }
      const na = a + step[0];
      const nb = b + step[1];
      const nal = free ? alpha + step[2] : alpha;
      const nc = chi2(na, nb, nal);
      if (Number.isFinite(nc) && nc <= cost) {
        const small =
          Math.abs(step[0]) < 1e-12 + 1e-10 * Math.abs(na) &&
          Math.abs(step[1]) < 1e-12 + 1e-10 * Math.abs(nb) &&
          (!free || Math.abs(step[2]) < 1e-12 + 1e-10 * Math.abs(nal));
        converged = small || cost - nc <= 1e-14 * cost;
        a = na;
        b = nb;
        alpha = nal;
        cost = nc;
        lambda = Math.max(lambda / 10, 1e-12);
        accepted = true;
      } else {
        lambda *= 10;
      }
    }
    if (!accepted) {
      converged = true; // no downhill step exists at working precision: a minimum
      break;
    }
  }
  const cov = invertSmall(normal(a, b, alpha).jtj, p) ?? new Float64Array(p * p).fill(NaN);
  const whitePsd = Math.exp(a);
  const whiteAsd = Math.exp(a / 2);
  const corner = Math.exp(b);
  return {
    whiteAsd,
    whiteAsdSigma: (whiteAsd * Math.sqrt(cov[0])) / 2,
    whitePsd,
    corner,
    cornerSigma: corner * Math.sqrt(cov[p + 1]),
    exponent: alpha,
    exponentSigma: free ? Math.sqrt(cov[2 * p + 2]) : 0,
    exponentFree: free,
    covariance: cov,
    chiSquare: cost,
    reducedChiSquare: cost / (m - p),
    points: m,
    converged,
    iterations: it,
  };
}
