// Solving and inverting the small symmetric positive definite systems of a least-squares fit (2×2, 3×3) by
// Gaussian elimination with partial pivoting. Row-major arrays of n·n.

/** Solves A·x = b in place of a copy; returns undefined when A is singular to working precision. */
export function solveSmall(a: ArrayLike<number>, b: ArrayLike<number>, n: number): Float64Array | undefined {
  const m = new Float64Array(n * (n + 1));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) m[i * (n + 1) + j] = a[i * n + j];
    m[i * (n + 1) + n] = b[i];
  }
  const w = n + 1;
  let scale = 0;
  for (let i = 0; i < n * n; i++) scale = Math.max(scale, Math.abs(a[i]));
  for (let col = 0; col < n; col++) {
    let piv = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(m[r * w + col]) > Math.abs(m[piv * w + col])) piv = r;
    if (!(Math.abs(m[piv * w + col]) > 1e-14 * scale)) return undefined;
    if (piv !== col) {
      for (let j = 0; j < w; j++) {
        const t = m[col * w + j];
        m[col * w + j] = m[piv * w + j];
        m[piv * w + j] = t;
      }
    }
    for (let r = col + 1; r < n; r++) {
      const f = m[r * w + col] / m[col * w + col];
      for (let j = col; j < w; j++) m[r * w + j] -= f * m[col * w + j];
    }
  }
  const x = new Float64Array(n);
  for (let i = n - 1; i >= 0; i--) {
    let s = m[i * w + n];
    for (let j = i + 1; j < n; j++) s -= m[i * w + j] * x[j];
    x[i] = s / m[i * w + i];
  }
  return x;
}

/** Inverse of A (n×n), column by column; undefined when singular. */
export function invertSmall(a: ArrayLike<number>, n: number): Float64Array | undefined {
  const inv = new Float64Array(n * n);
  const e = new Float64Array(n);
  for (let c = 0; c < n; c++) {
    e.fill(0);
    e[c] = 1;
    const col = solveSmall(a, e, n);
    if (!col) return undefined;
    for (let r = 0; r < n; r++) inv[r * n + c] = col[r];
  }
  return inv;
}
