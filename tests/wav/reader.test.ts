import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { WavError } from '../../agent/wav/errors.ts';
import { readWavFile, WavReader } from '../../agent/wav/reader.ts';
import { readF64, root, tempDir } from './support.ts';

interface Entry {
  name: string;
  encoding: string;
  rate: number;
  frames: number;
  channels: number;
}

let dir: string;
let manifest: Entry[];

beforeAll(() => {
  dir = tempDir('wavfx');
  // Reference: each .wav comes with what scipy.io.wavfile.read returns for it (tests/fixtures/make_wav_fixtures.py).
  execFileSync('python3', [join(root, 'tests/fixtures/make_wav_fixtures.py'), dir]);
  manifest = JSON.parse(readFileSync(join(dir, 'manifest.json'), 'utf8'));
});

// Integer full scale: int16 -32768 ↔ -1 FS (common practice, as libsndfile/soundfile normalise). scipy.io.wavfile
// returns 24-bit PCM left-justified in int32 (its docs: "24-bit … int32"), so int24 compares at 2^31.
const FULL_SCALE: Record<string, number> = {
  int16: 32768,
  int24: 2147483648,
  int32: 2147483648,
  float32: 1,
  float64: 1,
};

describe('WavReader', () => {
  it('reads every encoding and layout to the same samples as scipy.io.wavfile.read', async () => {
    expect(manifest.length).toBe(10);
    for (const e of manifest) {
      const { info, data } = await readWavFile(join(dir, `${e.name}.wav`), { blockFrames: 777 });
      // Reference: scipy.io.wavfile.read(e.name + '.wav') → rate, shape, samples.
      expect(info.sampleRate, e.name).toBe(e.rate);
      expect(info.frames, e.name).toBe(e.frames);
      expect(info.channels.length, e.name).toBe(e.channels);
      expect(info.format.encoding, e.name).toBe(e.encoding);
      expect(info.warnings, e.name).toEqual([]);
      const ref = readF64(join(dir, `${e.name}.f64`));
      const k = FULL_SCALE[e.encoding];
      let mismatches = 0;
      for (let c = 0; c < e.channels; c++) {
        expect(info.channels[c].unit).toBe('FS');
        for (let i = 0; i < e.frames; i++) if (data[c][i] * k !== ref[i * e.channels + c]) mismatches++;
      }
      expect(mismatches, e.name).toBe(0);
    }
  });

  it('reads integer full scale as -1 and (2^(n-1)-1)/2^(n-1), and --scale gives volts', async () => {
    // The fixture puts -32768 and 32767 in frame 0 of int16_stereo (scipy.io.wavfile.write of those int16 values).
    const { data } = await readWavFile(join(dir, 'int16_stereo.wav'));
    expect(data[0][0]).toBe(-1);
    expect(data[1][0]).toBe(32767 / 32768);
    const scaled = await readWavFile(join(dir, 'int16_stereo.wav'), { scale: 2.5 });
    expect(scaled.info.channels[0].unit).toBe('V');
    expect(scaled.data[0][0]).toBe(-2.5);
  });

  it('refuses 8-bit, A-law, 12-bit, an unknown sub-format GUID and a non-WAV with a message naming the fix', async () => {
    const cases: [string, RegExp][] = [
      ['bad_uint8', /8-bit PCM is not supported.*convert it/],
      ['bad_alaw', /A-law.*not supported.*convert it/],
      ['bad_12bit', /12-bit PCM is not supported/],
      ['bad_guid', /unknown sub-format GUID/],
      ['bad_not_wav', /is not a WAV file.*give a RIFF\/WAVE or RF64/],
    ];
    for (const [name, message] of cases) {
      const err = await WavReader.open(join(dir, `${name}.wav`)).catch((e: unknown) => e);
      expect(err, name).toBeInstanceOf(WavError);
      expect((err as WavError).message, name).toMatch(message);
      expect((err as WavError).message, name).toContain(`${name}.wav`);
      expect((err as WavError).exitCode).toBe(2);
    }
  });

  it('names a missing file and what to check', async () => {
    await expect(WavReader.open(join(dir, 'nope.wav'))).rejects.toThrow(/nope\.wav: no such file.*check the path/);
  });

  it('reads a file cut mid-frame to its last whole frame with a warning', async () => {
    const src = readFileSync(join(dir, 'int24_stereo_oddchunk.wav'));
    const cut = join(dir, 'cut.wav');
    // 1000 frames and 4 of the 6 bytes of the next one survive.
    const dataOffset = src.indexOf('data') + 8;
    writeFileSync(cut, src.subarray(0, dataOffset + 6 * 1000 + 4));
    const { info, data } = await readWavFile(cut);
    expect(info.frames).toBe(1000);
    expect(info.warnings.join(' ')).toMatch(/truncated.*last whole frame/);
    const ref = readF64(join(dir, 'int24_stereo_oddchunk.f64')); // scipy.io.wavfile.read of the uncut file
    for (let i = 0; i < 1000; i++) expect(data[1][i] * 2147483648).toBe(ref[2 * i + 1]);
  });

  it('reads a file whose data size was left 0 or 0xFFFFFFFF to the end of the file', async () => {
    const src = readFileSync(join(dir, 'float64_mono.wav'));
    const at = src.indexOf('data') + 4;
    for (const value of [0, 0xffffffff]) {
      const b = Buffer.from(src);
      b.writeUInt32LE(value, at);
      b.writeUInt32LE(value, 4);
      const p = join(dir, `unpatched-${value}.wav`);
      writeFileSync(p, b);
      const { info, data } = await readWavFile(p);
      expect(info.frames).toBe(5000);
      expect(info.warnings.join(' ')).toMatch(/data size was never written/);
      const ref = readF64(join(dir, 'float64_mono.f64')); // scipy.io.wavfile.read of the intact file
      expect(data[0][4999]).toBe(ref[4999]);
    }
  });

  it('seeks and numbers blocks in sample time from the first frame', async () => {
    const r = await WavReader.open(join(dir, 'int32_mono.wav'), { blockFrames: 1024 });
    try {
      const sizes: number[] = [];
      const starts: number[] = [];
      for (let b = await r.read(); b; b = await r.read()) {
        sizes.push(b.frames);
        starts.push(b.firstSample);
      }
      // 5000 frames (scipy.io.wavfile.read shape) in blocks of 1024.
      expect(sizes).toEqual([1024, 1024, 1024, 1024, 904]);
      expect(starts).toEqual([0, 1024, 2048, 3072, 4096]);
      r.seek(4990);
      const last = await r.read();
      expect(last?.frames).toBe(10);
      expect(last?.firstSample).toBe(4990);
    } finally {
      await r.close();
    }
  });
});
