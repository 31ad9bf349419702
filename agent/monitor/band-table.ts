// The band table of the read model: per channel and band, live RMS, the baseline's, the rule's level against its
// threshold and the band floor (median density), computed from the newest snapshot when asked (not per snapshot).
import { bandBins, bandMedianInBins, bandRmsInBins } from '../../dsp/bands.ts';
import { powerRatioDb } from '../../dsp/units.ts';
import { windowMainLobeHalfWidth } from '../../dsp/windows.ts';
import { bandId } from '../../protocol/ids.ts';
import type { BandRow } from '../../protocol/messages.ts';
import { firstSettingMismatch, type AnalysisSettings } from '../../protocol/settings.ts';
import type { SpectrumSnapshot } from '../pipeline/types.ts';
import { defaultBands } from '../rules/default-bands.ts';
import type { DetectorStatus } from '../rules/detectors.ts';

export interface BandTableInputs {
  snapshot: SpectrumSnapshot | null;
  /** The current baseline, densities as typed arrays (converted once per baseline, not per call). */
  baseline: { settings: AnalysisSettings; channels: readonly { name: string; psd: Float64Array }[] } | undefined;
  /** The rules' readings (absent: no rules running yet). */
  rules: readonly DetectorStatus[] | undefined;
  /** Bands the rules evaluate on a channel (empty: none, use the default bands). */
  bandsOf(channel: string): readonly { low: number; high: number }[];
  /** Whether the alarm table shows this band's alarm raised (used when the rules give no reading). */
  raised(channel: string, low: number, high: number): boolean;
}

const finite = (x: number | undefined): number | null => (x !== undefined && Number.isFinite(x) ? x : null);

export class BandTable {
  private scratch = new Float64Array(0);

  rows(i: BandTableInputs): BandRow[] {
    const s = i.snapshot;
    if (!s) return [];
    const base = i.baseline;
    // Bin-by-bin comparison only with a baseline taken with the same settings (otherwise the table says so).
    const comparable = base !== undefined && firstSettingMismatch(base.settings, s.settings) === undefined;
    const half = windowMainLobeHalfWidth(s.settings.window);
    const rows: BandRow[] = [];
    for (const ch of s.channels) {
      const ruled = i.rules?.find((r) => r.channel === ch.name)?.bands;
      const own = i.bandsOf(ch.name);
      const bands = own.length ? own : defaultBands(s.settings.sampleRate, s.settings.segment, half);
      const bch = comparable ? base!.channels.find((c) => c.name === ch.name) : undefined;
      if (this.scratch.length < ch.psd.length) this.scratch = new Float64Array(ch.psd.length);
      for (const band of bands) {
        const r = bandBins(ch.psd.length, s.binHz, band.low, band.high);
        const rms = bandRmsInBins(ch.psd, s.binHz, r.first, r.last);
        const baselineRms = bch ? bandRmsInBins(bch.psd, s.binHz, r.first, r.last) : null;
        // The rule's own reading when it runs (its level leaves out new lines, so it can differ from the plain
        // ratio of band powers shown otherwise); the alarm state is the rule's, with its hysteresis.
        const rule = ruled?.find((x) => x.low === band.low && x.high === band.high);
        rows.push({
          id: bandId(ch.name, band.low, band.high),
          channel: ch.name,
          low: band.low,
          high: band.high,
          rms,
          baselineRms,
          deltaDb:
            finite(rule?.levelDb) ?? (baselineRms ? powerRatioDb((rms * rms) / (baselineRms * baselineRms)) : null),
          thresholdDb: finite(rule?.thresholdDb),
          state: !bch
            ? 'no-baseline'
            : (rule ? rule.active : i.raised(ch.name, band.low, band.high))
              ? 'raised'
              : rule?.coveredByLines
                ? 'not-judged'
                : rule?.held
                  ? 'held'
                  : 'ok',
          floorDensity: Math.sqrt(bandMedianInBins(ch.psd, r.first, r.last, this.scratch)),
        });
      }
    }
    return rows;
  }
}
