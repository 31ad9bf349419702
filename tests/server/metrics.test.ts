// /metrics follows the OpenMetrics 1.0 text format. Checked two ways: by the reference parser of the format's
// authors (prometheus_client.openmetrics.parser, run through python3), and against the spec's rules directly.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { startWithFake, type Started } from './support/start.ts';
import { OPENMETRICS_CONTENT_TYPE } from '../../agent/server/metrics.ts';

let s: Started;
let text: string;
let contentType: string | null;

beforeAll(async () => {
  s = await startWithFake();
  s.backend.step();
  const r = await fetch(`${s.base}/metrics`);
  text = await r.text();
  contentType = r.headers.get('content-type');
});
afterAll(() => s.server.close());

/**
 * A python that has prometheus_client: the default python3, else Debian's /usr/bin/python3, which gets it from the
 * apt package python3-prometheus-client (scripts/ensure-system-packages.sh installs it). Without one the check
 * skips, and under CI=true the summary reporter turns that skip into a failed run.
 */
function prometheusPython(): string | null {
  for (const py of ['python3', '/usr/bin/python3']) {
    if (spawnSync(py, ['-c', 'import prometheus_client.openmetrics.parser']).status === 0) return py;
  }
  return null;
}

const python = prometheusPython();

describe('GET /metrics', () => {
  it('is served as OpenMetrics text 1.0.0', () => {
    expect(contentType).toBe(OPENMETRICS_CONTENT_TYPE);
  });

  it.skipIf(python === null)(
    'parses with prometheus_client’s OpenMetrics parser, with the types and units we declare',
    () => {
      const script = [
        'import sys, json',
        'from prometheus_client.openmetrics.parser import text_string_to_metric_families as p',
        'fams = [{"name": f.name, "type": f.type, "unit": f.unit, "samples": [[x.name, x.labels, x.value] for x in f.samples]} for f in p(sys.stdin.read())]',
        'print(json.dumps(fams))',
      ].join('\n');
      const r = spawnSync(python!, ['-c', script], { input: text, encoding: 'utf8' });
      expect(r.stderr).toBe('');
      const fams = JSON.parse(r.stdout) as {
        name: string;
        type: string;
        unit: string;
        samples: [string, Record<string, string>, number][];
      }[];
      const byName = new Map(fams.map((f) => [f.name, f]));
      expect(byName.get('floorline_samples')?.type).toBe('counter');
      expect(byName.get('floorline_samples')?.samples[0]).toEqual(['floorline_samples_total', {}, 800]);
      expect(byName.get('floorline_crc_errors')?.samples[0][2]).toBe(3);
      // Counters once hidden: link errors (sync, malformed, rejected frames, bad text lines) and non-finite frames.
      expect(byName.get('floorline_sync_errors')?.samples[0][2]).toBe(0);
      expect(byName.get('floorline_nonfinite_frames')?.samples[0][2]).toBe(0);
      const rms = byName.get('floorline_band_rms_volts');
      expect(rms?.type).toBe('gauge');
      expect(rms?.unit).toBe('volts');
      // White noise sigma = 1 µV at 8 kS/s: band RMS = sigma·sqrt(2·(bins in band)·binHz/fs) (common practice: PSD 2σ²/fs).
      const row = rms!.samples.find((x) => x[1].channel === 'ch0' && x[1].low_hz === '20')!;
      const binHz = 8000 / 1024;
      let bins = 0;
      for (let k = 0; k <= 512; k++) if (k * binHz >= 20 && k * binHz <= 2000) bins++;
      expect(row[2]).toBeCloseTo(1e-6 * Math.sqrt((2 * bins * binHz) / 8000), 18);
      expect(byName.get('floorline_floor_density_volts_per_root_hertz')?.unit).toBe('volts_per_root_hertz');
      expect(byName.get('floorline_mains_frequency_hertz')?.samples[0][2]).toBe(50);
      expect(byName.get('floorline_alarm_active')?.samples[0]).toEqual([
        'floorline_alarm_active',
        { rule: 'band-rise', channel: 'ch0', band: '20-2000' },
        0,
      ]);
    },
  );

  it('keeps the spec’s rules: ends with # EOF, TYPE before samples, _total counters, unit suffixes, no per-bin series', () => {
    // OpenMetrics 1.0, "Text format": the exposition MUST end with "# EOF" and a newline.
    expect(text.endsWith('\n# EOF\n')).toBe(true);
    const lines = text.trimEnd().split('\n');
    const types = new Map<string, string>();
    const units = new Map<string, string>();
    let series = 0;
    for (const line of lines.slice(0, -1)) {
      const m = /^# (TYPE|UNIT|HELP) ([a-zA-Z_:][a-zA-Z0-9_:]*) (.*)$/.exec(line);
      if (m) {
        if (m[1] === 'TYPE') types.set(m[2], m[3]);
        if (m[1] === 'UNIT') units.set(m[2], m[3]);
        continue;
      }
      const sm = /^([a-zA-Z_:][a-zA-Z0-9_:]*)(\{[^}]*\})? (\S+)$/.exec(line);
      expect(sm, line).not.toBeNull();
      series++;
      const name = sm![1];
      const family = [...types.keys()].find((f) => name === f || name === `${f}_total` || name === `${f}_info`);
      expect(family, `sample ${name} has no TYPE line before it`).toBeDefined();
      if (types.get(family!) === 'counter') expect(name).toBe(`${family}_total`);
      if (types.get(family!) === 'info') expect(name).toBe(`${family}_info`);
    }
    // A family with a UNIT must end in _UNIT (spec: "the unit MUST be a suffix of the MetricFamily name").
    for (const [f, u] of units) expect(f.endsWith(`_${u}`), f).toBe(true);
    // 2 channels × 513 bins would be > 1000 series if bins leaked into metrics.
    expect(series).toBeLessThan(60);
  });
});
