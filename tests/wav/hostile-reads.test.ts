// Input files that once hung a command or named the wrong thing: a FIFO or a device where a file belongs, chunk
// sizes past the end of the file, a second format chunk, a flood of empty chunks, and sidecar values out of
// range. Each command runs as a real process with a timeout, so a hang fails the test instead of stalling it.
// The WAVs are laid out by hand after the RIFF/WAVE chunk layout (Microsoft/IBM "Multimedia Programming Interface
// and Data Specifications 1.0", 1991: 'RIFF' size 'WAVE', then chunks of id, u32 little-endian size, body padded
// to even length); the valid base file is the one scipy.io.wavfile.write makes, checked by reading it back there.
import { execFileSync, spawnSync } from 'node:child_process';
import { readFileSync, symlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { root, tempDir } from './support.ts';

const cliPath = join(root, 'bin/floorline.mjs');
let dir: string;
let pcm: Buffer; // int16 samples, 1 channel, 4096 frames
let good: string;

interface Run {
  code: number | null;
  out: string;
  err: string;
}

/** Runs the CLI; a command still running after 30 s is killed and reported as a hang (code null). */
function cli(...args: string[]): Run {
  const r = spawnSync(process.execPath, [cliPath, ...args], { cwd: dir, encoding: 'utf8', timeout: 30_000 });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

function chunk(id: string, body: Buffer, size = body.length): Buffer {
  const h = Buffer.alloc(8);
  h.write(id, 0, 'latin1');
  h.writeUInt32LE(size >>> 0, 4);
  return Buffer.concat([h, body, body.length % 2 ? Buffer.alloc(1) : Buffer.alloc(0)]);
}

function riff(chunks: Buffer[]): Buffer {
  const body = Buffer.concat(chunks);
  const h = Buffer.alloc(12);
  h.write('RIFF', 0, 'latin1');
  h.writeUInt32LE(4 + body.length, 4);
  h.write('WAVE', 8, 'latin1');
  return Buffer.concat([h, body]);
}

/** PCM 'fmt ' body: tag 1, channels, rate, byte rate, block align, bits (the layout's 16-byte form). */
function fmt(channels = 1, rate = 1000): Buffer {
  const b = Buffer.alloc(16);
  b.writeUInt16LE(1, 0);
  b.writeUInt16LE(channels, 2);
  b.writeUInt32LE(rate, 4);
  b.writeUInt32LE(rate * channels * 2, 8);
  b.writeUInt16LE(channels * 2, 12);
  b.writeUInt16LE(16, 14);
  return b;
}

function file(name: string, bytes: Buffer): string {
  writeFileSync(join(dir, name), bytes);
  return name;
}

function fifo(name: string): string {
  execFileSync('mkfifo', [join(dir, name)]); // coreutils: Node has no mkfifo
  return name;
}

beforeAll(() => {
  dir = tempDir('hostile-reads');
  good = join(dir, 'good.wav');
  // Reference writer: scipy.io.wavfile.write of seeded int16 noise; numpy reads its samples back for us.
  execFileSync('python3', [
    '-c',
    'import sys, numpy as np; from scipy.io import wavfile\n' +
      'x = (np.random.default_rng(16).standard_normal(4096) * 1000).astype(np.int16)\n' +
      'wavfile.write(sys.argv[1], 1000, x)\n' +
      'r, y = wavfile.read(sys.argv[1]); assert r == 1000 and (y == x).all()',
    good,
  ]);
  const bytes = readFileSync(good);
  pcm = bytes.subarray(bytes.indexOf('data') + 8);
  expect(pcm.length).toBe(4096 * 2);
});

describe('files that are not regular files', () => {
  it('a FIFO given as the WAV is refused at once, naming it, by analyze and by repair', () => {
    const name = fifo('pipe.wav');
    for (const r of [cli('analyze', name), cli('repair', name)]) {
      expect(r.code, r.err).toBe(2);
      expect(r.err).toMatch(/pipe\.wav is a FIFO; give a regular file\./);
    }
  });

  it('a FIFO or /dev/zero as the sidecar is ignored with a warning naming it, and the samples are read', () => {
    writeFileSync(join(dir, 'a.wav'), readFileSync(good));
    fifo('a.wav.json');
    writeFileSync(join(dir, 'b.wav'), readFileSync(good));
    symlinkSync('/dev/zero', join(dir, 'b.wav.json'));
    for (const [name, what] of [
      ['a.wav', 'a FIFO'],
      ['b.wav', 'a device'],
    ]) {
      const r = cli('analyze', name, '--json');
      expect(r.code, r.err).toBe(0);
      expect(r.err).toContain(`${name}.json is ${what}; give a regular file. It was ignored`);
      expect(JSON.parse(r.out).samples).toBe(4096);
    }
  });

  it('a FIFO or /dev/zero as a baseline, a mask or a rig config is refused naming the flag’s file', () => {
    const pipe = fifo('other.fifo');
    symlinkSync('/dev/zero', join(dir, 'zero.json'));
    const runs: [Run, RegExp][] = [
      [
        cli('replay', good, '--speed', 'max', '--no-server', '--quiet', '--data', 'd', '--baseline', pipe),
        /baseline other\.fifo: cannot read it \(it is a FIFO, not a regular file\)/,
      ],
      [
        cli('replay', good, '--speed', 'max', '--no-server', '--quiet', '--data', 'd', '--baseline', 'zero.json'),
        /baseline zero\.json: cannot read it \(it is a device, not a regular file\)/,
      ],
      [cli('analyze', good, '--mask', pipe), /--mask other\.fifo: cannot read it \(it is a FIFO, not a regular file\)/],
      [
        cli('replay', good, '--speed', 'max', '--no-server', '--quiet', '--data', 'd', '--config', 'zero.json'),
        /config zero\.json: cannot read it \(it is a device, not a regular file\)/,
      ],
    ];
    for (const [r, message] of runs) {
      expect(r.code, r.err).toBe(2);
      expect(r.err).toMatch(message);
    }
  });
});

describe('chunk walks', () => {
  it('names a format or metadata chunk whose size runs past the end, not a missing data chunk', () => {
    const bigFmt = file('big-fmt.wav', riff([chunk('fmt ', fmt(), 0x7fffffff), chunk('data', pcm)]));
    const bigMeta = file(
      'big-flmd.wav',
      riff([chunk('fmt ', fmt()), chunk('flmd', Buffer.from('{}'), 0x7ffffff0), chunk('data', pcm)]),
    );
    const a = cli('analyze', bigFmt);
    expect(a.code).toBe(2);
    expect(a.err).toMatch(/big-fmt\.wav: the 'fmt ' chunk claims 2147483647 bytes, past the end of the file/);
    const b = cli('analyze', bigMeta);
    expect(b.code).toBe(2);
    expect(b.err).toMatch(/big-flmd\.wav: the 'flmd' chunk claims 2147483632 bytes, past the end of the file/);
    for (const r of [a, b]) expect(r.err).not.toMatch(/no 'data' chunk/);
  });

  it('refuses a second format chunk after the samples instead of changing the format', () => {
    const name = file('two-fmt.wav', riff([chunk('fmt ', fmt()), chunk('data', pcm), chunk('fmt ', fmt(2, 500))]));
    const r = cli('analyze', name);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/two-fmt\.wav: a second 'fmt ' chunk at offset \d+; a WAV has one format/);
  });

  it('stops walking 200 000 empty chunks at the stated bound of 1000', () => {
    const empty = Buffer.concat(Array.from({ length: 200_000 }, () => chunk('junk', Buffer.alloc(0))));
    const name = file('many-chunks.wav', riff([chunk('fmt ', fmt()), empty, chunk('data', pcm)]));
    const r = cli('analyze', name);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/many-chunks\.wav: more than 1000 chunks before the samples/);
  });
});

describe('sidecar values out of range', () => {
  // Each value is named with the sidecar file and its JSON path, never as a downstream component's complaint.
  const cases: [string, Record<string, unknown>, RegExp][] = [
    ['fullScaleCounts 0', { fullScaleCounts: 0 }, /channels\[0\]\.fullScaleCounts must be above 0, got 0/],
    ['a negative scale', { scale: -1 }, /channels\[0\]\.scale must be above 0, got -1/],
    ['a zero scale on int16 PCM', { scale: 0 }, /channels\[0\]\.scale must be above 0, got 0/],
  ];
  const sidecar = (channel: Record<string, unknown>, extra: Record<string, unknown> = {}) =>
    JSON.stringify({
      schema: 'floorline.recording/1',
      sampleRate: 1000,
      firstSample: 0,
      channels: [{ name: 'x', unit: 'V', ...channel }],
      ...extra,
    });
  for (const [label, channel, message] of cases) {
    it(`names the sidecar for ${label}`, () => {
      const name = `side-${label.replace(/\W+/g, '-')}.wav`;
      writeFileSync(join(dir, name), readFileSync(good));
      writeFileSync(join(dir, `${name}.json`), sidecar(channel));
      const r = cli('analyze', name);
      expect(r.code, r.err).toBe(0);
      expect(r.err).toContain(`${name}.json: `);
      expect(r.err).toMatch(message);
      expect(r.err).not.toMatch(/Conditioner|Welch/);
    });
  }

  it('names the sidecar for a first sample near 2^53 (the stated limit is 2^48)', () => {
    writeFileSync(join(dir, 'far.wav'), readFileSync(good));
    writeFileSync(join(dir, 'far.wav.json'), sidecar({}, { firstSample: 2 ** 53 - 4096 }));
    const r = cli('analyze', 'far.wav');
    expect(r.code, r.err).toBe(0);
    expect(r.err).toMatch(/far\.wav\.json: "firstSample" must be an integer from 0 to 2\^48/);
    expect(r.err).not.toMatch(/WelchEstimator/);
  });
});
