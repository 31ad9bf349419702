// Helpers for the WAV and analyze suites: a fresh temp folder and python3 (numpy + scipy) as the outside
// reference. One python process serves a whole test file, because importing scipy costs seconds.
import { spawn, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';

export const root = new URL('../../', import.meta.url).pathname;

export function tempDir(label: string): string {
  return mkdtempSync(join(tmpdir(), `floorline-${label}-`));
}

// Each request line is JSON {code, args}; the code runs with `args`, numpy as np, scipy.io.wavfile as wavfile,
// scipy.signal as signal, and sets `result` (JSON-serialisable). One JSON line answers: {ok, result | error}.
const SERVER = String.raw`
import sys, json, traceback
import numpy as np
from scipy.io import wavfile
from scipy import signal
for line in sys.stdin:
    req = json.loads(line)
    scope = {"np": np, "wavfile": wavfile, "signal": signal, "json": json, "args": req["args"], "result": None}
    try:
        exec(req["code"], scope)
        out = {"ok": True, "result": scope["result"]}
    except Exception:
        out = {"ok": False, "error": traceback.format_exc()}
    sys.stdout.write(json.dumps(out) + "\n")
    sys.stdout.flush()
`;

export class Python {
  private readonly child: ChildProcessWithoutNullStreams;
  private readonly waiting: { resolve: (line: string) => void; reject: (e: Error) => void }[] = [];
  private stderr = '';
  private failure: Error | undefined;

  constructor() {
    this.child = spawn('python3', ['-c', SERVER], { stdio: ['pipe', 'pipe', 'pipe'] });
    createInterface({ input: this.child.stdout }).on('line', (line) => this.waiting.shift()?.resolve(line));
    this.child.stderr.setEncoding('utf8').on('data', (text: string) => (this.stderr += text));
    // A python that cannot start (no python3, no numpy/scipy) or dies fails every pending and later request at
    // once with its own stderr, instead of leaving the test to hang until its timeout.
    this.child.on('error', (e) => this.fail(`python3 could not start: ${e.message}`));
    this.child.stdin.on('error', () => {}); // a write to a dead python: its exit handler reports why
    this.child.on('exit', (code, signal) => this.fail(`python3 reference server exited (${signal ?? code})`));
  }

  private fail(what: string): void {
    this.failure ??= new Error(`${what}${this.stderr ? `\n${this.stderr}` : ''}`);
    for (const w of this.waiting.splice(0)) w.reject(this.failure);
  }

  /** Runs `code` (which sets `result`) with `args`; resolves to result. Rejects with python's traceback. */
  run<T = unknown>(code: string, ...args: unknown[]): Promise<T> {
    if (this.failure) return Promise.reject(this.failure);
    return new Promise((resolve, reject) => {
      this.waiting.push({
        resolve: (line) => {
          const answer = JSON.parse(line);
          if (answer.ok) resolve(answer.result as T);
          else reject(new Error(answer.error));
        },
        reject,
      });
      this.child.stdin.write(JSON.stringify({ code, args }) + '\n');
    });
  }

  close(): void {
    this.child.removeAllListeners('exit');
    this.child.stdin.end();
  }
}

/** Decodes hex of little-endian float32 / float64 (how python snippets hand back sample arrays). */
export function hexToFloat32(hex: string): Float32Array {
  const b = Buffer.from(hex, 'hex');
  return new Float32Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
}

export function hexToFloat64(hex: string): Float64Array {
  const b = Buffer.from(hex, 'hex');
  return new Float64Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
}

/** Reads a little-endian float64 raw file (as the fixture script writes scipy's samples). */
export function readF64(path: string): Float64Array {
  const b = readFileSync(path);
  return new Float64Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
}
