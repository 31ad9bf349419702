import { describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCli } from '../analyze/support.ts';
import { runPython } from './python.ts';

interface Fit {
  whiteAsd: number;
  whiteAsdSigma: number;
  corner: number;
  cornerSigma: number;
}
interface Report {
  sampleRate: number;
  samples: number;
  settings: { window: string; overlap: number; points: number };
  channels: {
    name: string;
    frequency: number[];
    psd: number[];
    segment: number[];
    averages: number[];
    rbwHz: number[];
    corner: { oneOverF: Fit | null };
    peakToPeak: { windows: { startSample: number; peakToPeak: number; rms: number }[]; windowSeconds: number };
  }[];
}

describe('floorline analyze --log-frequency', () => {
  it(
    'reports the log-frequency density, the 1/f corner and the 0.1–10 Hz figures of a float WAV, each checked outside',
    { timeout: 180_000 },
    () => {
      const dir = mkdtempSync(join(tmpdir(), 'floorline-logf-'));
      try {
        const path = join(dir, 'flicker.wav');
        const fs = 200;
        const sigma = 1e-6;
        const corner = 2;
        // 1/f + white by FFT shaping with numpy (one-sided density 2σ²/fs·(1 + fc/f)), written by scipy.io.wavfile as float32.
        runPython(
          `
from scipy.io import wavfile
rng = np.random.default_rng(404)
n = 1 << 17; fs = inp['fs']
X = np.fft.rfft(rng.standard_normal(n) * inp['sigma'])
f = np.fft.rfftfreq(n, 1 / fs)
shape = np.zeros_like(f); shape[1:] = np.sqrt(1 + inp['fc'] / f[1:])
wavfile.write(inp['path'], int(fs), np.fft.irfft(X * shape, n).astype(np.float32))
`,
          { path, fs, sigma, fc: corner },
        );
        const r = runCli('analyze', path, '--log-frequency', '--json');
        expect(r.stderr).toBe('');
        expect(r.status).toBe(0);
        const rep = JSON.parse(r.stdout) as Report;
        const ch = rep.channels[0];
        expect(rep.sampleRate).toBe(fs);
        // Reference: scipy.io.wavfile's samples; per point a direct numpy sum with scipy.signal.get_window('hann', L),
        // mean removed per segment; and the 0.1–10 Hz chain as scipy.signal.butter + sosfilt from sosfilt_zi·x0
        // with numpy's ptp and RMS over the same windows.
        const ref = runPython<{ psd: Float64Array; ptp: Float64Array; rms: Float64Array }>(
          `
from scipy.io import wavfile
from scipy.signal import get_window, butter, sosfilt, sosfilt_zi
fs, x = wavfile.read(inp['path']); x = x.astype(np.float64)
psd = []
for f, L in zip(inp['f'], inp['L']):
    L = int(L); D = L - int(np.floor(inp['ov'] * L)); K = (len(x) - L) // D + 1
    w = get_window('hann', L); n = np.arange(L)
    seg = x[np.arange(K)[:, None] * D + n[None, :]]
    X = (seg - seg.mean(axis=1, keepdims=True)) @ (w * np.exp(-2j * np.pi * f * n / fs))
    psd.append(2 * np.mean(np.abs(X) ** 2) / (fs * np.sum(w * w)))
out['psd'] = np.array(psd)
sos = np.vstack([butter(2, 0.1, 'highpass', fs=fs, output='sos'), butter(4, 10, 'lowpass', fs=fs, output='sos')])
y = sosfilt(sos, x, zi=sosfilt_zi(sos) * x[0])[0]
W = int(inp['W']); starts = np.array(inp['starts'], dtype=int)
out['ptp'] = np.array([np.ptp(y[s:s + W]) for s in starts]); out['rms'] = np.array([np.sqrt(np.mean(y[s:s + W] ** 2)) for s in starts])
`,
          {
            path,
            f: ch.frequency,
            L: ch.segment,
            ov: rep.settings.overlap,
            W: ch.peakToPeak.windowSeconds * fs,
            starts: ch.peakToPeak.windows.map((w) => w.startSample),
          },
        );
        for (let j = 0; j < ch.psd.length; j++)
          expect(Math.abs(ch.psd[j] - ref.psd[j]) / ref.psd[j]).toBeLessThan(1e-9);
        expect(ch.peakToPeak.windows.length).toBeGreaterThan(50);
        ch.peakToPeak.windows.forEach((w, k) => {
          expect(Math.abs(w.peakToPeak - ref.ptp[k]) / ref.ptp[k]).toBeLessThan(1e-6);
          expect(Math.abs(w.rms - ref.rms[k]) / ref.rms[k]).toBeLessThan(1e-6);
        });
        // The generated answer: e_w = sqrt(2σ²/fs), f_c = 2 Hz, within 3 reported standard uncertainties.
        const fit = ch.corner.oneOverF;
        expect(fit).not.toBeNull();
        expect(Math.abs(fit!.whiteAsd - Math.sqrt((2 * sigma * sigma) / fs))).toBeLessThan(3 * fit!.whiteAsdSigma);
        expect(Math.abs(fit!.corner - corner)).toBeLessThan(3 * fit!.cornerSigma);

        const bad = runCli('analyze', path, '--log-frequency', '--segment', '1024');
        expect(bad.status).toBe(2);
        expect(bad.stderr).toMatch(/--segment does not apply with --log-frequency/);
      } finally {
        rmSync(dir, { recursive: true, force: true });
      }
    },
  );
});
