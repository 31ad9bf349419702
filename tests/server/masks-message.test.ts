// The masks message from a real agent: `floorline replay recordings/demo.wav --config rig.json` whose `masks` give
// the bridge its own mask. The page gets it right after hello, for the bridge only, in volts (the file's nV/√Hz by
// its SI prefix), referred to the ADC (the demo's samples arrive there), with the points of the file as Python's
// csv module reads them.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startAgent, type Agent } from '../browser/support/agent.ts';
import { TestClient } from './support/ws-client.ts';
import { limitMasksProblem, type LimitMasksMessage } from '../../protocol/limit-masks.ts';

const ROOT = new URL('../../', import.meta.url).pathname;
const dir = mkdtempSync(join(tmpdir(), 'floorline-masks-message-'));
const MASK = join(dir, 'bridge-spec.csv');
writeFileSync(
  MASK,
  'frequency,limit,unit\n# an invented spec of our own\n5,9000,nV/√Hz\n200,1200,nV/√Hz\n3000,800,nV/√Hz\n',
);
writeFileSync(join(dir, 'rig.json'), JSON.stringify({ masks: { bridge: 'bridge-spec.csv' } }));
let agent: Agent;

beforeAll(async () => {
  agent = await startAgent([
    'replay',
    join(ROOT, 'recordings', 'demo.wav'),
    '--config',
    join(dir, 'rig.json'),
    '--http-port',
    '0',
    '--data',
    join(dir, 'data'),
  ]);
}, 60_000);
afterAll(async () => {
  await agent?.stop();
});

describe('masks message', () => {
  it('follows hello with the bridge’s mask from the rig config, as the file says', async () => {
    const c = await TestClient.open(`ws://127.0.0.1:${agent.port}/ws`);
    const m = await c.until(() => c.json.find((x): x is LimitMasksMessage => x.type === 'masks'), 30_000);
    expect(c.json.findIndex((x) => x.type === 'hello')).toBeLessThan(c.json.indexOf(m));
    expect(limitMasksProblem(m)).toBeNull();
    expect(m.masks.map((k) => k.channel)).toEqual(['bridge']);
    const [bridge] = m.masks;
    expect(bridge.unit).toBe('V');
    expect(bridge.referredTo).toBe('adc');
    expect(bridge.file).toBe('bridge-spec.csv');
    // Python's csv module on the same file, '#' lines skipped; nV is 1e-9 (SI Brochure, 9th ed.).
    const ref = JSON.parse(
      execFileSync('python3', [
        '-c',
        `import csv, json, sys
rows = [r for r in csv.DictReader(l for l in open(sys.argv[1], encoding='utf-8') if not l.startswith('#'))]
print(json.dumps({'f': [float(r['frequency']) for r in rows], 'l': [float(r['limit']) * 1e-9 for r in rows]}))`,
        MASK,
      ]).toString(),
    ) as { f: number[]; l: number[] };
    expect(bridge.frequency).toEqual(ref.f);
    bridge.limit.forEach((v, i) => expect(Math.abs(v / ref.l[i] - 1)).toBeLessThan(1e-15));
    c.ws.close();
  }, 60_000);
});
