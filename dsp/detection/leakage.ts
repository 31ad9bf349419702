// How far a line's energy leaks: the worst-case ratio of the window's power response d bins from a line to the
// response at the line's peak bin, L(d) = max_{|δ|≤½} |W(d+δ)|² / min_{|δ|≤½} |W(δ)|², W the window's DTFT in
// bins. A line whose peak bin reads P leaks at most P·L(d) into a bin d away (spectral leakage, Harris 1978).
// The DTFT is evaluated on the window decimated to at most 512 samples: for offsets of a few dozen bins the
// response of a smooth window is unchanged by that.

const DECIMATED = 512;
const OFFSETS = 11;

export function leakageEnvelope(window: ArrayLike<number>, maxBins: number): Float64Array {
  const n = window.length;
  if (n < 8) throw new RangeError(`leakageEnvelope: window needs at least 8 samples, got ${n}`);
  if (!Number.isInteger(maxBins) || maxBins < 1)
    throw new RangeError(`leakageEnvelope: maxBins must be a positive integer, got ${maxBins}`);
  const stride = Math.max(1, Math.floor(n / DECIMATED));
  const m = Math.floor(n / stride);
  const w = new Float64Array(m);
  for (let i = 0; i < m; i++) w[i] = window[i * stride];
  const power = (bins: number): number => {
    let re = 0;
    let im = 0;
    const step = (2 * Math.PI * bins) / m;
    for (let i = 0; i < m; i++) {
      re += w[i] * Math.cos(step * i);
      im -= w[i] * Math.sin(step * i);
    }
    return re * re + im * im;
  };
  let peakMin = Infinity;
  for (let j = 0; j < OFFSETS; j++) peakMin = Math.min(peakMin, power(-0.5 + j / (OFFSETS - 1)));
  const out = new Float64Array(maxBins + 1);
  for (let d = 0; d <= maxBins; d++) {
    let worst = 0;
    for (let j = 0; j < OFFSETS; j++) worst = Math.max(worst, power(d - 0.5 + j / (OFFSETS - 1)));
    out[d] = worst / peakMin;
  }
  return out;
}
