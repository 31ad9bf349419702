// File fuzz: seeded mutations of a valid recording (WAV + sidecar) and baseline, fed to analyze, baseline, replay
// and repair. Every run must end with exit 0 or 2, an exit 2 with exactly one message line (warnings aside), no
// stack trace, no NaN printed and no raw control character reaching the terminal. The commands run in-process
// (main() of the CLI), so a thrown error or an unhandled rejection fails the test directly.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  copyFileSync,
  mkdtempSync,
  readFileSync,
  rmSync,
  writeFileSync,
  existsSync,
  truncateSync,
  mkdirSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { main } from '../../agent/cli/main.ts';
import { WavWriter } from '../../agent/wav/writer.ts';
import { SeededRandom } from '../../dsp/random.ts';

export const FILE_RUNS = 150;
const COMMANDS = 4;
let dir: string;
let wavBytes: Buffer;
let sidecarText: string;
let baselineText: string;

interface Outcome {
  code: number;
  out: string;
  err: string;
}

/** Runs the CLI in this process with stdout/stderr captured. */
async function cli(...args: string[]): Promise<Outcome> {
  const out: string[] = [];
  const err: string[] = [];
  const o = process.stdout.write.bind(process.stdout);
  const e = process.stderr.write.bind(process.stderr);
  process.stdout.write = ((s: string | Uint8Array) => (out.push(String(s)), true)) as typeof process.stdout.write;
  process.stderr.write = ((s: string | Uint8Array) => (err.push(String(s)), true)) as typeof process.stderr.write;
  try {
    const code = await main(args);
    // Let output a command schedules as it ends (timers, stream callbacks) land in its own capture.
    await new Promise((r) => setImmediate(r));
    await new Promise((r) => setImmediate(r));
    return { code, out: out.join(''), err: err.join('') };
  } catch (x) {
    return { code: -1, out: out.join(''), err: err.join('') + `THROWN: ${(x as Error).stack}` };
  } finally {
    process.stdout.write = o;
    process.stderr.write = e;
  }
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'floorline-file-fuzz-'));
  const path = join(dir, 'good.wav');
  const rnd = new SeededRandom(16);
  const data = [rnd.fillGaussian(new Float64Array(4096), 1e-3), rnd.fillGaussian(new Float64Array(4096), 2e-3)];
  const w = new WavWriter(
    path,
    {
      sampleRate: 1000,
      channels: [
        { name: 'a', unit: 'V' },
        { name: 'b', unit: 'V' },
      ],
      firstSample: 0,
    },
    { durable: false },
  );
  w.append(data, 4096);
  w.close();
  wavBytes = readFileSync(path);
  sidecarText = readFileSync(`${path}.json`, 'utf8');
  const made = await cli('baseline', path, '-o', join(dir, 'good-baseline.json'), '--segment', '256');
  expect(made.code, made.err).toBe(0);
  baselineText = readFileSync(join(dir, 'good-baseline.json'), 'utf8');
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

// Values that have broken readers before (from memory: zero, negative, huge, tiny, far-future dates, nulls,
// terminal escapes) or that are simply wrong types.
const oddJson = fc.constantFrom<unknown>(
  null,
  0,
  -1,
  -0,
  1e308,
  1e-300,
  1e300,
  2 ** 53,
  32767,
  '',
  'x',
  '\u001b]0;pwned\u0007\u001b[2J',
  '+275760-09-13T00:00:00.000Z',
  [],
  [null],
  {},
  true,
);
const jsonPath = (paths: string[][]) => fc.constantFrom(...paths);
const SIDECAR_PATHS = [
  ['sampleRate'],
  ['firstSample'],
  ['startWallTime'],
  ['channels'],
  ['channels', '0'],
  ['channels', '0', 'name'],
  ['channels', '0', 'unit'],
  ['channels', '0', 'scale'],
  ['channels', '0', 'fullScaleCounts'],
  ['schema'],
];
const BASELINE_PATHS = [
  ['channels'],
  ['channels', '0'],
  ['channels', '0', 'psd'],
  ['channels', '0', 'name'],
  ['channels', '0', 'equivalentAverages'],
  ['settings'],
  ['settings', 'segment'],
  ['settings', 'sampleRate'],
  ['span'],
  ['schema'],
];

const f32 = (v: number): number[] => Array.from(new Uint8Array(new Float32Array([v]).buffer));
const mutation = fc.oneof(
  fc.record({
    kind: fc.constant('byte' as const),
    at: fc.oneof(fc.nat(255), fc.nat(wavBytesLength() - 1)),
    value: fc.nat(255),
  }),
  fc.record({
    kind: fc.constant('field' as const),
    at: fc.constantFrom(
      ['fmt ', 4],
      ['fmt ', 10],
      ['fmt ', 12],
      ['fmt ', 20],
      ['fmt ', 22],
      ['data', 4],
      ['flmd', 4],
      ['RIFF', 4],
    ),
    value: fc.constantFrom(0, 1, 3, 1000, 32767, 65535, 0xffffffff, 0x7fffffff),
  }),
  fc.record({
    kind: fc.constant('sample' as const),
    frame: fc.nat(4095),
    value: fc.constantFrom(NaN, Infinity, -Infinity, 3.4028234663852886e38, 1e-45, 0),
  }),
  fc.record({ kind: fc.constant('truncate' as const), length: fc.nat(wavBytesLength()) }),
  fc.record({ kind: fc.constant('sidecar' as const), path: jsonPath(SIDECAR_PATHS), value: oddJson }),
  fc.record({ kind: fc.constant('sidecar-bytes' as const), text: fc.string({ maxLength: 30 }) }),
  fc.record({ kind: fc.constant('baseline' as const), path: jsonPath(BASELINE_PATHS), value: oddJson }),
  fc.record({ kind: fc.constant('silent' as const), channel: fc.nat(1) }),
  fc.record({
    kind: fc.constant('u16' as const),
    at: fc.constantFrom(['fmt ', 10], ['fmt ', 20], ['fmt ', 22]),
    value: fc.constantFrom(0, 1, 1000, 32767, 65535),
  }),
);
type Mutation = typeof mutation extends fc.Arbitrary<infer T> ? T : never;

/** Length of the good WAV: 2 channels × 4096 frames float32 plus its header (fixed by our writer's layout). */
function wavBytesLength(): number {
  return 4096 * 8 + 44;
}

function setPath(obj: unknown, path: string[], value: unknown): void {
  let o = obj as Record<string, unknown>;
  for (let i = 0; i < path.length - 1; i++) {
    const next = o?.[path[i]];
    if (typeof next !== 'object' || next === null) return;
    o = next as Record<string, unknown>;
  }
  if (typeof o === 'object' && o !== null) o[path[path.length - 1]] = value;
}

function apply(muts: Mutation[], caseDir: string): { wav: string; baseline: string } {
  const wav = Buffer.from(wavBytes);
  let sidecar: string = sidecarText;
  let baseline: string = baselineText;
  let cut = -1;
  const dataStart = wavBytes.length - 4096 * 8;
  for (const m of muts) {
    if (m.kind === 'byte') wav[m.at % wav.length] = m.value;
    else if (m.kind === 'field')
      wav.writeUInt32LE(m.value >>> 0, wavBytes.indexOf(m.at[0] as string) + (m.at[1] as number));
    else if (m.kind === 'u16') wav.writeUInt16LE(m.value, wavBytes.indexOf(m.at[0] as string) + (m.at[1] as number));
    else if (m.kind === 'sample') Buffer.from(f32(m.value)).copy(wav, dataStart + m.frame * 8);
    else if (m.kind === 'truncate')
      cut = m.length < 0 ? dataStart : m.length; // < 0: keep the header only
    else if (m.kind === 'sidecar') {
      try {
        const j = JSON.parse(sidecar);
        setPath(j, m.path, m.value);
        sidecar = JSON.stringify(j);
      } catch {
        // already garbage: leave it so
      }
    } else if (m.kind === 'sidecar-bytes') sidecar = m.text;
    else if (m.kind === 'baseline') {
      const j = JSON.parse(baseline);
      setPath(j, m.path, m.value);
      baseline = JSON.stringify(j);
    } else if (m.kind === 'silent') {
      for (let f = 0; f < 4096; f++) wav.writeFloatLE(0, dataStart + f * 8 + m.channel * 4);
    }
  }
  const wavPath = join(caseDir, 'rec.wav');
  writeFileSync(wavPath, wav);
  if (cut >= 0) truncateSync(wavPath, cut);
  writeFileSync(`${wavPath}.json`, sidecar);
  const basePath = join(caseDir, 'base.json');
  writeFileSync(basePath, baseline);
  return { wav: wavPath, baseline: basePath };
}

/** A plain WAV from elsewhere (no metadata chunk): 44-byte header, PCM int16 (tag 1) or IEEE float64 (tag 3). */
function plainWav(kind: 'int16' | 'float64', channels: number, samples: number[]): Buffer {
  const bytes = kind === 'int16' ? 2 : 8;
  const data = Buffer.alloc(samples.length * bytes);
  samples.forEach((v, i) => (kind === 'int16' ? data.writeInt16LE(v, i * 2) : data.writeDoubleLE(v, i * 8)));
  const h = Buffer.alloc(44);
  h.write('RIFF', 0);
  h.writeUInt32LE(36 + data.length, 4);
  h.write('WAVEfmt ', 8);
  h.writeUInt32LE(16, 16);
  h.writeUInt16LE(kind === 'int16' ? 1 : 3, 20);
  h.writeUInt16LE(channels, 22);
  h.writeUInt32LE(1000, 24);
  h.writeUInt32LE(1000 * channels * bytes, 28);
  h.writeUInt16LE(channels * bytes, 32);
  h.writeUInt16LE(bytes * 8, 34);
  h.write('data', 36);
  h.writeUInt32LE(data.length, 40);
  return Buffer.concat([h, data]);
}

async function allCommands(wav: string, baseline: string, caseDir: string): Promise<Record<string, Outcome>> {
  const copy = join(caseDir, 'repair.wav');
  const results: Record<string, Outcome> = {
    analyze: await cli('analyze', wav, '--json', '--segment', '256'),
    baseline: await cli('baseline', wav, '-o', join(caseDir, 'out.json'), '--segment', '256'),
    replay: await cli(
      'replay',
      wav,
      '--speed',
      'max',
      '--no-server',
      '--quiet',
      '--segment',
      '256',
      '--baseline',
      baseline,
      '--data',
      join(caseDir, 'data'),
    ),
  };
  if (existsSync(wav)) copyFileSync(wav, copy);
  results.repair = await cli('repair', copy);
  for (const [name, r] of Object.entries(results)) check(name, r);
  // A baseline written from a file with faults holds only finite densities (once it wrote psd: [null, …]).
  if (results.baseline.code === 0) {
    const made = JSON.parse(readFileSync(join(caseDir, 'out.json'), 'utf8')) as { channels: { psd: unknown[] }[] };
    for (const c of made.channels) expect(c.psd.every((v) => typeof v === 'number' && Number.isFinite(v))).toBe(true);
  }
  return results;
}

function check(name: string, r: Outcome): void {
  const all = r.out + r.err;
  expect([0, 2], `${name}: exit ${r.code}\n${all.slice(0, 2000)}`).toContain(r.code);
  expect(all, `${name}: stack trace`).not.toMatch(/\n\s+at .+[(:]\d+/);
  const control = /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]/.exec(all);
  expect(
    control && JSON.stringify(all.slice(Math.max(0, control.index - 80), control.index + 20)),
    `${name}: raw control character`,
  ).toBeNull();
  if (name !== 'replay')
    expect(/(?<![\w-])(NaN|null)(?![\w-])/.exec(r.out)?.[0], `${name}: NaN printed`).toBeUndefined();
  if (r.code === 2) {
    // Node's own process warnings (e.g. listener counts from running many commands in one process) are the
    // harness's, not the command's.
    const lines = r.err
      .split('\n')
      .filter((l) => l.trim() !== '' && !/warning:/.test(l) && !/^\(node:\d+\)|^\(Use `node --trace-warnings/.test(l));
    expect(lines.length, `${name}: want one message line\n${r.err}`).toBe(1);
  }
}

describe('hostile files through analyze, baseline, replay and repair', () => {
  // Each input below once stopped a command with a stack trace, an out-of-memory abort or printed NaN.
  const known: [string, Mutation[]][] = [
    ['one NaN sample', [{ kind: 'sample', frame: 1000, value: NaN }]],
    ['one +Inf sample', [{ kind: 'sample', frame: 3000, value: Infinity }]],
    ['a silent channel', [{ kind: 'silent', channel: 1 }]],
    ['a 32767-channel header', [{ kind: 'u16', at: ['fmt ', 10], value: 32767 }]],
    ['a far-future start time', [{ kind: 'sidecar', path: ['startWallTime'], value: '+275760-09-13T00:00:00.000Z' }]],
    ['a null baseline channel', [{ kind: 'baseline', path: ['channels'], value: [null] }]],
    [
      'an escape sequence as channel name',
      [{ kind: 'sidecar', path: ['channels', '0', 'name'], value: '\u001b]0;pwned\u0007' }],
    ],
  ];
  for (const [label, muts] of known) {
    it(`handles ${label}`, async () => {
      const caseDir = join(dir, `known-${label.replace(/\W+/g, '-')}`);
      mkdirSync(caseDir);
      const { wav, baseline } = apply(muts, caseDir);
      await allCommands(wav, baseline, caseDir);
    });
  }

  it('says a recording with no whole frame has nothing to replay (not "samples 0…-1")', async () => {
    const caseDir = join(dir, 'empty');
    mkdirSync(caseDir);
    const { wav, baseline } = apply([{ kind: 'truncate', length: -1 }], caseDir);
    const r = await allCommands(wav, baseline, caseDir);
    expect(r.replay.code).toBe(2);
    expect(r.replay.err).toMatch(/holds no whole frame of samples; there is nothing to replay/);
  });

  it('refuses a baseline of a silent channel naming it, and replays against a zero-floor baseline without crashing', async () => {
    const caseDir = join(dir, 'silent');
    mkdirSync(caseDir);
    const { wav, baseline } = apply(
      [
        { kind: 'silent', channel: 1 },
        { kind: 'baseline', path: ['channels', '1', 'psd'], value: new Array(129).fill(0) },
      ],
      caseDir,
    );
    const r = await allCommands(wav, baseline, caseDir);
    expect(r.baseline.code).toBe(2);
    expect(r.baseline.err).toMatch(/channel b is silent/);
    expect(r.replay.code).toBe(0);
  });

  it('refuses a 655 kB int16 WAV declaring 32767 channels before allocating for them', async () => {
    const caseDir = join(dir, 'wide');
    mkdirSync(caseDir);
    const wav = join(caseDir, 'wide.wav');
    writeFileSync(wav, plainWav('int16', 32767, new Array(32767 * 10).fill(1)));
    const before = process.memoryUsage().rss;
    const r = await allCommands(wav, join(caseDir, 'none.json'), caseDir);
    expect(r.analyze.code).toBe(2);
    expect(r.analyze.err).toMatch(/32767 channels; floorline reads at most 64/);
    expect(process.memoryUsage().rss - before).toBeLessThan(200 << 20);
  });

  it('handles int16 with a sidecar scale of 1e308 and float64 samples of 1e300 (values beyond float32)', async () => {
    const caseDir = join(dir, 'plain');
    mkdirSync(caseDir);
    const rnd = new SeededRandom(3);
    const noise = Array.from(rnd.fillGaussian(new Float64Array(4096), 1000), Math.round);
    const int16 = join(caseDir, 'int16.wav');
    writeFileSync(int16, plainWav('int16', 1, noise));
    writeFileSync(
      `${int16}.json`,
      JSON.stringify({
        schema: 'floorline.recording/1',
        sampleRate: 1000,
        firstSample: 0,
        channels: [{ name: 'x', unit: 'V', scale: 1e308 }],
      }),
    );
    const r = await allCommands(int16, join(caseDir, 'none.json'), caseDir);
    expect(r.analyze.err).toMatch(/beyond float32/);
    const f64 = join(caseDir, 'f64.wav');
    writeFileSync(
      f64,
      plainWav(
        'float64',
        1,
        noise.map((v, i) => (i === 2000 ? 1e300 : v * 1e-6)),
      ),
    );
    const g = await allCommands(f64, join(caseDir, 'none.json'), caseDir);
    expect(g.analyze.code).toBe(0);
    expect(g.analyze.err).toMatch(/1 frames hold NaN/);
  });

  it(`ends every one of ${FILE_RUNS} mutated file sets with exit 0 or 2 and one plain message (${FILE_RUNS * COMMANDS} runs)`, async () => {
    let n = 0;
    await fc.assert(
      fc.asyncProperty(fc.array(mutation, { minLength: 1, maxLength: 3 }), async (muts) => {
        const caseDir = join(dir, `case-${n++}`);
        mkdirSync(caseDir);
        const { wav, baseline } = apply(muts, caseDir);
        await allCommands(wav, baseline, caseDir);
        rmSync(caseDir, { recursive: true, force: true });
      }),
      { seed: 1616, numRuns: FILE_RUNS },
    );
  }, 120_000);
});
