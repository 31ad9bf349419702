declare module '@stdlib/stats-base-dists-f-quantile' {
  /** Quantile of the F distribution with d1, d2 degrees of freedom. */
  export default function quantile(p: number, d1: number, d2: number): number;
}
declare module '@stdlib/stats-base-dists-chisquare-quantile' {
  /** Quantile of the chi-squared distribution with k degrees of freedom. */
  export default function quantile(p: number, k: number): number;
}
