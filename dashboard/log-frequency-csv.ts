// CSV of the log-frequency view as shown: '#' context lines (sample, t, span, level, each channel's fit), a names
// row, a units row, then one row per point: frequency, RBW, averages, and per channel ASD with its band.
import type { LowFrequencyContext, LowFrequencyUpdate } from '../protocol/low-frequency-messages.ts';

const cell = (v: number | null | undefined): string => (v === null || v === undefined ? '' : String(v));

export function logFrequencyCsv(ctx: LowFrequencyContext, u: LowFrequencyUpdate, wallTime: string): string {
  const lines = [
    '# floorline log-frequency density',
    `# sample,${u.sample}`,
    `# t_s,${u.t}`,
    `# wall_time,${wallTime}`,
    `# sample_rate_hz,${ctx.sampleRate}`,
    `# span_s,${ctx.spanSeconds}`,
    `# confidence_level,${ctx.level}`,
    ...u.channels.map((c) =>
      c.fit
        ? `# fit ${c.name},white_asd,${c.fit.whiteAsd},white_asd_sigma,${c.fit.whiteAsdSigma},corner_hz,${c.fit.corner},corner_sigma_hz,${c.fit.cornerSigma},alpha,${c.fit.exponent},alpha_sigma,${c.fit.exponentSigma},sample,${c.fit.sample}`
        : `# fit ${c.name},none`,
    ),
    [
      'frequency',
      'rbw',
      'averages',
      ...ctx.channels.flatMap((c) => [`${c.name} asd`, `${c.name} lower`, `${c.name} upper`]),
    ].join(','),
    ['Hz', 'Hz', '1', ...ctx.channels.flatMap((c) => Array(3).fill(`${c.unit}/√Hz`) as string[])].join(','),
  ];
  for (let p = 0; p < ctx.frequency.length; p++) {
    const row = [String(ctx.frequency[p]), String(ctx.rbwHz[p]), cell(u.channels[0]?.averages[p])];
    for (const c of u.channels) row.push(cell(c.asd[p]), cell(c.lower[p]), cell(c.upper[p]));
    lines.push(row.join(','));
  }
  return lines.join('\n') + '\n';
}
