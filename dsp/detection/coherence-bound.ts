// Significance bound of an estimated magnitude-squared coherence. For two independent Gaussian series, the MSC
// estimated from n independent segment averages exceeds x with probability (1 − x)^(n−1), so the level exceeded by
// chance with probability α is 1 − α^(1/(n−1)) (G. C. Carter, "Coherence and time delay estimation", Proc. IEEE 75(2),
// 1987; Bendat & Piersol, Random Data, ch. 9; both from memory). n is the overlap-corrected equivalent number of
// averages, fewer than the segments counted, so the bound errs high (fewer chance alarms).

/** The MSC two independent series exceed with probability α after n equivalent averages (1 when n ≤ 1). */
export function coherenceChanceBound(n: number, alpha: number): number {
  if (!(alpha > 0 && alpha < 1)) throw new RangeError(`coherenceChanceBound: alpha must lie in (0, 1), got ${alpha}`);
  if (!(n > 1)) return 1;
  return 1 - alpha ** (1 / (n - 1));
}
