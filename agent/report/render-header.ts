// Section 1 of the report: the rig (board, channels with units, calibration), the span in wall and sample time,
// the floorline version and commit, the analysis settings (window, ENBW, bin, segment, overlap, averaging), the
// baseline (file, hashes, capture span, notes, settings) and the rig config's hash.
import { makeWindow } from '../../dsp/windows.ts';
import type { AveragingSpec } from '../../protocol/settings.ts';
import { formatSi } from '../../protocol/si.ts';
import { esc } from './html-escape.ts';
import type { ReportData } from './collect.ts';
import type { ReportFigures } from './figures.ts';

export function averagingText(a: AveragingSpec | undefined): string {
  if (!a) return 'not recorded';
  switch (a.mode) {
    case 'exponential':
      return `exponential, τ = ${a.tauSeconds} s`;
    case 'rolling':
      return `rolling mean of ${a.count} segments`;
    case 'median':
      return `rolling median of ${a.count} segments`;
    default:
      return a.mode;
  }
}

const row = (k: string, v: string) => `<tr><th>${esc(k)}</th><td>${v}</td></tr>`;

export function renderHeader(d: ReportData, f: ReportFigures, build: { version: string; commit: string }): string {
  const out: string[] = [];
  const ctx = f.context;
  const s = f.settings;
  out.push(`<h2>1. Rig and settings</h2><table class="kv">`);
  out.push(row('floorline', `${esc(build.version)}, commit ${esc(build.commit)}`));
  out.push(
    row(
      'span',
      `${esc(d.from)} – ${esc(d.to)} (wall time); t = ${d.fromT.toFixed(3)} – ${d.toT.toFixed(3)} s (sample time)`,
    ),
  );
  const rig = f.rig?.loaded;
  if (rig) out.push(row('rig', `${esc(rig.config.name ?? '—')} (rig config ${esc(rig.file)})`));
  out.push(
    row('board', ctx?.boardId ? esc(ctx.boardId) + (ctx.firmware ? `, firmware ${esc(ctx.firmware)}` : '') : '—'),
  );
  const chans = (ctx?.channels ?? []).map((c) => {
    const cal = c.calibration;
    const parts = [`${esc(c.name)} in ${esc(c.unit)}`];
    if (cal?.voltsPerCount !== undefined) parts.push(`${esc(formatSi(cal.voltsPerCount, cal.unit))}/count`);
    else if (!cal && c.scale !== 1) parts.push(`scale ${esc(c.scale)} ${esc(c.unit)}/count`);
    if (cal?.gain !== undefined) parts.push(`gain ${esc(cal.gain)}`);
    parts.push(cal?.inputReferred ? 'input-referred' : 'at the ADC');
    return parts.join(', ');
  });
  // Given a rig config, its channels are the rig's as documented; else what the run recorded.
  const fromConfig = (rig?.config.channels ?? []).map((c) =>
    [
      `${esc(c.name)} in ${esc(c.unit)}`,
      ...(c.voltsPerCount !== undefined ? [`${esc(formatSi(c.voltsPerCount, 'V'))}/count`] : []),
      ...(c.gain !== undefined ? [`gain ${esc(c.gain)}`] : []),
      c.inputReferred ? 'input-referred' : 'at the ADC',
    ].join(', '),
  );
  out.push(
    row('channels', fromConfig.length ? `${fromConfig.join('; ')} (from the rig config)` : chans.join('; ') || '—'),
  );
  if (s) {
    const w = makeWindow(s.window, s.segment);
    const binHz = s.sampleRate / s.segment;
    out.push(
      row(
        'analysis',
        esc(
          `${formatSi(s.sampleRate, 'S/s')}; window ${s.window}, ENBW ${w.nenbw.toFixed(3)} bins = RBW ${formatSi(w.enbwHz(s.sampleRate), 'Hz')}; ` +
            `bin ${formatSi(binHz, 'Hz')}; segment ${s.segment} samples (${formatSi(s.segment / s.sampleRate, 's')}); overlap ${(s.overlap * 100).toFixed(0)} %; detrend ${s.detrend}; averaging ${averagingText(ctx?.averaging)}`,
        ),
      ),
    );
  }
  const bl = ctx?.baseline;
  if (!bl) out.push(row('baseline', 'none recorded for this run'));
  else {
    const file = f.baseline?.file;
    const changed =
      f.baseline?.sha256Now !== bl.sha256 ? ' <strong>(the file has changed or gone since the run)</strong>' : '';
    const lines = [
      `${esc(bl.path)}`,
      `SHA-256 ${esc(bl.sha256 ?? 'unreadable')}${changed}; settings hash ${esc(bl.settingsHash)}`,
    ];
    if (file)
      lines.push(
        esc(
          `captured samples ${file.span.firstSample}–${file.span.lastSample} (${file.span.seconds.toFixed(1)} s) from ${file.source}, ${file.createdWallTime}; ` +
            `${file.settings.window}, segment ${file.settings.segment}, overlap ${file.settings.overlap}, detrend ${file.settings.detrend}; ` +
            `${file.settling.settled ? 'settled' : 'not settled'}`,
        ),
        `notes: ${esc(file.notes || '—')}`,
      );
    else if (f.baseline?.problem) lines.push(esc(f.baseline.problem));
    out.push(row('baseline', lines.join('<br>')));
  }
  const changes = d.baselineChanges.filter((c) => c.wallTime >= d.from);
  if (changes.length)
    out.push(
      row(
        'baseline changes',
        changes
          .map(
            (c) =>
              `from ${esc(c.wallTime)} (run ${c.run}, t=${c.t.toFixed(3)} s): ${
                c.baseline
                  ? `${esc(c.baseline.path)}, SHA-256 ${esc(c.baseline.sha256 ?? 'unreadable')}; settings hash ${esc(c.baseline.settingsHash)}`
                  : 'none'
              }`,
          )
          .join('<br>') +
          '<br><span class="muted">captured or restored during the run; incident spectra are drawn against the baseline in force at their time, the summary against the one in force at the span\'s end</span>',
      ),
    );
  const recorded = ctx?.config
    ? `${esc(ctx.config.path)}<br>SHA-256 ${esc(ctx.config.sha256 ?? 'unreadable')}`
    : 'none (flags only)';
  if (!rig) out.push(row('config', recorded));
  else {
    const given = `${esc(rig.file)}<br>SHA-256 ${esc(f.rig!.sha256 ?? 'unreadable')}`;
    const same = ctx?.config && ctx.config.sha256 !== null && ctx.config.sha256 === f.rig!.sha256;
    out.push(row('config', same ? `${given}<br>the run used this file` : `${given}<br>the run recorded: ${recorded}`));
  }
  if (f.mask) out.push(row('limit mask', `${esc(f.mask.path)}<br>SHA-256 ${esc(f.mask.sha256 ?? 'unreadable')}`));
  out.push('</table>');
  out.push(
    `<table><tr><th>run</th><th>command</th><th>source</th><th>sample rate</th><th>started</th></tr>${d.runs
      .map(
        (r) =>
          `<tr><td class="n">${r.id}</td><td>${esc(r.command)}</td><td>${esc(r.source)}</td><td class="n">${esc(formatSi(r.sampleRate, 'S/s'))}</td><td>${esc(r.startWall)}</td></tr>`,
      )
      .join('')}</table>`,
  );
  return out.join('\n');
}
