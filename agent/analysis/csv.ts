// CSV of an analysis report: '#' comment lines with the spectral context, a header row, a units row, then one row
// per frequency bin with psd and asd per channel. '.' decimal point and shortest round-trip numbers (JS String).
import type { AnalysisReport } from './report.ts';

function quote(field: string): string {
  return /[",\n]/.test(field) ? `"${field.replace(/"/g, '""')}"` : field;
}

export function formatCsv(r: AnalysisReport): string {
  const s = r.settings;
  const out: string[] = [
    `# file: ${r.file}`,
    `# sampleRate: ${r.sampleRate} Hz; samples: ${r.samples}`,
    `# segment: ${s.segment}; window: ${s.window}; overlap: ${s.overlap}; detrend: ${s.detrend}; averages: ${s.averages}`,
    `# binHz: ${s.binHz}; nenbw: ${s.nenbw} bins; enbwHz: ${s.enbwHz}`,
    '# psd: one-sided density (scipy.signal.welch scaling="density"); asd = sqrt(psd)',
  ];
  for (const ch of r.channels) {
    const bands = ch.bands.map((b) => `; band ${b.low}:${b.high} Hz rms: ${b.rms} ${ch.unit}`).join('');
    out.push(`# ${ch.name}: rms (DC excluded): ${ch.rms} ${ch.unit}${bands}`);
  }
  out.push(['frequency', ...r.channels.flatMap((c) => [`${c.name} psd`, `${c.name} asd`])].map(quote).join(','));
  out.push(['Hz', ...r.channels.flatMap((c) => [`${c.unit}²/Hz`, `${c.unit}/√Hz`])].map(quote).join(','));
  const f = r.channels[0].frequency;
  for (let k = 0; k < f.length; k++) {
    let row = String(f[k]);
    for (const ch of r.channels) row += `,${ch.psd[k]},${ch.asd[k]}`;
    out.push(row);
  }
  return out.join('\n') + '\n';
}
