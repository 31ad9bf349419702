// numpy's band RMS of a baseline file's density: √(Σ psd[k]·Δf) over the bins whose centre lies in [lo, hi]
// (the reference for the report's baseline figures).
import type { Python } from '../wav/support.ts';

export function numpyBandRms(py: Python, baselineFile: string, bands: (string | number)[][]): Promise<number[]> {
  return py.run<number[]>(
    `import json as j
b = j.load(open(args[0]))
out = []
for ch, lo, hi in args[1]:
    psd = np.array(next(c for c in b['channels'] if c['name'] == ch)['psd'])
    k = np.arange(len(psd)) * b['binHz']
    out.append(float(np.sqrt(psd[(k >= lo) & (k <= hi)].sum() * b['binHz'])))
result = out`,
    baselineFile,
    bands,
  );
}
