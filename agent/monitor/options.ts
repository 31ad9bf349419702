// Everything one running monitor is made of, as plain data: what run, replay and demo build from their flags
// (agent/cli/commands/monitor-flags.ts) and tests build by hand.
import type { AveragingSpec } from '../../dsp/averaging.ts';
import type { BaselineFile } from '../baseline/format.ts';
import type { AnalysisChoice } from '../pipeline/analyser.ts';
import type { RecorderOptions } from '../recorder/recorder.ts';
import type { RulesConfig } from '../rules/rules.ts';
import type { Monitor } from './monitor.ts';
import type { LoadedRigConfig, SinkConfig } from '../config/rig-config.ts';
import type { Level } from '../store/schema.ts';
import type { ReplaySource } from '../sources/replay.ts';
import type { RetentionPolicy } from '../retention/retention.ts';
import type { AlarmHookOptions } from '../rules/alarm-hook.ts';
import type { MonitorPart } from './parts.ts';
import type { LiveLowFrequencyOptions } from '../lowfreq/live-low-frequency.ts';

/** A part, or a function that makes one from the monitor (for parts that read the monitor, e.g. a server). */
export type PartSpec = MonitorPart | ((monitor: Monitor) => MonitorPart | Promise<MonitorPart>);

export interface MonitorOptions {
  /** Command name for messages ("floorline run: …"). */
  command: string;
  analysis: AnalysisChoice;
  averaging: AveragingSpec;
  /** Snapshots per second of sample time. */
  snapshotRate: number;
  /** `lossless` paces the source by the analysis (replay, demo); `bounded` drops whole blocks (live). */
  mode: 'lossless' | 'bounded';
  queueCapacity?: number;
  /** Data folder (recordings/, baselines/, events.jsonl). */
  dataDir: string;
  /** Record continuously from the start. */
  record: boolean;
  recorder: RecorderOptions;
  rules: RulesConfig;
  /** The baseline to compare against: `where` names it in messages, `label` in status (default `where`). */
  baseline?: { baseline: BaselineFile; where: string; label?: string };
  /** Also append every event to this file (besides the data folder's events.jsonl). */
  eventsOut?: string;
  /** Stop after this much sample time, seconds. */
  durationSeconds?: number;
  /** Run the live low-frequency view (1/f fit, 0.1–10 Hz peak-to-peak), optionally with its options; default on. */
  lowFrequency?: boolean | LiveLowFrequencyOptions;
  /** Analysis threads: above 1 the low-frequency view runs on worker threads and, in a replay without a history
   * store, the Welch estimators and cross-spectra on one more (same frames, events, snapshots). */
  threads?: number;
  /** Events kept for clients that connect later (default 1000). */
  eventHistory?: number;
  /** Keep the trend history in this store (agent/store); absent: no history. */
  history?: {
    path: string;
    source: string;
    bands?: readonly { low: number; high: number }[];
    retention?: Record<Level, number>;
    /** Wall ms without a commit while rows wait before the store is called stalled (default 10 s). */
    stallMs?: number;
  };
  /** Limit masks by channel name ('*' = every channel) for the limit rule. */
  masks?: AlarmHookOptions['masks'];
  /** Disk retention (quotas, free-space floor) of the rig config. */
  retention?: RetentionPolicy;
  /** The rig config the command started with: SIGHUP reloads it (agent/service/reload.ts). */
  rig?: LoadedRigConfig;
  /** Notification sinks (their outbox lives in the data folder). */
  notify?: readonly SinkConfig[];
  /** The replay behind the source (which may wrap it, e.g. to calibrate), for the replay position in status. */
  replay?: ReplaySource;
  /** Extra parts, attached before the source starts, in this order. */
  parts?: PartSpec[];
  /** Where the monitor's own warnings go (default stderr). */
  log?: (line: string) => void;
}
