// Section 3 of the report: the incident table (times, members, settled and peak levels, acknowledge and shelve
// history, notes, capture link) and per incident its spectrum at the settled time against the baseline and mask.
import { maskOnBins } from '../../dsp/measure/limit-mask.ts';
import { formatSi } from '../../protocol/si.ts';
import { esc } from './html-escape.ts';
import { spectrumPlot, type SpectrumLine } from './svg-plot.ts';
import type { OperatorAction, ReportData, ReportIncident } from './collect.ts';
import { baselineAt, type ReportFigures } from './figures.ts';

const si = (v: number | null | undefined, unit: string) =>
  v === null || v === undefined || !Number.isFinite(v) ? '—' : formatSi(v, unit);

function duration(i: ReportIncident): string {
  if (!i.end) return 'still open at the end of the store';
  const s = i.end.t - i.start.t;
  return s < 120 ? `${s.toFixed(1)} s` : s < 7200 ? `${(s / 60).toFixed(1)} min` : `${(s / 3600).toFixed(2)} h`;
}

function memberText(i: ReportIncident): string {
  return i.members
    .map(
      (m) =>
        `${m.rule}${m.band ? ` ${m.band[0]}–${m.band[1]} Hz` : ''}${m.frequency !== undefined ? ` ${m.frequency.toFixed(2)} Hz` : ''}${m.harmonic ? ` (h${m.harmonic})` : ''}`,
    )
    .join('; ');
}

const when = (p: { wallTime: string; t: number }) =>
  `${esc(p.wallTime.replace('T', ' ').replace('Z', ''))} (t=${p.t.toFixed(3)} s)`;

function actionText(a: OperatorAction, rate: number): string {
  const until = a.untilSample !== undefined ? ` until t=${(a.untilSample / rate).toFixed(1)} s` : '';
  return `${a.state}${until} at ${when(a)}`;
}

/** A capture link relative to the report's folder (the caller's `link`), shown by file name. */
export type CaptureLink = (capture: string) => string | undefined;

export function renderIncidents(d: ReportData, f: ReportFigures, link: CaptureLink): string {
  const out: string[] = [`<h2 id="incidents">3. Incidents</h2>`];
  if (d.incidents.length === 0) return out.concat('<p>No incidents in this span.</p>').join('\n');
  const unitOf = new Map(d.series.filter((s) => s.quantity === 'bandRms').map((s) => [s.channel, s.unit]));
  const rate = f.settings?.sampleRate ?? d.runs.at(-1)?.sampleRate ?? 1;
  out.push(
    `<table class="incidents"><colgroup><col style="width:14%"><col style="width:15%"><col style="width:17%"><col style="width:11%"><col style="width:11%"><col style="width:10%"><col style="width:13%"><col style="width:9%"></colgroup><tr><th>incident</th><th>start → end</th><th>members</th><th>settled</th><th>peak</th><th>ack., shelve</th><th>notes</th><th>capture</th></tr>`,
  );
  const listed = d.incidents;
  for (const i of listed) {
    const unit = unitOf.get(i.channel) ?? '';
    const lvl = (x: { levelDb: number; amplitude?: number } | null) =>
      x
        ? `${x.levelDb.toFixed(1)} dB re baseline${x.amplitude !== undefined ? `, ${si(x.amplitude, unit)} rms` : ''}`
        : '—';
    const href = i.capture ? link(i.capture) : undefined;
    out.push(
      `<tr><td><a href="#inc-${esc(i.id)}">${esc(i.id)}</a><br>${esc(i.channel)}</td><td>${when(i.start)} →<br>${i.end ? `${when(i.end)}<br>${esc(duration(i))}` : esc(duration(i))}</td><td>${esc(memberText(i))}</td><td>${esc(lvl(i.settled))}</td><td>${esc(lvl(i.peak))}</td>` +
        `<td>${i.history.map((a) => actionText(a, rate)).join('<br>') || (i.acknowledged ? 'acknowledged' : 'none')}</td>` +
        `<td>${i.notes.map((n) => `${esc(n.wallTime)}: ${esc(n.text)}`).join('<br>') || '—'}</td>` +
        `<td>${i.capture ? (href ? `<a href="${esc(href)}" title="${esc(i.capture)}">WAV</a>` : 'WAV not found') : '—'}</td></tr>`,
    );
  }
  out.push('</table>');
  const rest = d.unlisted;
  if (rest) {
    out.push(
      `<p>${rest.count} more incidents in this span, from ${esc(rest.firstStart)}, are not listed one by one (${rest.byKind
        .map(([k, n]) => `${esc(k)}: ${n}`)
        .join('; ')}); <code>floorline incidents --from … --to … --csv</code> lists them all.</p>`,
    );
  }
  const channels = (f.context?.channels ?? []).map((c) => c.name);
  for (const i of listed)
    if (f.spectra.has(i.id)) out.push(incidentDetail(i, f, channels, unitOf.get(i.channel) ?? ''));
  return out.join('\n');
}

function incidentDetail(i: ReportIncident, f: ReportFigures, channels: string[], unit: string): string {
  const sp = f.spectra.get(i.id);
  const head = `<section class="incident" id="inc-${esc(i.id)}"><h3>${esc(i.id)}: spectrum at the settled time</h3>`;
  if (typeof sp !== 'object') return `${head}<p class="muted">No spectrum: ${esc(sp ?? 'not computed')}.</p></section>`;
  const rate = f.settings!.sampleRate;
  const lines: SpectrumLine[] = [
    { label: `${i.channel}, incident`, kind: 'measured', frequency: sp.frequency, asd: sp.psd.map(Math.sqrt) },
  ];
  // Against the baseline the detectors compared with at that time (a capture mid-run included).
  const judgedWall = Date.parse(i.start.wallTime) + ((sp.to - 1 - i.start.sample) / rate) * 1000;
  const inForce = f.baselineTimeline.length ? baselineAt(f.baselineTimeline, judgedWall)?.file : f.baseline?.file;
  const base = inForce?.channels.find((c) => c.name === i.channel);
  if (base && base.psd.length === sp.frequency.length)
    lines.push({
      label: 'baseline',
      kind: 'baseline',
      frequency: sp.frequency,
      asd: Float64Array.from(base.psd, Math.sqrt),
    });
  if (f.mask)
    lines.push({ label: 'limit mask', kind: 'limit', frequency: sp.frequency, asd: maskOnBins(f.mask, sp.frequency) });
  const verdict = f.incidentMask.get(i.id);
  const maskText = verdict
    ? verdict.bins === 0
      ? ' The mask covers no bin of it.'
      : ` Against the mask: ${verdict.pass ? 'pass' : 'fail'}, worst margin ${verdict.worstMarginDb.toFixed(2)} dB at ${verdict.worstFrequency.toFixed(2)} Hz.`
    : '';
  const marker = i.settled?.frequency ?? i.members.find((m) => m.frequency !== undefined)?.frequency;
  return (
    `${head}<p class="muted">Welch mean of ${sp.segments} segments over samples ${sp.from}–${sp.to - 1} (t = ${(sp.from / rate).toFixed(3)}–${(sp.to / rate).toFixed(3)} s) of the capture ${esc(i.capture ?? '')}.${esc(maskText)}</p>` +
    spectrumPlot(lines, {
      title: `${i.channel}: amplitude spectral density`,
      unit: `${unit}/√Hz`,
      channel: Math.max(0, channels.indexOf(i.channel)),
      formatY: (v) => formatSi(v, `${unit}/√Hz`),
      marker,
    }) +
    '</section>'
  );
}
