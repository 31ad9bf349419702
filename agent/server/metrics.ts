// GET /metrics in the OpenMetrics 1.0 text format: a few band figures per channel, alarm states as gauges and
// stream counters; never one series per FFT bin. Rules followed (OpenMetrics 1.0 spec, "Text format"):
// counters are exposed as NAME_total under "# TYPE NAME counter"; a family with a unit ends in _UNIT and
// declares "# UNIT"; label values escape \ " and newline; the exposition ends with "# EOF".
import type { AgentStatus, BandRow } from '../../protocol/messages.ts';

export const OPENMETRICS_CONTENT_TYPE = 'application/openmetrics-text; version=1.0.0; charset=utf-8';

/** OpenMetrics unit suffix for a channel unit; units without a base-unit name keep a sanitised form. */
export function unitSuffix(unit: string): string {
  switch (unit) {
    case 'V':
      return 'volts';
    case 'A':
      return 'amperes';
    case 'Pa':
      return 'pascals';
    case 'FS':
      return 'full_scale';
    default: {
      const s = unit
        .toLowerCase()
        .replace(/[^a-z0-9]+/g, '_')
        .replace(/^_+|_+$/g, '');
      return s === '' ? 'units' : s;
    }
  }
}

function escapeLabel(v: string): string {
  return v.replace(/\\/g, '\\\\').replace(/"/g, '\\"').replace(/\n/g, '\\n');
}

function labels(pairs: Record<string, string>): string {
  const body = Object.entries(pairs)
    .map(([k, v]) => `${k}="${escapeLabel(v)}"`)
    .join(',');
  return body ? `{${body}}` : '';
}

function value(v: number): string {
  if (Number.isNaN(v)) return 'NaN';
  if (v === Infinity) return '+Inf';
  if (v === -Infinity) return '-Inf';
  return String(v);
}

class Exposition {
  private readonly lines: string[] = [];
  /** Label sets already written in the current family: a repeated one would make the exposition invalid. */
  private seen = new Set<string>();

  family(name: string, type: 'gauge' | 'counter' | 'info', help: string, unit?: string): void {
    this.seen = new Set();
    this.lines.push(`# TYPE ${name} ${type}`);
    if (unit) this.lines.push(`# UNIT ${name} ${unit}`);
    this.lines.push(`# HELP ${name} ${help.replace(/\\/g, '\\\\').replace(/\n/g, '\\n')}`);
  }

  sample(name: string, l: Record<string, string>, v: number): void {
    const key = name + labels(l);
    if (this.seen.has(key)) return;
    this.seen.add(key);
    this.lines.push(`${key} ${value(v)}`);
  }

  text(): string {
    return this.lines.join('\n') + '\n# EOF\n';
  }
}

function bandLabels(b: BandRow): Record<string, string> {
  return { channel: b.channel, low_hz: String(b.low), high_hz: String(b.high) };
}

function byUnit(status: AgentStatus): Map<string, BandRow[]> {
  const unitOf = new Map(status.channels.map((c) => [c.name, c.unit]));
  const groups = new Map<string, BandRow[]>();
  for (const b of status.bands) {
    const suffix = unitSuffix(unitOf.get(b.channel) ?? '');
    const rows = groups.get(suffix) ?? [];
    rows.push(b);
    groups.set(suffix, rows);
  }
  return groups;
}

export function renderMetrics(status: AgentStatus, version: string): string {
  const x = new Exposition();
  x.family('floorline_build', 'info', 'Agent version and wire protocol.');
  x.sample('floorline_build_info', { version, protocol: String(status.protocol) }, 1);

  const counters: [string, string, number][] = [
    ['floorline_samples', 'Sample instants delivered by the source.', status.samples],
    ['floorline_gaps', 'Gaps (runs of lost samples) seen in the stream.', status.gaps],
    ['floorline_lost_samples', 'Samples lost in gaps.', status.lostSamples],
    ['floorline_crc_errors', 'Frames from the board that failed their CRC.', status.crcErrors],
    [
      'floorline_sync_errors',
      'Bytes skipped to resync, malformed or rejected frames, and bad text lines from the board.',
      status.syncErrors ?? 0,
    ],
    [
      'floorline_nonfinite_frames',
      'Frames excluded for NaN, ±Inf or values beyond float32.',
      status.nonfiniteFrames ?? 0,
    ],
    ['floorline_dropped_blocks', 'Whole blocks dropped because analysis fell behind.', status.droppedBlocks],
    ['floorline_dashboard_frames_sent', 'Binary frames sent to dashboard clients.', status.clients.framesSent],
    [
      'floorline_dashboard_frames_skipped',
      'Binary frames skipped for slow dashboard clients (latest wins).',
      status.clients.framesSkipped,
    ],
    [
      'floorline_dashboard_clients_dropped',
      'Dashboard clients the agent closed: too slow, too many messages, or no heartbeat answer.',
      status.clients.dropped,
    ],
  ];
  for (const [name, help, v] of counters) {
    x.family(name, 'counter', help);
    x.sample(`${name}_total`, {}, v);
  }

  x.family(
    'floorline_sample_time_seconds',
    'gauge',
    'Sample time of the newest sample (sample index / rate).',
    'seconds',
  );
  x.sample('floorline_sample_time_seconds', {}, status.t);
  if (status.sampleRate !== null) {
    x.family('floorline_sample_rate_hertz', 'gauge', 'Sample rate of the stream.', 'hertz');
    x.sample('floorline_sample_rate_hertz', {}, status.sampleRate);
  }
  if (status.mainsHz !== null) {
    x.family('floorline_mains_frequency_hertz', 'gauge', 'Mains fundamental, configured or measured.', 'hertz');
    x.sample('floorline_mains_frequency_hertz', {}, status.mainsHz);
  }
  x.family('floorline_dashboard_clients', 'gauge', 'Connected dashboard clients.');
  x.sample('floorline_dashboard_clients', {}, status.clients.connected);
  if (status.disk) {
    const d = status.disk;
    const gauges: [string, string, number, string?][] = [
      ['floorline_disk_used_bytes', 'Bytes of recordings and captures kept in the data folder.', d.usedBytes, 'bytes'],
      ['floorline_disk_free_bytes', "Bytes free on the data folder's file system.", d.freeBytes, 'bytes'],
      [
        'floorline_disk_min_free_bytes',
        'Free-space floor below which continuous recording pauses.',
        d.minFreeBytes,
        'bytes',
      ],
      ['floorline_history_days', 'Days of recordings held (oldest kept file to now).', d.historyDays, 'days'],
      [
        'floorline_recording_paused',
        '1 while continuous recording is paused by the free-space floor.',
        d.paused ? 1 : 0,
      ],
    ];
    for (const [name, help, v, unit] of gauges) {
      x.family(name, 'gauge', help, unit);
      x.sample(name, {}, v);
    }
    x.family('floorline_retention_deleted_files', 'counter', 'Recording files deleted by the retention quotas.');
    x.sample('floorline_retention_deleted_files_total', {}, d.deletedFiles);
  }
  if (status.store) {
    const st = status.store;
    x.family(
      'floorline_store_commit_stalls',
      'counter',
      'Times the history store went 10 s without a commit while rows waited.',
    );
    x.sample('floorline_store_commit_stalls_total', {}, st.commitStalls);
    x.family('floorline_store_stalled', 'gauge', '1 while the history store is not committing although rows wait.');
    x.sample('floorline_store_stalled', {}, st.stalled ? 1 : 0);
    x.family('floorline_store_storing', 'gauge', '0 while the disk refuses the history store (history not kept).');
    x.sample('floorline_store_storing', {}, st.storing ? 1 : 0);
    x.family('floorline_store_pending_rows', 'gauge', 'Trend rows and records waiting for the next commit.');
    x.sample('floorline_store_pending_rows', {}, st.pending);
  }
  x.family('floorline_recording_active', 'gauge', '1 while a continuous recording is being written.');
  x.sample('floorline_recording_active', {}, status.recording.state === 'recording' ? 1 : 0);
  x.family(
    'floorline_recording_failed',
    'gauge',
    '1 when recording was asked for but writing failed (analysis goes on).',
  );
  x.sample('floorline_recording_failed', {}, status.recording.state === 'failed' ? 1 : 0);

  for (const [suffix, rows] of byUnit(status)) {
    const rms = `floorline_band_rms_${suffix}`;
    x.family(rms, 'gauge', 'Live band RMS, sqrt(sum of PSD x bin width) over the band.', suffix);
    for (const b of rows) x.sample(rms, bandLabels(b), b.rms);
    const base = `floorline_band_baseline_rms_${suffix}`;
    x.family(base, 'gauge', 'Band RMS of the baseline.', suffix);
    for (const b of rows) if (b.baselineRms !== null) x.sample(base, bandLabels(b), b.baselineRms);
    const floor = `floorline_floor_density_${suffix}_per_root_hertz`;
    x.family(floor, 'gauge', 'Median amplitude spectral density over the band.', `${suffix}_per_root_hertz`);
    for (const b of rows) x.sample(floor, bandLabels(b), b.floorDensity);
  }
  if (status.bands.length) {
    x.family(
      'floorline_band_rise_decibels',
      'gauge',
      'Band power relative to the baseline, 10 log10(live/baseline).',
      'decibels',
    );
    for (const b of status.bands)
      if (b.deltaDb !== null) x.sample('floorline_band_rise_decibels', bandLabels(b), b.deltaDb);
    x.family('floorline_band_threshold_decibels', 'gauge', 'Rise at which the band alarm is raised.', 'decibels');
    for (const b of status.bands)
      if (b.thresholdDb !== null) x.sample('floorline_band_threshold_decibels', bandLabels(b), b.thresholdDb);
  }
  // Live low-frequency figures: three per channel (never one series per point).
  const lf = status.lowFrequency ?? [];
  const lfFamilies: [
    string,
    string,
    (r: NonNullable<AgentStatus['lowFrequency']>[number]) => number | undefined,
    (u: string) => string,
  ][] = [
    [
      'floorline_lowfreq_corner',
      'Corner of the 1/f fit to the log-frequency density.',
      (r) => r.fit?.corner,
      () => 'hertz',
    ],
    [
      'floorline_lowfreq_white_density',
      'White density e_w of the 1/f fit.',
      (r) => r.fit?.whiteAsd,
      (u) => `${u}_per_root_hertz`,
    ],
    [
      'floorline_lowfreq_peak_to_peak',
      'Max minus min over the newest 0.1-10 Hz window.',
      (r) => r.peakToPeak?.peakToPeak,
      (u) => u,
    ],
  ];
  for (const [stem, help, pick, unit] of lfFamilies) {
    const byFamily = new Map<string, [string, number][]>();
    for (const r of lf) {
      const v = pick(r);
      if (v === undefined) continue;
      const name = `${stem}_${unit(unitSuffix(r.unit))}`;
      byFamily.set(name, [...(byFamily.get(name) ?? []), [r.channel, v]]);
    }
    for (const [name, rows] of byFamily) {
      x.family(name, 'gauge', help, name.slice(stem.length + 1));
      for (const [channel, v] of rows) x.sample(name, { channel }, v);
    }
  }
  // One series per rule, channel and band: lines of one rule (mains harmonics, spurs) fold into it (raised if any is).
  const groups = new Map<string, { labels: Record<string, string>; active: boolean; acknowledged: boolean }>();
  for (const a of status.alarms) {
    const l: Record<string, string> = { rule: a.rule, channel: a.channel };
    if (a.band) l.band = `${a.band[0]}-${a.band[1]}`;
    const key = labels(l);
    const g = groups.get(key) ?? { labels: l, active: false, acknowledged: true };
    if (a.state === 'raised') {
      g.active = true;
      g.acknowledged &&= a.acknowledged;
    }
    groups.set(key, g);
  }
  x.family('floorline_alarm_active', 'gauge', '1 while an alarm is raised (the agent applies hysteresis itself).');
  for (const g of groups.values()) x.sample('floorline_alarm_active', g.labels, g.active ? 1 : 0);
  x.family('floorline_alarm_acknowledged', 'gauge', '1 when every raised alarm of the series has been acknowledged.');
  for (const g of groups.values())
    x.sample('floorline_alarm_acknowledged', g.labels, g.active && g.acknowledged ? 1 : 0);
  return x.text();
}
