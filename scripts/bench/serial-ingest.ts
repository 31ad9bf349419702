// Serial ingest benchmark. Two parts, each beside a reference in the same run:
//  1. decoder alone on an in-memory buffer (FrameDecoder + the sequencer's int24 decode into Float64Arrays),
//     against a python reader of the same bytes (struct + zlib.crc32 + numpy int24 decode per frame);
//  2. sustained ingest through a socat pty pair into SerialSource (real serialport), against a plain fs read of
//     the same pty (bytes only, no decoding): MB/s, samples/s and the reader process's CPU %.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { FrameDecoder } from '../../agent/framing/decoder.ts';
import { encodeDescriptorFrame, encodeSamplesFrame, samplesFrameLength } from '../../agent/framing/encoder.ts';
import { decodeInterleaved } from '../../agent/framing/samples.ts';
import { SerialSource } from '../../agent/sources/serial.ts';
import type { SourceSink } from '../../protocol/stream.ts';
import { SeededRandom } from '../../dsp/random.ts';

const CH = 4;
const PER_FRAME = 500; // 10 ms at 50 kS/s
const median = (a: number[]): number => [...a].sort((x, y) => x - y)[a.length >> 1];

function makeStream(frames: number): Uint8Array {
  const rng = new SeededRandom(1);
  const data = Array.from({ length: CH }, () => new Float64Array(PER_FRAME));
  const len = samplesFrameLength(CH, 'int24', PER_FRAME);
  const desc = encodeDescriptorFrame({
    rate: 1000,
    format: 'int24',
    board: 'bench',
    firmware: '1',
    boot: '1',
    clock: 0,
    channels: Array.from({ length: CH }, (_, c) => ({ name: `c${c}`, unit: 'V', perCount: 1e-7, fullScale: 8388607 })),
  });
  const out = new Uint8Array(desc.length + frames * len);
  out.set(desc, 0);
  for (let f = 0; f < frames; f++) {
    for (const d of data) for (let i = 0; i < PER_FRAME; i++) d[i] = Math.round((rng.uniform() * 2 - 1) * 8e6);
    encodeSamplesFrame(out, desc.length + f * len, f * PER_FRAME, 'int24', data, 0, PER_FRAME);
  }
  return out;
}

function decoderAlone(bytes: Uint8Array, chunk: number): number {
  const out = Array.from({ length: CH }, () => new Float64Array(PER_FRAME));
  let samples = 0;
  const dec = new FrameDecoder({
    samples(f) {
      decodeInterleaved(f.bytes, f.offset, f.format, f.channels, f.frames, out, 0);
      samples += f.frames * f.channels;
    },
    descriptor() {},
  });
  const t0 = performance.now();
  for (let p = 0; p < bytes.length; p += chunk) dec.push(bytes, p, Math.min(bytes.length, p + chunk));
  const s = (performance.now() - t0) / 1000;
  if (dec.counters.crcErrors || dec.counters.syncErrors) throw new Error('bench stream did not decode cleanly');
  return samples / s;
}

function pythonReference(path: string): number {
  const script = `
import time, struct, zlib, numpy as np
b = open(${JSON.stringify(path)}, 'rb').read()
t0 = time.perf_counter(); i = 0; n = 0
while i < len(b):
    ver, kind, L = struct.unpack_from('<BBH', b, i + 4)
    if zlib.crc32(memoryview(b)[i+4:i+8+L]) != struct.unpack_from('<I', b, i + 8 + L)[0]: raise SystemExit('crc')
    if kind == 1:
        a = np.frombuffer(b, dtype=np.uint8, count=L - 6, offset=i + 14).reshape(-1, 3).astype(np.int32)
        v = (a[:, 0] | (a[:, 1] << 8) | (a[:, 2] << 16)); v = np.where(v >= 1 << 23, v - (1 << 24), v).astype(np.float64)
        n += v.size
    i += 12 + L
print(n / (time.perf_counter() - t0))`;
  const r = spawnSync('python3', ['-c', script], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(r.stderr);
  return Number(r.stdout);
}

async function ptyIngest(
  stream: Uint8Array,
  seconds: number,
  mode: 'source' | 'raw',
): Promise<{ mbps: number; sps: number; cpu: number }> {
  const dir = mkdtempSync(join(tmpdir(), 'fl-bench-'));
  const board = join(dir, 'board');
  const host = join(dir, 'host');
  const file = join(dir, 'stream.bin');
  writeFileSync(file, stream);
  const socat = spawn('socat', [`pty,raw,echo=0,link=${board}`, `pty,raw,echo=0,link=${host}`], { stdio: 'ignore' });
  while (!existsSync(board) || !existsSync(host)) await new Promise((r) => setTimeout(r, 20));
  let bytes = 0;
  let samples = 0;
  let stopReader: () => Promise<void>;
  if (mode === 'source') {
    const sink: SourceSink = {
      info() {},
      block: (b) => void (samples += b.frames * b.data.length),
      gap() {},
      link() {},
      end() {},
    };
    const source = new SerialSource({ port: host, noDataSeconds: 30 });
    await source.start(sink);
    stopReader = async () => {
      bytes = source.counters().bytes;
      await source.stop();
    };
  } else {
    const { SerialPort } = await import('serialport');
    const port = new SerialPort({ path: host, baudRate: 921600 });
    await new Promise((r) => port.once('open', r));
    port.on('data', (c: Buffer) => void (bytes += c.length));
    stopReader = () => new Promise((r) => port.close(() => r()));
  }
  // The writer repeats the buffer as fast as the pty takes it (its sequence steps back at each repeat: counted
  // by the source as a board restart, which does not slow it down).
  const writer = spawn(
    process.execPath,
    [
      '-e',
      `
const fs = require('fs'); const b = fs.readFileSync(${JSON.stringify(file)}); const fd = fs.openSync(${JSON.stringify(board)}, 'w');
const end = Date.now() + ${seconds * 1000}; while (Date.now() < end) { let o = 0; while (o < b.length) o += fs.writeSync(fd, b, o, Math.min(65536, b.length - o)); }`,
    ],
    { stdio: 'ignore' },
  );
  const cpu0 = process.cpuUsage();
  const t0 = performance.now();
  await new Promise((r) => writer.once('exit', r));
  await new Promise((r) => setTimeout(r, 200));
  const wall = (performance.now() - t0) / 1000;
  const cpu = process.cpuUsage(cpu0);
  await stopReader!();
  socat.kill('SIGKILL');
  rmSync(dir, { recursive: true, force: true });
  const perFrameBytes = samplesFrameLength(CH, 'int24', PER_FRAME);
  if (mode === 'raw') samples = (bytes / perFrameBytes) * PER_FRAME * CH;
  return { mbps: bytes / wall / 1e6, sps: samples / wall, cpu: ((cpu.user + cpu.system) / 1e6 / wall) * 100 };
}

const stream = makeStream(20000); // 10 M instants × 4 ch = 40 M samples, 120 MB
const small = stream.subarray(
  0,
  encodeDescriptorFrame({
    rate: 1000,
    format: 'int24',
    board: 'bench',
    firmware: '1',
    boot: '1',
    clock: 0,
    channels: Array.from({ length: CH }, (_, c) => ({ name: `c${c}`, unit: 'V', perCount: 1e-7, fullScale: 8388607 })),
  }).length +
    5000 * samplesFrameLength(CH, 'int24', PER_FRAME),
);
const dir = mkdtempSync(join(tmpdir(), 'fl-bench-'));
writeFileSync(join(dir, 'small.bin'), small);

const runs = 5;
const alone = Array.from({ length: runs }, () => decoderAlone(stream, 65536));
const py = Array.from({ length: 3 }, () => pythonReference(join(dir, 'small.bin')));
console.log(
  `decoder alone (4 ch int24, 500 instants/frame, 64 KiB chunks, ${stream.length / 1e6} MB): median ${(median(alone) / 1e6).toFixed(1)} M samples/s aggregate over ${runs} runs (min ${(Math.min(...alone) / 1e6).toFixed(1)}, max ${(Math.max(...alone) / 1e6).toFixed(1)})`,
);
console.log(`reference, python struct+zlib.crc32+numpy per frame: median ${(median(py) / 1e6).toFixed(1)} M samples/s`);
const src = await ptyIngest(small, 5, 'source');
const raw = await ptyIngest(small, 5, 'raw');
console.log(
  `pty ingest into SerialSource (decode + blocks): ${src.mbps.toFixed(1)} MB/s, ${(src.sps / 1e6).toFixed(2)} M samples/s, reader process CPU ${src.cpu.toFixed(0)} %`,
);
console.log(
  `reference, serialport reading the same pty (no decoding): ${raw.mbps.toFixed(1)} MB/s, reader process CPU ${raw.cpu.toFixed(0)} %`,
);
rmSync(dir, { recursive: true, force: true });
