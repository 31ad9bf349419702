// Calls tests/pipeline/scipy_welch.py: scipy.signal.welch (average='mean') over pieces of interleaved samples.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const script = fileURLToPath(new URL('./scipy_welch.py', import.meta.url));

export interface ScipyWelchRequest {
  channels: Float64Array[];
  fs: number;
  nperseg: number;
  noverlap: number;
  window: string;
  detrend: 'constant' | 'linear' | false;
  /** Per case: [a, b) index ranges of the arrays, each analysed on its own, combined as one mean. */
  cases: [number, number][][];
  scale: number[];
  fround: boolean;
}

export function scipyWelch(req: ScipyWelchRequest): { psd: number[][]; segments: number }[] {
  const frames = req.channels[0].length;
  const inter = new Float64Array(frames * req.channels.length);
  for (let i = 0; i < frames; i++) for (let c = 0; c < req.channels.length; c++) inter[i * req.channels.length + c] = req.channels[c][i];
  const dir = mkdtempSync(join(tmpdir(), 'floorline-welch-'));
  try {
    const path = join(dir, 'x.f64');
    writeFileSync(path, new Uint8Array(inter.buffer));
    const { channels, ...rest } = req;
    const input = JSON.stringify({ ...rest, path, channels: channels.length, frames });
    const r = spawnSync('python3', [script], { input, encoding: 'utf8', maxBuffer: 256 << 20 });
    if (r.status !== 0) throw new Error(`scipy_welch.py failed: ${r.stderr}`);
    return JSON.parse(r.stdout);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Largest relative difference over bins whose reference is above floor × its peak. */
export function maxRelativeError(ours: Float64Array, ref: number[], floor = 1e-12): number {
  let peak = 0;
  for (const v of ref) peak = Math.max(peak, v);
  let worst = 0;
  for (let k = 0; k < ref.length; k++) {
    if (ref[k] <= floor * peak) continue;
    worst = Math.max(worst, Math.abs(ours[k] - ref[k]) / ref[k]);
  }
  return worst;
}
