// /api/trend and /api/incidents on a running agent: the same JSON as the CLI, bounded in rows, read-only, behind
// the token and origin checks.
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';

const RATE = 4000;
const TOKEN = 'store-api-test-token-0123';
const bin = join(root, 'bin/floorline.mjs');
let dir: string;
let agent: ChildProcess;
let base: string;
let store: string;

beforeAll(async () => {
  dir = tempDir('store-api');
  const py = new Python();
  const wav = join(dir, 'rig.wav');
  await py.run(
    `rng = np.random.default_rng(11)
wavfile.write(args[0], args[1], (1e-3 * rng.standard_normal((30 * args[1], 2))).astype(np.float32))`,
    wav,
    RATE,
  );
  py.close();
  store = join(dir, 'api.sqlite');
  agent = spawn(
    process.execPath,
    [
      bin,
      'replay',
      wav,
      '--speed',
      '10',
      '--loop',
      '--store',
      store,
      '--http-port',
      '0',
      '--token',
      TOKEN,
      '--data',
      join(dir, 'data'),
      '--segment',
      '512',
    ],
    {
      stdio: ['ignore', 'pipe', 'pipe'],
    },
  );
  base = await new Promise<string>((resolve, reject) => {
    let out = '';
    const timer = setTimeout(() => reject(new Error(`no dashboard URL: ${out}`)), 20_000);
    agent.stdout!.setEncoding('utf8').on('data', (t: string) => {
      out += t;
      const m = /dashboard\s+(http:\/\/[^/\s]+)\//.exec(out);
      if (m) {
        clearTimeout(timer);
        resolve(m[1]);
      }
    });
  });
  // Wait until at least 25 one-second rows of ch0 are committed (about 3 s at 10×, longer on a loaded machine).
  for (let i = 0; i < 120; i++) {
    const r = spawnSync(
      process.execPath,
      [bin, 'trend', '--store', store, '--channel', 'ch0', '--every', '1s', '--json'],
      { encoding: 'utf8' },
    );
    if (r.status === 0 && (JSON.parse(r.stdout) as { series: { rows: unknown[] }[] }).series[0]?.rows.length >= 25)
      break;
    await new Promise((res) => setTimeout(res, 500));
  }
}, 120_000);

afterAll(async () => {
  agent.kill('SIGTERM');
  await new Promise((r) => (agent.exitCode !== null ? r(null) : agent.once('exit', r)));
});

const get = (path: string, headers: Record<string, string> = { authorization: `Bearer ${TOKEN}` }) =>
  fetch(base + path, { headers });

describe('/api/trend and /api/incidents', () => {
  it('refuses requests without the token or from another origin, and anything but GET', async () => {
    expect((await get('/api/trend', {})).status).toBe(401);
    expect((await get('/api/incidents', {})).status).toBe(401);
    expect((await get('/api/trend', { authorization: `Bearer ${TOKEN}`, origin: 'http://evil.example' })).status).toBe(
      403,
    );
    expect(
      (await fetch(base + '/api/trend', { method: 'POST', headers: { authorization: `Bearer ${TOKEN}` } })).status,
    ).toBe(405);
  });

  it('answers the same JSON as floorline trend, downsampled to at most `points` rows per series', async () => {
    const r = await get('/api/trend?channel=ch0&every=1s&points=5');
    expect(r.status).toBe(200);
    const body = (await r.json()) as {
      every: string;
      series: { channel: string; quantity: string; rows: { mean: number | null; gap: boolean }[] }[];
    };
    expect(body.every).toBe('1s');
    expect(body.series.length).toBeGreaterThan(1);
    for (const s of body.series) {
      expect(s.channel).toBe('ch0');
      expect(s.rows.length).toBeGreaterThan(0);
      expect(s.rows.length).toBeLessThanOrEqual(5);
    }
    const full = (await (await get('/api/trend?channel=ch0&every=1s&points=10000')).json()) as typeof body;
    const rows = full.series[0].rows.length;
    expect(rows).toBeGreaterThan(20);
    // The merged rows' RMS lies between the finest rows' extremes (a mean of powers).
    const means = full.series[0].rows.filter((x) => !x.gap).map((x) => x.mean!);
    for (const x of body.series[0].rows)
      if (!x.gap) expect(x.mean!).toBeGreaterThanOrEqual(Math.min(...means) * (1 - 1e-12));
    // What the CLI prints for the store (the agent is still writing, so compare the first rows only).
    const cli = spawnSync(
      process.execPath,
      [bin, 'trend', '--store', store, '--channel', 'ch0', '--every', '1s', '--json'],
      { encoding: 'utf8' },
    );
    expect(cli.status, cli.stderr).toBe(0);
    const cliRows = (JSON.parse(cli.stdout) as typeof body).series[0].rows.slice(0, 10);
    expect(full.series[0].rows.slice(0, 10)).toEqual(cliRows);
  });

  it('bad parameters get 400 naming the parameter; hostile text stays a value, never SQL', async () => {
    const cases: [string, RegExp][] = [
      ['/api/trend?every=5m', /'every' must be one of 1s, 1m, 1h/],
      ['/api/trend?points=0', /'points' must be an integer from 1 to 10000/],
      ['/api/trend?from=yesterday', /'from': 'yesterday' is not a time/],
      ['/api/trend?band=abc', /'band' 'abc' is not LO:HI/],
      [`/api/trend?channel=${encodeURIComponent("ch0' OR 1=1 --")}`, /no channel 'ch0' OR 1=1 --' in the store/],
    ];
    for (const [path, message] of cases) {
      const r = await get(path);
      expect(r.status, path).toBe(400);
      expect(((await r.json()) as { error: { message: string } }).error.message).toMatch(message);
    }
    const inc = await get('/api/incidents?from=t=0');
    expect(inc.status).toBe(200);
    expect(Array.isArray(((await inc.json()) as { incidents: unknown[] }).incidents)).toBe(true);
  });
});
