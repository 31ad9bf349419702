// `floorline analyze FILE --log-frequency`: the low-frequency view of a whole recording. Per channel the
// log-frequency density (dsp/logfreq, Tröbs & Heinzel 2006) with each point's resolution bandwidth and averages,
// the 1/f corner fit (α = 1 and free α) below a tenth of the sample rate, and the 0.1–10 Hz peak-to-peak figures
// per 10 s window. The record is held in memory (the estimate revisits it once per frequency).
import type { DetrendMode } from '../../protocol/settings.ts';
import { readWavFile, type WavInfo } from '../wav/reader.ts';
import { planLogFrequencies } from '../../dsp/logfreq/plan.ts';
import { logFrequencyPsd } from '../../dsp/logfreq/log-frequency-psd.ts';
import { fitCorner, type CornerFit } from '../../dsp/flicker/corner-fit.ts';
import {
  PeakToPeakMeter,
  PEAK_TO_PEAK_LABELS,
  peakToPeakFigures,
  type PeakToPeakFigures,
} from '../../dsp/flicker/peak-to-peak.ts';
import { formatSi } from '../../protocol/si.ts';

export interface LogFrequencyOptions {
  window: string;
  overlap: number;
  detrend: DetrendMode;
  scale?: number;
  /** Desired frequencies and averages per frequency (defaults 200 and 100). */
  points?: number;
  averages?: number;
}

export interface LogFrequencyChannel {
  name: string;
  unit: string;
  frequency: Float64Array;
  psd: Float64Array;
  asd: Float64Array;
  rbwHz: Float64Array;
  averages: Float64Array;
  equivalentAverages: Float64Array;
  segment: Float64Array;
  /** Fits over points at or below fitMaxHz; null when too few points or the fit fails. */
  corner: { fitMaxHz: number; oneOverF: CornerFit | null; freeExponent: CornerFit | null };
  /** 0.1–10 Hz figures per window; null with a reason when the file is too short or its rate too low. */
  peakToPeak:
    | { lowHz: number; highHz: number; windowSeconds: number; settleSeconds: number; windows: PeakToPeakFigures[] }
    | { skipped: string };
}

export interface LogFrequencyReport {
  file: string;
  sampleRate: number;
  samples: number;
  settings: {
    method: string;
    window: string;
    overlap: number;
    detrend: DetrendMode;
    points: number;
    desiredAverages: number;
    sample: number;
    t: number;
  };
  channels: LogFrequencyChannel[];
}

function tryFit(input: Parameters<typeof fitCorner>[0], fitMaxHz: number, exponent: number | 'free'): CornerFit | null {
  try {
    const r = fitCorner(input, { maxFrequency: fitMaxHz, exponent });
    return r.converged && Number.isFinite(r.cornerSigma) ? r : null;
  } catch {
    return null; // too few points below fitMaxHz: reported as no fit
  }
}

export async function analyzeLogFrequency(
  path: string,
  options: LogFrequencyOptions,
): Promise<{ report: LogFrequencyReport; info: WavInfo }> {
  const { info, data } = await readWavFile(path, { scale: options.scale });
  const fs = info.sampleRate;
  const n = data.length ? data[0].length : 0;
  const desiredAverages = options.averages ?? 100;
  const points = options.points ?? 200;
  // planLogFrequencies' RangeError names the option and the fix (e.g. a record too short for the window).
  const plan = planLogFrequencies({
    sampleRate: fs,
    samples: n,
    window: options.window,
    overlap: options.overlap,
    points,
    averages: desiredAverages,
  });
  const fitMaxHz = fs / 10;
  let sample = -1;
  const channels = info.channels.map((ch, c): LogFrequencyChannel => {
    const est = logFrequencyPsd(data[c], plan, { detrend: options.detrend });
    sample = est.sample;
    const asd = est.psd.map(Math.sqrt);
    const dof = est.equivalentAverages.map((k) => 2 * k);
    const fitInput = { frequency: est.frequency, psd: est.psd, dof };
    let peakToPeak: LogFrequencyChannel['peakToPeak'];
    try {
      const windows: PeakToPeakFigures[] = [];
      const meter = new PeakToPeakMeter({
        sampleRate: fs,
        firstSample: info.firstSample,
        onWindow: (r) => windows.push(peakToPeakFigures(r)),
      });
      meter.push(data[c]);
      peakToPeak =
        windows.length > 0
          ? {
              lowHz: 0.1,
              highHz: 10,
              windowSeconds: meter.windowSamples / fs,
              settleSeconds: meter.settleSeconds,
              windows,
            }
          : {
              skipped: `needs ${(meter.settleSeconds + meter.windowSamples / fs).toFixed(1)} s (settling + one window), the file has ${(n / fs).toFixed(1)} s`,
            };
    } catch (err) {
      peakToPeak = { skipped: (err as Error).message };
    }
    return {
      name: ch.name,
      unit: ch.unit,
      frequency: est.frequency,
      psd: est.psd,
      asd,
      rbwHz: est.rbwHz,
      averages: est.averages,
      equivalentAverages: est.equivalentAverages,
      segment: est.segment,
      corner: { fitMaxHz, oneOverF: tryFit(fitInput, fitMaxHz, 1), freeExponent: tryFit(fitInput, fitMaxHz, 'free') },
      peakToPeak,
    };
  });
  const first = info.firstSample;
  return {
    report: {
      file: path,
      sampleRate: fs,
      samples: n,
      settings: {
        method: 'log-frequency (Tröbs & Heinzel 2006)',
        window: plan.window,
        overlap: plan.overlap,
        detrend: options.detrend,
        points: plan.count,
        desiredAverages,
        sample: first + sample,
        t: (first + sample) / fs,
      },
      channels,
    },
    info,
  };
}

export function logFrequencyToJson(r: LogFrequencyReport): string {
  return JSON.stringify(r, (_k, v) => (v instanceof Float64Array ? Array.from(v) : v));
}

export function logFrequencyToCsv(r: LogFrequencyReport): string {
  const lines = [
    `# ${r.file}: ${r.samples} samples at ${r.sampleRate} Hz, ${r.settings.method}, window ${r.settings.window}, overlap ${r.settings.overlap}, detrend ${r.settings.detrend}`,
  ];
  lines.push(
    ['frequency', 'rbw', 'averages', ...r.channels.flatMap((c) => [`${c.name} psd`, `${c.name} asd`])].join(','),
  );
  lines.push(['Hz', 'Hz', '1', ...r.channels.flatMap((c) => [`${c.unit}²/Hz`, `${c.unit}/√Hz`])].join(','));
  const ch0 = r.channels[0];
  if (ch0) {
    for (let j = 0; j < ch0.frequency.length; j++) {
      lines.push(
        [ch0.frequency[j], ch0.rbwHz[j], ch0.averages[j], ...r.channels.flatMap((c) => [c.psd[j], c.asd[j]])].join(','),
      );
    }
  }
  return lines.join('\n') + '\n';
}

function describeFit(label: string, f: CornerFit | null, unit: string): string {
  if (!f) return `  ${label.padEnd(30)} no fit (no corner in range, or too few points)`;
  const alpha = f.exponentFree ? `, α = ${f.exponent.toFixed(3)} ± ${f.exponentSigma.toFixed(3)}` : '';
  return (
    `  ${label.padEnd(30)} white ${formatSi(f.whiteAsd, `${unit}/√Hz`)} ± ${formatSi(f.whiteAsdSigma, `${unit}/√Hz`)}, ` +
    `corner ${formatSi(f.corner, 'Hz')} ± ${formatSi(f.cornerSigma, 'Hz')}${alpha} (χ²/dof ${f.reducedChiSquare.toFixed(2)}, ${f.points} points)` +
    (f.corner < 2 * f.cornerSigma ? '; corner not significant (< 2σ): the floor looks white here' : '')
  );
}

export function logFrequencyToText(r: LogFrequencyReport): string {
  const s = r.settings;
  const lines = [
    `${r.file}: ${r.samples} samples at ${r.sampleRate} Hz (${(r.samples / r.sampleRate).toPrecision(4)} s), ${r.channels.length} channel(s)`,
    `settings: ${s.method}, ${s.points} frequencies, up to ${s.desiredAverages} averages each, window ${s.window}, overlap ${s.overlap}, detrend ${s.detrend}`,
  ];
  for (const ch of r.channels) {
    lines.push('', `${ch.name} [${ch.unit}]`);
    lines.push(describeFit(`1/f fit (α = 1, ≤ ${ch.corner.fitMaxHz} Hz)`, ch.corner.oneOverF, ch.unit));
    lines.push(describeFit('1/f^α fit (α free)', ch.corner.freeExponent, ch.unit));
    const pp = ch.peakToPeak;
    if ('skipped' in pp) lines.push(`  0.1–10 Hz: not measured: ${pp.skipped}`);
    else {
      const worst = pp.windows.reduce((a, b) => (b.peakToPeak > a.peakToPeak ? b : a));
      lines.push(
        `  0.1–10 Hz, ${pp.windows.length} window(s) of ${pp.windowSeconds} s after ${pp.settleSeconds.toFixed(1)} s settling; worst window at t = ${worst.t.toFixed(1)} s:`,
        `    ${PEAK_TO_PEAK_LABELS.peakToPeak.padEnd(42)} ${formatSi(worst.peakToPeak, ch.unit)}`,
        `    ${PEAK_TO_PEAK_LABELS.rms.padEnd(42)} ${formatSi(worst.rms, ch.unit)}`,
        `    ${PEAK_TO_PEAK_LABELS.gaussianPeakToPeak.padEnd(42)} ${formatSi(worst.gaussianPeakToPeak, ch.unit)}`,
      );
    }
    lines.push(`  ${'frequency'.padStart(12)} ${'ASD'.padStart(16)} ${'RBW'.padStart(12)} ${'averages'.padStart(9)}`);
    const stride = Math.max(1, Math.ceil(ch.frequency.length / 20));
    for (let j = 0; j < ch.frequency.length; j += stride) {
      lines.push(
        `  ${formatSi(ch.frequency[j], 'Hz').padStart(12)} ${formatSi(ch.asd[j], `${ch.unit}/√Hz`).padStart(16)} ${formatSi(ch.rbwHz[j], 'Hz').padStart(12)} ${String(ch.averages[j]).padStart(9)}`,
      );
    }
  }
  return lines.join('\n') + '\n';
}
