// Every averaging mode against numpy applied to scipy.signal.spectrogram's per-segment one-sided densities
// (spectrogram(x, fs, window, nperseg, noverlap, detrend, scaling='density', mode='psd') uses the same segments
// and scaling as welch). numpy: mean of the last K rows; an exponential average row by row; the bin-wise max.
// Medians: scipy.signal.welch(average='median') over exactly the samples of the segments averaged (public API),
// and the median bias from its published formula: for the median of n independent χ²₂ (exponential) values,
// E[median]/E[value] = Σ_{l=1..n} (−1)^(l+1)/l for odd n (Allen, Anderson, Brady, Brown, Creighton, "FINDCHIRP",
// Phys. Rev. D 85, 122006 (2012), Appendix B); an even n takes the mean of the two middle values and uses the
// bias of n − 1, as scipy.signal.welch documents it does. Python runs once per file (child_process).
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import type { AveragingSpec } from '../../protocol/settings.ts';
import { medianBias } from '../../dsp/averaging.ts';
import { WelchEstimator } from '../../dsp/welch.ts';

const FS = 500;
const SEGMENT = 128;
const OVERLAP = 0.5;
const SAMPLES = 128 + 64 * 40 + 17; // 41 segments and a leftover
const K = 12;
const TAU = 0.9;

const script = `
import json, numpy as np
from scipy.signal import spectrogram, get_window, welch
def median_bias(n):
    m = n if n % 2 == 1 else n - 1
    return sum((-1)**(l + 1) / l for l in range(1, m + 1))
rng = np.random.default_rng(7)
n = ${SAMPLES}
x = rng.standard_normal(n) + 0.3*np.sin(2*np.pi*61.3*np.arange(n)/${FS}) + 0.1
f, t, S = spectrogram(x, fs=${FS}, window=get_window('hann', ${SEGMENT}), nperseg=${SEGMENT}, noverlap=${SEGMENT / 2},
                      detrend='constant', scaling='density', mode='psd')
rows = S.T
alpha = 1 - np.exp(-(${SEGMENT} - ${SEGMENT / 2}) / ${FS} / ${TAU})
ema = rows[0].copy()
for r in rows[1:]:
    ema = ema + alpha*(r - ema)
out = dict(x=x.tolist(), segments=len(rows), mean=rows.mean(axis=0).tolist(),
           rolling=rows[-${K}:].mean(axis=0).tolist(),
           median=welch(x[(len(rows) - ${K})*${SEGMENT / 2}:(len(rows) - 1)*${SEGMENT / 2} + ${SEGMENT}], fs=${FS},
                        window='hann', nperseg=${SEGMENT}, noverlap=${SEGMENT / 2}, detrend='constant',
                        scaling='density', average='median')[1].tolist(),
           median_all=welch(x, fs=${FS}, window='hann', nperseg=${SEGMENT}, noverlap=${SEGMENT / 2},
                            detrend='constant', scaling='density', average='median')[1].tolist(),
           exponential=ema.tolist(), max=rows.max(axis=0).tolist(),
           bias=[median_bias(m) for m in range(1, 40)])
print(json.dumps(out))
`;
const ref = JSON.parse(execFileSync('python3', ['-c', script], { encoding: 'utf8', maxBuffer: 1 << 26 })) as Record<
  string,
  number[]
> & { segments: number };
const x = Float64Array.from(ref.x);

function run(averaging: AveragingSpec): Float64Array {
  const est = new WelchEstimator({
    sampleRate: FS,
    segment: SEGMENT,
    window: 'hann',
    overlap: OVERLAP,
    detrend: 'mean',
    averaging,
  });
  est.push(x);
  expect(est.segmentsTotal).toBe(ref.segments);
  return est.psd();
}

function expectClose(ours: Float64Array, theirs: number[]): void {
  let worst = 0;
  for (let k = 0; k < theirs.length; k++) worst = Math.max(worst, Math.abs(ours[k] - theirs[k]) / theirs[k]);
  expect(worst).toBeLessThan(1e-9);
}

describe('averaging modes match numpy over scipy.signal.spectrogram segments', () => {
  it('mean of all segments', () => expectClose(run({ mode: 'mean' }), ref.mean));
  it(`rolling mean of the last ${K}`, () => expectClose(run({ mode: 'rolling', count: K }), ref.rolling));
  it(`median of the last ${K}, debiased as scipy.signal.welch(average='median')`, () =>
    expectClose(run({ mode: 'median', count: K }), ref.median));
  it("median of all segments (odd count), as scipy.signal.welch(average='median')", () =>
    expectClose(run({ mode: 'median', count: 64 }), ref.median_all));
  it(`exponential with τ = ${TAU} s of sample time`, () =>
    expectClose(run({ mode: 'exponential', tauSeconds: TAU }), ref.exponential));
  it('max-hold', () => expectClose(run({ mode: 'max' }), ref.max));
  it('medianBias follows the published series (Allen et al. 2012, Appendix B) for 1..39', () => {
    for (let m = 1; m < 40; m++) expect(medianBias(m)).toBeCloseTo(ref.bias[m - 1], 14);
    // Known values of that series: 1 for a single value, 1 − 1/2 + 1/3 = 5/6 for three, and the limit ln 2
    // (the median of an exponential distribution over its mean) for many.
    expect(medianBias(1)).toBe(1);
    expect(medianBias(3)).toBeCloseTo(5 / 6, 15);
    expect(Math.abs(medianBias(100001) - Math.LN2)).toBeLessThan(1e-5);
  });
});
