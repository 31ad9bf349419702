// Offline line list: the live spur and mains finder (dsp/detection SpurFinder, MainsClassifier and the same
// threshold, lineThresholdRatio with the default rules) run once on a report's spectrum, so `analyze --lines`
// names the lines the live rules would see in the same samples. Amplitude is floor-subtracted RMS over the lobe
// (dsp/tone.ts lineAboveFloor, the one rule for every line readout).
import { MainsClassifier } from '../../dsp/detection/mains.ts';
import { SpurFinder } from '../../dsp/detection/spur-finder.ts';
import { chi2MeanMedian, conservativeAverages, lineThresholdRatio } from '../../dsp/detection/threshold.ts';
import { defaultRules, type RulesConfig } from '../rules/rules.ts';
import { MAX_TRACKED_LINES } from '../rules/spur-detector.ts';

export interface ReportLine {
  frequency: number;
  /** Floor-subtracted RMS amplitude, channel unit. */
  amplitude: number;
  dbOverFloor: number;
  /** Mains harmonic order, only for lines at k × the measured mains fundamental. */
  harmonic?: number;
}

export interface LineSearch {
  finder: SpurFinder;
  binHz: number;
  rules: RulesConfig;
}

export function makeLineSearch(
  frequencies: Float64Array,
  binHz: number,
  mainLobeHalfWidth: number,
  rules: RulesConfig = defaultRules(),
): LineSearch {
  const finder = new SpurFinder({
    frequencies,
    binHz,
    mainLobeHalfWidth,
    maxLines: MAX_TRACKED_LINES,
    floorHalfWidth: rules.spur.floorHalfWidth > 0 ? rules.spur.floorHalfWidth : undefined,
  });
  return { finder, binHz, rules };
}

/** Lines of one channel's density with `equivalentAverages` behind it, in increasing frequency. */
export function findLines(search: LineSearch, psd: Float64Array, equivalentAverages: number): ReportLine[] {
  const { finder, rules } = search;
  const k = conservativeAverages(equivalentAverages);
  const ratio = lineThresholdRatio(k, rules.spur.alpha, finder.bins, 10 ** (rules.spur.marginDb / 10));
  // The median floor corrected to a mean, as the live spur rule does (SpurDetector.thresholdRatio).
  const n = finder.find(psd, ratio, chi2MeanMedian(2 * k));
  const mains = new MainsClassifier(
    { setting: rules.mains.frequency, binHz: search.binHz, maxHarmonic: rules.mains.maxHarmonic },
    finder.maxLines,
  );
  mains.classify(finder.lineFrequency, finder.lineAmplitude, n);
  const lines: ReportLine[] = [];
  for (let i = 0; i < n; i++) {
    const line: ReportLine = {
      frequency: finder.lineFrequency[i],
      amplitude: finder.lineAmplitude[i],
      dbOverFloor: finder.lineHeightDb[i],
    };
    if (mains.harmonic[i] > 0) line.harmonic = mains.harmonic[i];
    lines.push(line);
  }
  return lines.sort((a, b) => a.frequency - b.frequency);
}
