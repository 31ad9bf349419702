// The report as one self-contained HTML document: no scripts, no external resources, CSS and SVG inline. The
// generation time sits in one marked element (id="generated"); everything else depends on the store and span only.
import { formatSi } from '../../protocol/si.ts';
import { esc } from './html-escape.ts';
import { linePlot } from './svg-plot.ts';
import type { ReportData } from './collect.ts';
import { bandKey, type ReportFigures } from './figures.ts';
import { renderHeader } from './render-header.ts';
import { renderIncidents, type CaptureLink } from './render-incidents.ts';
import type { ShadedSpan } from './incident-digest.ts';
import { renderHealth } from './render-health.ts';

const CSS = `body{font:13px/1.45 system-ui,sans-serif;margin:24px auto;max-width:820px;color:#222}
h1{font-size:20px}h2{font-size:16px;border-bottom:1px solid #ccc;margin-top:28px}h3{font-size:13px;margin:14px 0 2px}table{border-collapse:collapse;width:100%;margin:8px 0}
th,td{border:1px solid #ddd;padding:3px 6px;text-align:left;vertical-align:top;overflow-wrap:anywhere}table.incidents,table.summary{font-size:11px}th{background:#f3f3f3}table.kv th{width:110px}td.n{text-align:right;font-variant-numeric:tabular-nums}
td.fail{color:#b00020;font-weight:bold}.muted{color:#666}.caution{border:1px solid #c90;background:#fff8e5;padding:8px 12px}@page{size:A4;margin:14mm}@media print{body{margin:0;max-width:none}h2,h3{break-after:avoid}#incidents,#trends{break-before:page}svg,section.incident{break-inside:avoid}}`;

function quantile(sorted: number[], q: number): number {
  if (sorted.length === 0) return NaN;
  const pos = (sorted.length - 1) * q;
  const i = Math.floor(pos);
  return sorted[i] + (sorted[Math.min(i + 1, sorted.length - 1)] - sorted[i]) * (pos - i);
}

const si = (v: number | null | undefined, unit: string) =>
  v === null || v === undefined || !Number.isFinite(v) ? '—' : formatSi(v, unit);

const signedDb = (v: number) => `${v >= 0 ? '+' : '−'}${Math.abs(v).toFixed(2)} dB re mask`;

export interface RenderMeta {
  generatedAt: string;
  version: string;
  commit: string;
  /** Where a capture (relative to the data folder) is linked from the report's folder. */
  link: CaptureLink;
}

function renderSummary(d: ReportData, f: ReportFigures): string {
  const out: string[] = [
    `<h2>2. Summary</h2><p class="muted">Per channel and band over the span: the baseline's band RMS, the median and 95th percentile of the ${esc(d.every)} band RMS rows, the largest single-segment band RMS, and the time covered by band-rise incidents of that band${f.mask ? '; with the limit mask its verdict (see Methods)' : ''}.</p>`,
    `<table class="summary"><tr><th>channel</th><th>band</th><th>baseline</th><th>median</th><th>p95</th><th>max</th><th>time above threshold</th>${f.mask ? '<th>mask</th>' : ''}</tr>`,
  ];
  for (const s of d.series.filter((x) => x.quantity === 'bandRms')) {
    const rows = s.rows.filter((r) => !r.gap && r.mean !== null);
    const means = rows.map((r) => r.mean!).sort((a, b) => a - b);
    const max = rows.reduce((m, r) => Math.max(m, r.max ?? -Infinity), -Infinity);
    const key = bandKey(s.channel, s.band!);
    const above = d.aboveSeconds.get(key) ?? 0;
    let maskCell = '';
    if (f.mask) {
      const v = f.maskVerdicts.get(key);
      if (typeof v !== 'object') maskCell = `<td>${esc(v ?? 'not judged')}</td>`;
      else {
        const bin = v.worstBin
          ? `; worst bin ${signedDb(v.worstBin.marginDb)} at ${v.worstBin.frequency.toFixed(2)} Hz (${v.worstBin.incident})`
          : '';
        maskCell = `<td class="${v.pass ? 'pass' : 'fail'}">${v.pass ? 'pass' : 'fail'}: band RMS ${esc(signedDb(v.bandMarginDb))}${esc(bin)}</td>`;
      }
    }
    out.push(
      `<tr><td>${esc(s.channel)}</td><td>${esc(`${formatSi(s.band![0], 'Hz')} – ${formatSi(s.band![1], 'Hz')}`)}</td><td class="n">${esc(si(f.baselineBandRms.get(key), s.unit))}</td><td class="n">${esc(si(quantile(means, 0.5), s.unit))}</td><td class="n">${esc(si(quantile(means, 0.95), s.unit))}</td><td class="n">${esc(si(max, s.unit))}</td><td class="n">${above > 0 ? `${above.toFixed(1)} s` : '0 s'}</td>${maskCell}</tr>`,
    );
  }
  out.push('</table>');
  return out.join('\n');
}

/** The report as one string (tests, small spans); `writeReport` hands it out section by section instead. */
export function renderReport(d: ReportData, f: ReportFigures, meta: RenderMeta): string {
  const parts: string[] = [];
  writeReport(d, f, meta, (part) => parts.push(part));
  return parts.join('\n');
}

const shadeLabel = (s: ShadedSpan) => (s.count === 1 ? s.first : `${s.first} and ${s.count - 1} more incidents`);

/** Writes the report in parts (joined by newlines), so the whole document is never one string in memory. */
export function writeReport(d: ReportData, f: ReportFigures, meta: RenderMeta, write: (part: string) => void): void {
  const unitOf = new Map(d.series.filter((s) => s.quantity === 'bandRms').map((s) => [s.channel, s.unit]));
  const channels = [...unitOf.keys()];
  const order = (f.context?.channels ?? []).map((c) => c.name);
  const colourOf = (ch: string) => (order.includes(ch) ? order.indexOf(ch) : channels.indexOf(ch));
  const out = { push: write };
  out.push(
    `<!DOCTYPE html><html lang="en"><head><meta charset="utf-8"><meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'; img-src data:">`,
  );
  out.push(`<title>floorline report ${esc(d.from)} – ${esc(d.to)}</title><style>${CSS}</style></head><body>`);
  out.push(`<h1>Noise floor report</h1>`);
  out.push(
    `<p>Span ${esc(d.from)} – ${esc(d.to)} (wall time); t = ${d.fromT.toFixed(3)} – ${d.toT.toFixed(3)} s (sample time). Trend resolution ${esc(d.every)}.</p>`,
  );
  out.push(`<p class="muted" id="generated">Generated ${esc(meta.generatedAt)} by floorline ${esc(meta.version)}.</p>`);

  out.push(renderHeader(d, f, meta));
  out.push(renderSummary(d, f));
  out.push(renderIncidents(d, f, meta.link));

  out.push(
    `<h2 id="trends">4. Trends</h2><p class="muted">Band RMS (${esc(d.every)} rows, mean of the segment band powers in each) and floor density; shaded: incidents of the channel; dashed: notes. Breaks in a line are gaps.</p>`,
  );
  const x0 = Date.parse(d.from);
  const x1 = Date.parse(d.to);
  for (const ch of channels) {
    const spans = (d.shading.get(ch) ?? []).map((s) => ({ from: s.from, to: s.to, label: shadeLabel(s) }));
    const marks = d.notes.map((n) => ({ x: Date.parse(n.wallTime), label: n.text }));
    const unit = unitOf.get(ch) ?? '';
    const bands = d.series.filter((s) => s.channel === ch && s.quantity === 'bandRms');
    out.push(
      linePlot(
        bands.map((s) => ({
          label: `${s.band![0].toPrecision(4)}–${s.band![1].toPrecision(4)} Hz`,
          points: s.rows.map((r) => ({ x: Date.parse(r.wallTime), y: r.gap ? null : r.mean })),
        })),
        {
          title: `${ch}: band RMS`,
          unit: `${unit} rms`,
          x0,
          x1,
          channel: colourOf(ch),
          spans,
          marks,
          formatY: (v) => formatSi(v, unit),
        },
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
          channel: colourOf(ch),
          spans,
          marks,
          formatY: (v) => formatSi(v, `${unit}/√Hz`),
        },
      ),
    );
  }

  out.push(renderHealth(d));

  out.push(`<h2>6. Methods</h2><ul>
<li>Densities: one-sided PSD by Welch's method (P. D. Welch, IEEE Trans. Audio Electroacoust. AU-15, 1967), density scaling 2|X|²/(f<sub>s</sub>Σw²), windows and their ENBW after Heinzel, Rüdiger &amp; Schilling 2002.</li>
<li>Band RMS: √(Σ PSD[k]·Δf) over the bins whose centre lies in the band. A trend row's power is the mean of the band powers of the Welch segments that end inside its interval; its RMS is the root of that mean, min/max the smallest/largest single-segment band RMS.</li>
<li>Floor density: median of the averaged density over the usable range (past the DC lobe, below Nyquist), averaged over the snapshots in the row as mean power.</li>
<li>Alarm bound: the band level against the baseline is judged with the F distribution of the ratio of two averaged estimates with their equivalent numbers of averages (Welch 1967 for overlapped segments).</li>
<li>Baseline figure: the band RMS of the baseline file's averaged density over the same bins as the stored band (√(Σ PSD[k]·Δf)).</li>
<li>Incident spectrum: the Welch mean, with the run's window, segment, overlap and detrend, of the incident's capture from its start to its settled sample (at least one segment, the last one ending at that sample): the data the settled estimate holds. Without a settled event the peak sample, then the end, stands in. Shown as ASD (unit/√Hz) with the baseline's ASD.</li>
<li>Limit mask: the limit is interpolated log-log between the mask's points (the rule of <code>analyze --mask</code> and the live limit rule). A band passes when (a) the largest single-segment band RMS over the span stays under the mask's RMS over the band's bins, √(Σ L(f<sub>k</sub>)²·Δf), and (b) no bin of an incident spectrum on the channel in the band lies above the mask. The margin is 20·log10(limit/measured), positive under the mask; the worst bin names its frequency and incident. A band the mask does not wholly cover is not judged. No statistical allowance is made (the live limit rule's χ² bound is for its short live estimate); a bin of an incident spectrum with K equivalent averages scatters by about 4.3/√K dB (one standard deviation).</li>
<li>dB values: levels of alarms are dB of power re the baseline ("dB re baseline"); mask margins are dB of amplitude re the limit.</li>
<li>Settled level: the level once the estimate holds only post-onset data (≥ 3τ for exponential averaging, a full window for rolling/mean); peak: the highest level over the alarm's life.</li></ul>`);
  out.push(
    `<h2>Safety</h2><p class="caution">Rigs on the mains: keep the measurement path isolated (USB isolator or an isolated ADC board), never defeat a protective earth to cure hum, do not re-cable mains-connected circuits while powered, follow local electrical codes, and leave mains-side work to qualified people.</p>`,
  );
  out.push('</body></html>\n');
}
