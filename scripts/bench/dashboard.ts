// Dashboard and server costs.
// 1. Browser (headless Chromium): one update of 4 channels × 8193 bins plus a waterfall row, paced at 10 updates/s,
//    through the page's real input path (App.onBinary: decode, unit conversion, max-hold, uPlot redraw, waterfall).
//    Reference in the same run: the chart's redraw alone (uPlot setData + draw of the same arrays). Target: median < 8 ms.
// 2. Agent: CPU time per snapshot with 0, 1, 4 and 16 connected clients (encode once, send to each), against
//    encoding alone.
import { encodeFrame, frameBytes } from '../../protocol/frame.ts';
import { startServer } from '../../agent/server/server.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { FakeBackend } from '../../tests/server/support/fake-backend.ts';
import { launchChromium } from '../../tests/browser/support/browser.ts';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { spawn } from 'node:child_process';

const root = process.cwd() + '/'; // npm run bench runs from the repository root
const CHANNELS = 4;
const SEGMENT = 16384;
const BINS = SEGMENT / 2 + 1;
const FS = 48000;

function median(xs: number[]): number {
  const a = [...xs].sort((x, y) => x - y);
  return a.length % 2 ? a[(a.length - 1) / 2] : (a[a.length / 2 - 1] + a[a.length / 2]) / 2;
}
const pct = (xs: number[], p: number) =>
  [...xs].sort((x, y) => x - y)[Math.min(xs.length - 1, Math.floor(p * xs.length))];

function frames(n: number): ArrayBuffer[] {
  const rng = new SeededRandom(7);
  const out: ArrayBuffer[] = [];
  const psd = Array.from({ length: CHANNELS }, () => new Float64Array(BINS));
  for (let i = 0; i < n; i++) {
    for (const p of psd) for (let k = 0; k < BINS; k++) p[k] = 1e-16 * Math.exp(rng.gaussian()) * (1 + 30 / (k + 1));
    const buf = new ArrayBuffer(frameBytes(CHANNELS, BINS));
    encodeFrame(
      buf,
      {
        kind: 'spectrum',
        seq: i,
        channels: CHANNELS,
        contextId: 1,
        length: BINS,
        sample: (i + 1) * 4800,
        sampleRate: FS,
        binHz: FS / SEGMENT,
      },
      [10, 10, 10, 10],
      psd,
    );
    out.push(buf);
  }
  return out;
}

async function browserBench(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'floorline-bench-'));
  const backend = new FakeBackend({ dataRoot: join(dir, 'data'), channels: CHANNELS });
  const server = await startServer(backend, { port: 0, assetsDir: join(root, 'dist/dashboard') });
  const ctx = await launchChromium({ width: 1440, height: 1000 });
  const page = await ctx.newPage();
  await page.goto(server.url);
  // Polled with evaluate: waitForFunction with a string needs eval, which the page's CSP forbids.
  for (let i = 0; i < 200 && !(await page.evaluate('window.floorline !== undefined')); i++)
    await new Promise((r) => setTimeout(r, 50));
  const context = {
    id: 1,
    settings: { sampleRate: FS, segment: SEGMENT, window: 'hann', overlap: 0.5, detrend: 'mean' },
    averaging: { mode: 'exponential', tauSeconds: 10 },
    nenbw: 1.5,
    enbwHz: (1.5 * FS) / SEGMENT,
    binHz: FS / SEGMENT,
    bins: BINS,
    channels: Array.from({ length: CHANNELS }, (_, i) => ({ name: `ch${i}`, unit: 'V' })),
    mainsHz: 50,
  };
  await page.evaluate(
    `window.floorline.onJson(${JSON.stringify({ type: 'context', context })}); window.floorline.waterfall.snapshotsPerRow = 1;`,
  );
  const bufs = frames(20).map((b) => Buffer.from(b).toString('base64'));
  await page.evaluate(
    `window.__frames = ${JSON.stringify(bufs)}.map((s) => Uint8Array.from(atob(s), (c) => c.charCodeAt(0)).buffer)`,
  );
  // Interleaved in one loop so machine noise hits all three alike: every 100 ms (10 updates/s) one full update,
  // then the chart redraw alone and a waterfall row alone, 33 ms apart. Each time includes a microtask turn so
  // uPlot's batched commit has drawn.
  const run = (n: number): Promise<{ full: number[]; chart: number[]; fall: number[] }> =>
    page.evaluate(`(async () => {
      const app = window.floorline, v = app.spectrum, out = { full: [], chart: [], fall: [] };
      const tick = () => new Promise((r) => setTimeout(r, 33));
      for (let i = 0; i < ${n}; i++) {
        const buf = window.__frames[i % window.__frames.length].slice(0);
        let t0 = performance.now();
        app.onBinary(buf);
        v.flushDraw(); // the draw the next animation frame would do
        await new Promise((r) => queueMicrotask(r));
        out.full.push(performance.now() - t0);
        await tick();
        t0 = performance.now();
        v.plot.setData(v.data, false); v.plot.redraw();
        await new Promise((r) => queueMicrotask(r));
        out.chart.push(performance.now() - t0);
        await tick();
        t0 = performance.now();
        app.waterfall.push(new Float32Array(buf, 48 + 8 * ${CHANNELS}, ${BINS}), i);
        out.fall.push(performance.now() - t0);
        await tick();
      }
      return out;
    })()`) as Promise<{ full: number[]; chart: number[]; fall: number[] }>;
  await run(10); // warm-up
  const { full, chart, fall } = await run(150);
  console.log(
    `browser: one update, ${CHANNELS} ch × ${BINS} bins + waterfall row, at 10 updates/s (150 interleaved samples each, headless Chromium)`,
  );
  console.log(
    `  floorline update (decode, convert, max-hold, redraw, waterfall)  median ${median(full).toFixed(2)} ms  p90 ${pct(full, 0.9).toFixed(2)} ms  target < 8 ms: ${median(full) < 8 ? 'met' : 'NOT met'}`,
  );
  console.log(
    `  reference: uPlot setData + redraw of the same arrays             median ${median(chart).toFixed(2)} ms  p90 ${pct(chart, 0.9).toFixed(2)} ms`,
  );
  console.log(
    `  of which the waterfall row alone                               median ${median(fall).toFixed(2)} ms  p90 ${pct(fall, 0.9).toFixed(2)} ms`,
  );
  // The timeline panel: a week of 1-min rows (10080), as the store sends it downsampled to ~1000 points and raw,
  // with 50 incidents shaded; each draw timed whole (series build, uPlot create or setData, spans).
  const tl = (await page.evaluate(`(() => {
    const app = window.floorline, out = { down: [], raw: [] };
    const mk = (n) => { const t0 = Date.parse('2026-11-25T00:00:00Z'), rows = [];
      for (let i = 0; i < n; i++) { const v = 1e-7 * (1 + 0.1 * Math.sin(i / 50)); rows.push({ t: i * 604800 / n, sample: i, wallTime: new Date(t0 + i * 604800000 / n).toISOString(), min: v * 0.9, mean: v, max: v * 1.1, gap: i % 997 === 0 }); }
      return { channel: 'ch0', quantity: 'bandRms', band: [100, 1000], unit: 'V', rows }; };
    const inc = Array.from({ length: 50 }, (_, k) => ({ id: 'i' + k, channel: 'ch0', rules: ['spur'], members: [], start: { sample: 0, t: 0, wallTime: new Date(Date.parse('2026-11-25T00:00:00Z') + k * 12000000).toISOString() }, end: { sample: 0, t: 0, wallTime: new Date(Date.parse('2026-11-25T00:00:00Z') + k * 12000000 + 600000).toISOString() }, settled: null, peak: null, acknowledged: false, notes: [], capture: null }));
    const down = mk(1000), raw = mk(10080);
    for (let i = 0; i < 30; i++) { app.timeline.show(down, inc, 0); out.down.push(app.timeline.lastDrawMs); app.timeline.show(raw, inc, 0); out.raw.push(app.timeline.lastDrawMs); }
    return out;
  })()`)) as { down: number[]; raw: number[] };
  console.log(
    `  timeline: a week of 1-min rows, 50 incidents, downsampled to 1000 points  median ${median(tl.down).toFixed(2)} ms  (raw 10080 rows: ${median(tl.raw).toFixed(2)} ms)  target < 300 ms: ${median(tl.down) < 300 ? 'met' : 'NOT met'}`,
  );
  await ctx.close();
  await server.close();
}

async function agentBench(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'floorline-bench-'));
  const backend = new FakeBackend({
    dataRoot: join(dir, 'data'),
    channels: CHANNELS,
    segment: SEGMENT,
    sampleRate: FS,
  });
  const server = await startServer(backend, {
    port: 0,
    assetsDir: dir,
    statusIntervalMs: 60_000,
    maxFramesPerSecond: 1e6,
  });
  const N = 200;
  // Reference: encoding one snapshot's frame alone.
  const psd = Array.from({ length: CHANNELS }, () => new Float64Array(BINS).fill(1e-16));
  const buf = new ArrayBuffer(frameBytes(CHANNELS, BINS));
  let t = process.cpuUsage();
  for (let i = 0; i < N; i++)
    encodeFrame(
      buf,
      { kind: 'spectrum', seq: i, channels: CHANNELS, contextId: 1, length: BINS, sample: i, sampleRate: FS, binHz: 1 },
      null,
      psd,
    );
  const encodeUs = (process.cpuUsage(t).user + process.cpuUsage(t).system) / N;
  console.log(
    `agent: CPU per snapshot (${CHANNELS} ch × ${BINS} bins, ${(frameBytes(CHANNELS, BINS) / 1024).toFixed(0)} KiB frame), ${N} snapshots each at 100/s (clients in a child process keep up; pacing off)`,
  );
  console.log(`  reference: encode the frame only          ${encodeUs.toFixed(0)} µs`);
  // Clients live in a child process, so their receiving costs are not counted as the agent's.
  const clientScript = `const { WebSocket } = require('ws'); const n = Number(process.argv[1]); let open = 0;
    for (let i = 0; i < n; i++) { const ws = new WebSocket(process.argv[2], { perMessageDeflate: false });
      ws.on('open', () => { if (++open === n) console.log('ready'); }); ws.on('message', () => {}); }
    process.stdin.on('data', () => {}); process.stdin.on('end', () => process.exit(0));`;
  // Prebuilt snapshot and block, handed straight to the server's subscription: only the server's work is timed.
  backend.step(FS / 10);
  const snap = backend.last!;
  const block = {
    firstSample: 0,
    frames: FS / 10,
    data: Array.from({ length: CHANNELS }, () => new Float64Array(FS / 10)),
  };
  let sample = snap.sample;
  const feed = (): void => {
    sample += FS / 10;
    block.firstSample = sample - FS / 10 + 1;
    for (const sub of backend.subs) {
      sub.block(block);
      sub.snapshot({ ...snap, sample, t: sample / FS });
    }
  };
  let base = 0;
  for (const n of [0, 1, 4, 16]) {
    const child = n
      ? spawn(process.execPath, ['-e', clientScript, String(n), server.url.replace('http', 'ws') + 'ws'], {
          cwd: root,
          stdio: ['pipe', 'pipe', 'inherit'],
        })
      : null;
    if (child)
      await new Promise<void>((r) => child.stdout!.on('data', (d: Buffer) => d.toString().includes('ready') && r()));
    feed(); // warm
    await new Promise((r) => setTimeout(r, 200));
    const sent0 = server.status().clients;
    t = process.cpuUsage();
    const w0 = performance.now();
    for (let i = 0; i < N; i++) {
      feed();
      await new Promise((r) => setTimeout(r, 10)); // 100 snapshots/s: clients keep up, so every frame is sent
    }
    await new Promise((r) => setTimeout(r, 300)); // let sends drain (their CPU counts)
    const c = process.cpuUsage(t);
    const us = (c.user + c.system) / N;
    if (n === 0) base = us;
    const st = server.status().clients;
    console.log(
      `  ${String(n).padStart(2)} client(s): ${us.toFixed(0).padStart(6)} µs per snapshot${n ? `, ${((us - base) / n).toFixed(0)} µs per client` : ' (trace ring only: nothing is encoded without clients)'}; wall ${((performance.now() - w0) / N).toFixed(2)} ms; frames sent ${st.framesSent - sent0.framesSent}, skipped ${st.framesSkipped - sent0.framesSkipped}`,
    );
    if (child) {
      child.stdin!.end();
      await new Promise((r) => child.once('exit', r));
      await new Promise((r) => setTimeout(r, 200));
    }
  }
  await server.close();
}

if (!process.argv.includes('--browser-only')) await agentBench();
await browserBench();
