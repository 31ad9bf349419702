// Runs a python3 snippet (numpy 2.x, scipy 1.17) as the outside reference for a test. Arrays travel as
// base64 little-endian float64; the snippet reads `inp` (dict) and assigns `out` (dict of lists/arrays/numbers).
import { spawnSync } from 'node:child_process';

const PRELUDE = `
import sys, json, base64
import numpy as np
def _dec(v):
    if isinstance(v, dict) and '__f64' in v:
        return np.frombuffer(base64.b64decode(v['__f64']), dtype='<f8').copy()
    return v
def _enc(v):
    if isinstance(v, np.ndarray):
        return {'__f64': base64.b64encode(np.ascontiguousarray(v, dtype='<f8').tobytes()).decode()}
    if isinstance(v, (np.floating, np.integer)):
        return float(v)
    if isinstance(v, (list, tuple)):
        return [_enc(e) for e in v]
    if isinstance(v, dict):
        return {k: _enc(e) for k, e in v.items()}
    return v
inp = {k: _dec(v) for k, v in json.loads(sys.stdin.read()).items()}
out = {}
`;
const POSTLUDE = `
sys.stdout.write(json.dumps(_enc(out)))
`;

type Json = number | string | boolean | null | Json[] | { [k: string]: Json };
export type PyValue = Json | Float64Array | PyValue[] | { [k: string]: PyValue };

function encode(v: PyValue): unknown {
  if (v instanceof Float64Array) return { __f64: Buffer.from(v.buffer, v.byteOffset, v.byteLength).toString('base64') };
  if (Array.isArray(v)) return v.map(encode);
  if (v !== null && typeof v === 'object')
    return Object.fromEntries(Object.entries(v).map(([k, e]) => [k, encode(e as PyValue)]));
  return v;
}

function decode(v: unknown): unknown {
  if (v !== null && typeof v === 'object' && '__f64' in (v as Record<string, unknown>)) {
    const b = Buffer.from((v as { __f64: string }).__f64, 'base64');
    const out = new Float64Array(b.byteLength / 8);
    new Uint8Array(out.buffer).set(b);
    return out;
  }
  if (Array.isArray(v)) return v.map(decode);
  if (v !== null && typeof v === 'object') return Object.fromEntries(Object.entries(v).map(([k, e]) => [k, decode(e)]));
  return v;
}

/** Runs `code` with `inp` bound to the decoded input; returns the decoded `out`. Throws with python's stderr. */
export function runPython<T = Record<string, unknown>>(code: string, input: Record<string, PyValue> = {}): T {
  const r = spawnSync('python3', ['-c', PRELUDE + code + POSTLUDE], {
    input: JSON.stringify(encode(input)),
    maxBuffer: 1 << 30,
    encoding: 'utf8',
  });
  if (r.status !== 0) throw new Error(`python3 failed (${r.error?.message ?? r.status}): ${r.stderr}`);
  return decode(JSON.parse(r.stdout)) as T;
}
