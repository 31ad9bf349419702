// Helpers for the analyze suites: run the built CLI, and scipy.signal.welch on scipy.io.wavfile's samples as the
// outside reference for `analyze --json`.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { root, type Python } from '../wav/support.ts';
import { floorline } from '../support/cli.ts';

export interface CliResult {
  status: number | null;
  stdout: string;
  stderr: string;
}

export function runCli(...args: string[]): CliResult {
  if (!existsSync(join(root, 'dist/floorline.mjs')))
    throw new Error('dist/floorline.mjs is missing: run `npm run build` before these tests');
  const r = floorline(args, { timeout: 0 });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

export interface WelchReference {
  rate: number;
  samples: number;
  averages: number;
  nenbw: number;
  f: number[];
  psd: number[][];
  rms: number[];
  bands: number[][];
}

export interface ReferenceSettings {
  segment: number;
  /** scipy.signal.get_window name: hann, boxcar, blackmanharris, ... */
  scipyWindow: string;
  overlap: number;
  /** scipy detrend: 'constant' | 'linear' | false */
  detrend: string | false;
  bands: [number, number][];
  scale?: number;
}

// scipy.io.wavfile.read → float64 in full-scale units (int16 / 2^15; 24- and 32-bit arrive as int32, / 2^31),
// times scale; then scipy.signal.welch(scaling='density'), its segment count from scipy.signal.spectrogram, NENBW
// N·Σw²/(Σw)² of scipy.signal.get_window, and total/band RMS by the docs/ARCHITECTURE.md rule in numpy.
const WELCH_REFERENCE = String.raw`
import math
path, o = args
r, d = wavfile.read(path)
d = d.reshape(d.shape[0], -1)
full = {"int16": 32768.0, "int32": 2.0**31, "float32": 1.0, "float64": 1.0}[str(d.dtype)]
x = d.astype(np.float64) / full * o.get("scale", 1.0)
N = o["segment"]; nover = int(math.floor(o["overlap"] * N))
f, p = signal.welch(x, fs=r, window=o["scipyWindow"], nperseg=N, noverlap=nover, detrend=o["detrend"], scaling="density", axis=0)
t = signal.spectrogram(x[:, 0], fs=r, window=o["scipyWindow"], nperseg=N, noverlap=nover)[1]
w = signal.get_window(o["scipyWindow"], N)
df = f[1] - f[0]
result = {"rate": int(r), "samples": int(d.shape[0]), "averages": len(t), "nenbw": float(N * np.sum(w**2) / np.sum(w)**2),
          "f": f.tolist(), "psd": [p[:, c].tolist() for c in range(p.shape[1])],
          "rms": [math.sqrt(np.sum(p[1:, c]) * df) for c in range(p.shape[1])],
          "bands": [[math.sqrt(np.sum(p[(f >= lo) & (f <= hi), c]) * df) for lo, hi in o["bands"]] for c in range(p.shape[1])]}
`;

export function welchReference(py: Python, path: string, settings: ReferenceSettings): Promise<WelchReference> {
  return py.run<WelchReference>(WELCH_REFERENCE, path, settings);
}

/** Bins above 1e-12 of the peak whose relative error exceeds 1e-6, and how many bins were compared. */
export function psdMismatch(ours: number[], ref: number[]): { bad: number; compared: number; worst: number } {
  const peak = Math.max(...ref);
  let bad = 0;
  let compared = 0;
  let worst = 0;
  for (let k = 0; k < ref.length; k++) {
    if (!(ref[k] > 1e-12 * peak)) continue;
    compared++;
    const rel = Math.abs(ours[k] - ref[k]) / ref[k];
    if (rel > worst) worst = rel;
    if (!(rel <= 1e-6)) bad++;
  }
  return { bad, compared, worst };
}
