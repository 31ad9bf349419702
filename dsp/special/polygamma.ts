// Digamma ψ(x) and trigamma ψ'(x) for x > 0: shift up by the recurrences ψ(x) = ψ(x+1) − 1/x,
// ψ'(x) = ψ'(x+1) + 1/x² until x ≥ 10, then the asymptotic series (Abramowitz & Stegun 6.3.18 and 6.4.12).
// Used for the statistics of log-spectra: for Ŝ = S·χ²_ν/ν, E[ln Ŝ] = ln S + ψ(ν/2) − ln(ν/2) and
// Var[ln Ŝ] = ψ'(ν/2).

export function digamma(x: number): number {
  if (!(x > 0)) throw new RangeError(`digamma: x must be positive, got ${x}`);
  let acc = 0;
  while (x < 10) {
    acc -= 1 / x;
    x += 1;
  }
  const r = 1 / (x * x);
  // ln x − 1/(2x) − Σ B_2k/(2k·x^2k)
  const series = r * (1 / 12 - r * (1 / 120 - r * (1 / 252 - r * (1 / 240 - r * (1 / 132)))));
  return acc + Math.log(x) - 0.5 / x - series;
}

export function trigamma(x: number): number {
  if (!(x > 0)) throw new RangeError(`trigamma: x must be positive, got ${x}`);
  let acc = 0;
  while (x < 10) {
    acc += 1 / (x * x);
    x += 1;
  }
  const r = 1 / (x * x);
  // 1/x + 1/(2x²) + Σ B_2k/x^(2k+1)
  const series = (1 / x) * r * (1 / 6 - r * (1 / 30 - r * (1 / 42 - r * (1 / 30 - r * (5 / 66)))));
  return acc + 1 / x + 0.5 * r + series;
}
