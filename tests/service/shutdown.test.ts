// Clean shutdown: SIGTERM while the demo records at 20× real time (a continuous write burst plus event captures)
// must exit 0 in under 2 s and leave every WAV readable by scipy.io.wavfile without warnings (header sizes patched)
// and the history store passing SQLite's own integrity check. A second signal exits at once.
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

const root = new URL('../..', import.meta.url).pathname;
const bin = join(root, 'bin/floorline.mjs');
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

function startDemo(data: string): {
  child: ChildProcess;
  exited: Promise<{ code: number | null; at: number }>;
  stderr: () => string;
  stdout: () => string;
} {
  const child = spawn(
    process.execPath,
    [bin, 'demo', '--speed', '20', '--record', '--http-port', '0', '--data', data, '--quiet'],
    { stdio: ['ignore', 'pipe', 'pipe'] },
  );
  let err = '';
  let out = '';
  child.stderr!.on('data', (c) => (err += c));
  child.stdout!.on('data', (c) => (out += c));
  const exited = new Promise<{ code: number | null; at: number }>((r) =>
    child.on('exit', (code) => r({ code, at: performance.now() })),
  );
  return { child, exited, stderr: () => err, stdout: () => out };
}

async function waitForRecording(dir: string): Promise<void> {
  for (let i = 0; i < 200 && !(existsSync(dir) && readdirSync(dir).some((f) => f.startsWith('rec-'))); i++)
    await sleep(50);
}

describe('shutdown on a signal', () => {
  it('SIGTERM mid-burst: exit 0 within 2 s, every WAV and the store valid', async () => {
    const data = join(mkdtempSync(join(tmpdir(), 'fl-stop-')), 'data');
    const run = startDemo(data);
    await waitForRecording(join(data, 'recordings'));
    await sleep(2500); // t ≈ 50 s of sample time: captures of the mains and spur events are being written
    const t0 = performance.now();
    run.child.kill('SIGTERM');
    const { code, at } = await run.exited;
    expect(code, run.stderr()).toBe(0);
    expect(at - t0).toBeLessThan(2000);

    const wavs = readdirSync(join(data, 'recordings'))
      .filter((f) => f.endsWith('.wav'))
      .map((f) => join(data, 'recordings', f));
    expect(wavs.length).toBeGreaterThanOrEqual(2);
    // scipy.io.wavfile with warnings as errors: a header whose sizes disagree with the file raises.
    const py = spawnSync(
      'python3',
      [
        '-c',
        `
import os, sys, struct, warnings, sqlite3, scipy.io.wavfile as w
warnings.simplefilter('error')
warnings.filterwarnings('ignore', 'Chunk .non-data. not understood')  # our metadata chunk
for p in sys.argv[2:]:
    fs, x = w.read(p)
    assert fs == 8000 and x.ndim == 2 and x.shape[1] == 2 and x.shape[0] > 0, (p, fs, x.shape)
    # RIFF layout (common practice): the chunk sizes in the header add up to the file's length, none left unpatched.
    b = open(p, 'rb').read()
    assert struct.unpack('<I', b[4:8])[0] + 8 == len(b), (p, 'RIFF size')
    off = 12
    while off < len(b):
        cid, size = b[off:off+4], struct.unpack('<I', b[off+4:off+8])[0]
        if cid == b'data': assert size == x.shape[0] * 8, (p, 'data size')
        off += 8 + size + (size & 1)
    assert off == len(b), (p, 'chunks')
    print(p, x.shape[0])
db = sqlite3.connect(sys.argv[1])
print(db.execute('pragma integrity_check').fetchone()[0])
`,
        join(data, 'demo.sqlite'),
        ...wavs,
      ],
      { encoding: 'utf8' },
    );
    expect(py.status, py.stderr).toBe(0);
    expect(py.stdout.trim().split('\n').pop()).toBe('ok');
    // Nothing buffered was lost: the continuous recording holds every frame the summary says it recorded.
    const said = Number(/recording\s+on, (\d+) frames/.exec(run.stdout())?.[1]);
    const recFrames = py.stdout
      .trim()
      .split('\n')
      .filter((l) => /\/rec-[^/]*\.wav /.test(l))
      .reduce((a, l) => a + Number(l.split(' ').pop()), 0);
    expect(said).toBeGreaterThan(0);
    expect(recFrames).toBe(said);
  });

  it('a second signal exits at once', async () => {
    const data = join(mkdtempSync(join(tmpdir(), 'fl-stop-')), 'data');
    const run = startDemo(data);
    await waitForRecording(join(data, 'recordings'));
    run.child.kill('SIGTERM');
    run.child.kill('SIGTERM');
    const { code } = await run.exited;
    // Either the first stop already finished (0) or the second signal cut it short (128 + 15).
    expect([0, 143]).toContain(code);
  });
});
