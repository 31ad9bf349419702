// MonitorOptions for tests: the defaults the CLI applies, a data folder of the test's own, no parts.
import { DEFAULT_ANALYSIS, DEFAULT_SNAPSHOT_RATE } from '../../agent/pipeline/analyser.ts';
import { DEFAULT_AVERAGING } from '../../dsp/averaging.ts';
import type { MonitorOptions } from '../../agent/monitor/options.ts';
import { defaultRules } from '../../agent/rules/rules.ts';

export function testMonitorOptions(dataDir: string, extra: Partial<MonitorOptions> = {}): MonitorOptions {
  return {
    command: 'test',
    analysis: DEFAULT_ANALYSIS,
    averaging: DEFAULT_AVERAGING,
    snapshotRate: DEFAULT_SNAPSHOT_RATE,
    mode: 'lossless',
    dataDir,
    record: false,
    recorder: { rotateSeconds: 3600, preSeconds: 10, postSeconds: 10 },
    rules: defaultRules(),
    lowFrequency: false,
    ...extra,
  };
}
