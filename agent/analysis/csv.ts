// CSV of an analysis report: '#' comment lines with the spectral context, a header row, a units row, then one row
// per frequency bin with psd and asd per channel (and cumulative RMS, mask limit, coherence and CSD when asked
// for). '.' decimal point and shortest round-trip numbers (JS String).
import type { AnalysisReport } from './report.ts';
import { amplitudeUnit, densityUnit } from './text-summary.ts';

function quote(field: string): string {
  return /[",\n]/.test(field) ? `"${field.replace(/"/g, '""')}"` : field;
}

/** The CSV text in pieces (header, then batches of rows), so a large report is never one huge string. */
export function* csvChunks(r: AnalysisReport, limits?: Float64Array): Generator<string> {
  const s = r.settings;
  const out: string[] = [
    `# file: ${r.file}`,
    `# sampleRate: ${r.sampleRate} Hz; samples: ${r.samples}; span t = ${s.span.from}–${s.span.to} s`,
    `# segment: ${s.segment}; window: ${s.window}; overlap: ${s.overlap}; detrend: ${s.detrend}; averages: ${s.averages}; ` +
      `average: ${s.average}; excludedSegments: ${s.excludedSegments}; equivalentAverages: ${s.equivalentAverages}`,
    `# binHz: ${s.binHz}; nenbw: ${s.nenbw} bins; enbwHz: ${s.enbwHz}`,
    '# psd: one-sided density (scipy.signal.welch scaling="density"); asd = sqrt(psd)',
  ];
  for (const ch of r.channels) {
    const bands = ch.bands.map((b) => `; band ${b.low}:${b.high} Hz rms: ${b.rms} ${amplitudeUnit(ch)}`).join('');
    out.push(
      `# ${ch.name}: rms (DC excluded): ${ch.rms} ${amplitudeUnit(ch)}${bands}; clippedSamples: ${ch.clippedSamples}`,
    );
    for (const l of ch.lines ?? [])
      out.push(
        `# ${ch.name} line: ${l.frequency} Hz, ${l.amplitude} ${amplitudeUnit(ch)} rms, ${l.dbOverFloor} dB over floor${l.harmonic ? `, mains harmonic ${l.harmonic}` : ''}`,
      );
    if (ch.mask)
      out.push(
        `# ${ch.name} mask: ${ch.mask.pass ? 'pass' : 'fail'}; worst margin ${ch.mask.worstMarginDb} dB at ${ch.mask.worstFrequency} Hz`,
      );
  }
  const header = ['frequency'];
  const units = ['Hz'];
  for (const c of r.channels) {
    header.push(`${c.name} psd`, `${c.name} asd`);
    units.push(`${c.unit}²/Hz${c.referredTo === 'input' ? ' (input)' : ''}`, densityUnit(c));
    if (c.cumulativeRms) {
      header.push(`${c.name} cumulative rms`);
      units.push(amplitudeUnit(c));
    }
  }
  if (limits) {
    header.push('mask limit');
    units.push(`${r.channels[0].unit}/√Hz`);
  }
  for (const p of r.coherence ?? []) {
    header.push(`${p.a}-${p.b} coherence`, `${p.a}-${p.b} csd re`, `${p.a}-${p.b} csd im`);
    units.push(
      '1',
      `${r.channels.find((c) => c.name === p.a)?.unit}·${r.channels.find((c) => c.name === p.b)?.unit}/Hz`,
      '',
    );
    units[units.length - 1] = units[units.length - 2];
  }
  out.push(header.map(quote).join(','), units.map(quote).join(','));
  yield out.join('\n') + '\n';
  const f = r.channels[0].frequency;
  let batch: string[] = [];
  for (let k = 0; k < f.length; k++) {
    let line = String(f[k]);
    for (const ch of r.channels) {
      line += `,${ch.psd[k]},${ch.asd[k]}`;
      if (ch.cumulativeRms) line += `,${ch.cumulativeRms[k]}`;
    }
    if (limits) line += `,${Number.isNaN(limits[k]) ? '' : limits[k]}`;
    for (const p of r.coherence ?? []) line += `,${p.coherence[k]},${p.csdRe[k]},${p.csdIm[k]}`;
    batch.push(line);
    if (batch.length === 4096) {
      yield batch.join('\n') + '\n';
      batch = [];
    }
  }
  if (batch.length > 0) yield batch.join('\n') + '\n';
}

export function formatCsv(r: AnalysisReport, limits?: Float64Array): string {
  return [...csvChunks(r, limits)].join('');
}
