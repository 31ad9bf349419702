// scipy.signal.welch (average='mean') over pieces of interleaved samples, through one long-lived python3 process
// (tests/wav/support.ts Python: importing scipy costs seconds, so a test file pays it once).
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Python } from '../wav/support.ts';

// Each piece [a, b) goes to scipy.signal.welch on its own; the per-piece means are combined weighted by their
// segment counts (the mean over every segment of every piece). Channels are scaled, then rounded to float32
// when fround is set.
const CODE = String.raw`
req = args[0]
raw = np.fromfile(req["path"], dtype="<f8").reshape(req["frames"], req["channels"])
step = req["nperseg"] - req["noverlap"]
xs = []
for c in range(req["channels"]):
    x = raw[:, c] * req["scale"][c]
    if req["fround"]:
        x = x.astype(np.float32).astype(np.float64)
    xs.append(x)
def case(pieces, x):
    acc, k_all = None, 0
    for a, b in pieces:
        if b - a < req["nperseg"]:
            continue
        k = (b - a - req["nperseg"]) // step + 1
        _, p = signal.welch(x[a:b], fs=req["fs"], window=req["window"], nperseg=req["nperseg"], noverlap=req["noverlap"],
                            detrend=req["detrend"], scaling="density", average="mean")
        acc = p * k if acc is None else acc + p * k
        k_all += k
    return (acc / k_all).tolist(), k_all
result = []
for pieces in req["cases"]:
    rs = [case(pieces, x) for x in xs]
    result.append({"psd": [r[0] for r in rs], "segments": rs[0][1]})
`;

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

export async function scipyWelch(py: Python, req: ScipyWelchRequest): Promise<{ psd: number[][]; segments: number }[]> {
  const frames = req.channels[0].length;
  const n = req.channels.length;
  const inter = new Float64Array(frames * n);
  for (let i = 0; i < frames; i++) for (let c = 0; c < n; c++) inter[i * n + c] = req.channels[c][i];
  const dir = mkdtempSync(join(tmpdir(), 'floorline-welch-'));
  try {
    const path = join(dir, 'x.f64');
    writeFileSync(path, new Uint8Array(inter.buffer));
    const { channels, ...rest } = req;
    return await py.run(CODE, { ...rest, path, channels: channels.length, frames });
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
