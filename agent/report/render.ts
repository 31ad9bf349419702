// The report as one self-contained HTML document: no scripts, no external resources, CSS and SVG inline. The
// generation time sits in one marked element (id="generated"); everything else depends on the store and span only.
import { formatSi } from '../../protocol/si.ts';
import { esc } from './html-escape.ts';
import { linePlot } from './svg-plot.ts';
import type { ReportData } from './collect.ts';
import type { IncidentView } from '../store/incident-query.ts';

const CSS = `body{font:13px/1.45 system-ui,sans-serif;margin:24px auto;max-width:820px;color:#222}
h1{font-size:20px}h2{font-size:16px;border-bottom:1px solid #ccc;margin-top:28px}table{border-collapse:collapse;width:100%;margin:8px 0}
th,td{border:1px solid #ddd;padding:3px 6px;text-align:left;vertical-align:top;overflow-wrap:break-word}table.incidents{font-size:11px}th{background:#f3f3f3}td.n{text-align:right;font-variant-numeric:tabular-nums}
.muted{color:#666}.caution{border:1px solid #c90;background:#fff8e5;padding:8px 12px}@media print{h2{break-after:avoid}svg{break-inside:avoid}}`;

function quantile(sorted: number[], q: number): number {
  if (sorted.length === 0) return NaN;
  const pos = (sorted.length - 1) * q;
  const i = Math.floor(pos);
  return sorted[i] + (sorted[Math.min(i + 1, sorted.length - 1)] - sorted[i]) * (pos - i);
}

const si = (v: number | null | undefined, unit: string) =>
  v === null || v === undefined || !Number.isFinite(v) ? '—' : formatSi(v, unit);

function duration(i: IncidentView): string {
  if (!i.end) return 'open';
  const s = i.end.t - i.start.t;
  return s < 120 ? `${s.toFixed(1)} s` : s < 7200 ? `${(s / 60).toFixed(1)} min` : `${(s / 3600).toFixed(2)} h`;
}

function memberText(i: IncidentView): string {
  return i.members
    .map(
      (m) =>
        `${m.rule}${m.band ? ` ${m.band[0]}–${m.band[1]} Hz` : ''}${m.frequency !== undefined ? ` ${m.frequency.toFixed(2)} Hz` : ''}${m.harmonic ? ` (h${m.harmonic})` : ''}`,
    )
    .join('; ');
}

export function renderReport(d: ReportData, generatedAt: string, version: string): string {
  const unitOf = new Map(d.series.filter((s) => s.quantity === 'bandRms').map((s) => [s.channel, s.unit]));
  const channels = [...unitOf.keys()];
  const settings = d.runs.at(-1)?.settings ?? {};
  const out: string[] = [];
  out.push(
    `<!DOCTYPE html><html lang="en"><head><meta charset="utf-8"><meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'; img-src data:">`,
  );
  out.push(`<title>floorline report ${esc(d.from)} – ${esc(d.to)}</title><style>${CSS}</style></head><body>`);
  out.push(`<h1>Noise floor report</h1>`);
  out.push(
    `<p>Span ${esc(d.from)} – ${esc(d.to)} (wall time); t = ${d.fromT.toFixed(3)} – ${d.toT.toFixed(3)} s (sample time). Trend resolution ${esc(d.every)}.</p>`,
  );
  out.push(`<p class="muted" id="generated">Generated ${esc(generatedAt)} by floorline ${esc(version)}.</p>`);

  out.push(
    `<h2>1. Rig and settings</h2><table><tr><th>run</th><th>command</th><th>source</th><th>sample rate</th><th>started</th><th>analysis</th></tr>`,
  );
  for (const r of d.runs) {
    out.push(
      `<tr><td class="n">${r.id}</td><td>${esc(r.command)}</td><td>${esc(r.source)}</td><td class="n">${esc(si(r.sampleRate, 'S/s'))}</td><td>${esc(r.startWall)}</td><td>${esc(`${r.settings.window}, segment ${r.settings.segment}, overlap ${r.settings.overlap}, detrend ${r.settings.detrend}`)}</td></tr>`,
    );
  }
  out.push(
    `</table><p>Channels: ${channels.map((c) => `${esc(c)} (${esc(unitOf.get(c))})`).join(', ') || '—'}. Window ${esc(settings.window)}, segment ${esc(settings.segment)}, overlap ${esc(settings.overlap)}, detrend ${esc(settings.detrend)}.</p>`,
  );

  out.push(
    `<h2>2. Summary</h2><p class="muted">Per channel and band over the span: median and 95th percentile of the ${esc(d.every)} band RMS rows, the largest single-segment band RMS, and the time covered by band-rise incidents of that band.</p>`,
  );
  out.push(
    `<table><tr><th>channel</th><th>band</th><th>median</th><th>p95</th><th>max</th><th>time above threshold</th></tr>`,
  );
  for (const s of d.series.filter((x) => x.quantity === 'bandRms')) {
    const means = s.rows
      .filter((r) => !r.gap && r.mean !== null)
      .map((r) => r.mean!)
      .sort((a, b) => a - b);
    const max = Math.max(...s.rows.filter((r) => !r.gap).map((r) => r.max!));
    const above = d.incidents
      .filter(
        (i) =>
          i.channel === s.channel &&
          i.members.some(
            (m) =>
              m.rule === 'band-rise' &&
              m.band &&
              s.band &&
              Math.abs(m.band[0] - s.band[0]) < 0.01 * s.band[0] + 0.01 &&
              Math.abs(m.band[1] - s.band[1]) < 0.01 * s.band[1],
          ),
      )
      .reduce((a, i) => a + ((i.end?.t ?? d.toT) - i.start.t), 0);
    out.push(
      `<tr><td>${esc(s.channel)}</td><td>${esc(`${s.band![0]}–${s.band![1]} Hz`)}</td><td class="n">${esc(si(quantile(means, 0.5), s.unit))}</td><td class="n">${esc(si(quantile(means, 0.95), s.unit))}</td><td class="n">${esc(si(max, s.unit))}</td><td class="n">${above > 0 ? `${above.toFixed(1)} s` : '0 s'}</td></tr>`,
    );
  }
  out.push('</table>');

  out.push(`<h2 id="incidents">3. Incidents</h2>`);
  if (d.incidents.length === 0) out.push('<p>No incidents in this span.</p>');
  else {
    out.push(
      `<table class="incidents"><tr><th>incident</th><th>start → end</th><th>members</th><th>settled</th><th>peak</th><th>ack.</th><th>notes</th><th>capture</th></tr>`,
    );
    for (const i of d.incidents) {
      const unit = unitOf.get(i.channel) ?? '';
      const lvl = (x: { levelDb: number; amplitude?: number } | null) =>
        x
          ? `${x.levelDb.toFixed(1)} dB re baseline${x.amplitude !== undefined ? `, ${si(x.amplitude, unit)} rms` : ''}`
          : '—';
      const notes = i.notes;
      const when = (p: { wallTime: string; t: number }) =>
        `${esc(p.wallTime.replace('T', ' ').replace('Z', ''))} (t=${p.t.toFixed(3)} s)`;
      out.push(
        `<tr><td>${esc(i.id)}<br>${esc(i.channel)}</td><td>${when(i.start)} →<br>${i.end ? when(i.end) : 'open'}<br>${esc(duration(i))}</td><td>${esc(memberText(i))}</td><td>${esc(lvl(i.settled))}</td><td>${esc(lvl(i.peak))}</td><td>${i.acknowledged ? 'yes' : 'no'}</td>` +
          `<td>${notes.map((n) => `${esc(n.wallTime)}: ${esc(n.text)}`).join('<br>') || '—'}</td><td>${i.capture ? `<a href="${esc(i.capture)}">${esc(i.capture.split('/').pop())}</a>` : '—'}</td></tr>`,
      );
    }
    out.push('</table>');
  }

  out.push(
    `<h2 id="trends">4. Trends</h2><p class="muted">Band RMS (${esc(d.every)} rows, mean of the segment band powers in each) and floor density; shaded: incidents of the channel; dashed: notes. Breaks in a line are gaps.</p>`,
  );
  const x0 = Date.parse(d.from);
  const x1 = Date.parse(d.to);
  for (const ch of channels) {
    const spans = d.incidents
      .filter((i) => i.channel === ch)
      .map((i) => ({ from: Date.parse(i.start.wallTime), to: Date.parse(i.end?.wallTime ?? d.to), label: i.id }));
    const marks = d.notes.map((n) => ({ x: Date.parse(n.wallTime), label: n.text }));
    const unit = unitOf.get(ch) ?? '';
    const bands = d.series.filter((s) => s.channel === ch && s.quantity === 'bandRms');
    out.push(
      linePlot(
        bands.map((s) => ({
          label: `${s.band![0].toPrecision(4)}–${s.band![1].toPrecision(4)} Hz`,
          points: s.rows.map((r) => ({ x: Date.parse(r.wallTime), y: r.gap ? null : r.mean })),
        })),
        { title: `${ch}: band RMS`, unit: `${unit} rms`, x0, x1, spans, marks, formatY: (v) => formatSi(v, unit) },
      ),
    );
    const floor = d.series.filter((s) => s.channel === ch && s.quantity === 'floorDensity');
    out.push(
      linePlot(
        floor.map((s) => ({
          label: 'floor density',
          points: s.rows.map((r) => ({ x: Date.parse(r.wallTime), y: r.gap ? null : r.mean })),
        })),
        {
          title: `${ch}: floor density`,
          unit: `${unit}/√Hz`,
          x0,
          x1,
          spans,
          marks,
          formatY: (v) => formatSi(v, `${unit}/√Hz`),
        },
      ),
    );
  }

  out.push(
    `<h2>5. Health</h2><p>Agent runs in the store: ${d.runs.length} (each start of a stream is one; more than one means restarts or setting changes).</p>`,
  );
  out.push(
    `<table><tr><th>rule</th><th>state</th><th>events</th></tr>${d.health.map((h) => `<tr><td>${esc(h.rule)}</td><td>${esc(h.state)}</td><td class="n">${h.count}</td></tr>`).join('') || '<tr><td colspan="3">no gap, link, clip, overrun or disk events</td></tr>'}</table>`,
  );
  out.push(
    `<p>Spans not stored (disk refused writes): ${d.unstored.length ? d.unstored.map((u) => `${esc(u.from)} – ${esc(u.to)} (${esc(u.reason)})`).join('; ') : 'none'}.</p>`,
  );

  out.push(`<h2>6. Methods</h2><ul>
<li>Densities: one-sided PSD by Welch's method (P. D. Welch, IEEE Trans. Audio Electroacoust. AU-15, 1967), density scaling 2|X|²/(f<sub>s</sub>Σw²), windows and their ENBW after Heinzel, Rüdiger &amp; Schilling 2002.</li>
<li>Band RMS: √(Σ PSD[k]·Δf) over the bins whose centre lies in the band. A trend row's power is the mean of the band powers of the Welch segments that end inside its interval; its RMS is the root of that mean, min/max the smallest/largest single-segment band RMS.</li>
<li>Floor density: median of the averaged density over the usable range (past the DC lobe, below Nyquist), averaged over the snapshots in the row as mean power.</li>
<li>Alarm bound: the band level against the baseline is judged with the F distribution of the ratio of two averaged estimates with their equivalent numbers of averages (Welch 1967 for overlapped segments).</li>
<li>Settled level: the level once the estimate holds only post-onset data (≥ 3τ for exponential averaging, a full window for rolling/mean); peak: the highest level over the alarm's life.</li></ul>`);
  out.push(
    `<h2>Safety</h2><p class="caution">Rigs on the mains: keep the measurement path isolated (USB isolator or an isolated ADC board), never defeat a protective earth to cure hum, do not re-cable mains-connected circuits while powered, follow local electrical codes, and leave mains-side work to qualified people.</p>`,
  );
  out.push('</body></html>\n');
  return out.join('\n');
}
