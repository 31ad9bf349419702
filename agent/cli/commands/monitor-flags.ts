// Flags shared by the commands that run a monitor (run, replay, demo): analysis settings, averaging, snapshot
// rate, data folder, recording, alarms and the dashboard. monitorOptionsFromFlags is the one place where they
// become a MonitorOptions, so the three commands accept the same spellings and mean the same by them.
import { defineFlag, defineFlags, type FlagValues } from '../args.ts';
import { readMaskFile, type MaskFile } from '../../analysis/mask-file.ts';
import { UsageError } from '../../errors.ts';
import type { AveragingSpec } from '../../../protocol/settings.ts';
import { DEFAULT_ANALYSIS, DEFAULT_SNAPSHOT_RATE, type AnalysisChoice } from '../../pipeline/analyser.ts';
import { DEFAULT_AVERAGING } from '../../../dsp/averaging.ts';
import { DEFAULT_DATA_FOLDER } from '../../config/data-folder.ts';
import { parseBand } from '../../../protocol/bands.ts';
import { defaultRules, loadRules, type RulesConfig } from '../../rules/rules.ts';
import { readBaseline, type BaselineFile } from '../../baseline/format.ts';
import { parseWindowName } from '../../../dsp/windows.ts';
import { MAX_SEGMENT, MIN_SEGMENT } from '../../../dsp/welch.ts';
import type { MonitorOptions, PartSpec } from '../../monitor/options.ts';
import { defaultAssetsDir, serverOptionsFromArgs, type SERVER_FLAGS } from '../../server/cli-flags.ts';
import { serveDashboard } from '../../server/serve.ts';
import { consolePart } from './console-part.ts';
import { baselineInConfigUnits } from './replay-baseline.ts';
import type { LoadedRigConfig } from '../../config/rig-config.ts';
import { CalibratedSource } from '../../config/calibration.ts';
import type { Source } from '../../../protocol/stream.ts';
import type { ReplaySource } from '../../sources/replay.ts';
import { historyFromArgs, withSource, type HISTORY_FLAGS } from '../../store/cli-flags.ts';
import { resolveThreads } from '../../workers/threads.ts';
import type { threadsFlag } from './threads-flag.ts';

/** The Welch settings: run and replay have them, and baseline (a baseline is taken with the live settings). */
export const ANALYSIS_FLAGS = defineFlags([
  {
    name: 'segment',
    kind: 'number',
    value: 'N',
    integer: true,
    min: MIN_SEGMENT,
    max: MAX_SEGMENT,
    default: DEFAULT_ANALYSIS.segment,
    help: 'Welch segment length in samples, a power of two',
  },
  {
    name: 'window',
    kind: 'string',
    value: 'NAME',
    default: DEFAULT_ANALYSIS.window,
    help: 'window: rect, hann, hamming, blackman-harris, nuttall, hft95, hft90d, hft116d, kaiser:ALPHA',
  },
  {
    name: 'overlap',
    kind: 'number',
    value: 'F',
    min: 0,
    max: 0.95,
    default: DEFAULT_ANALYSIS.overlap,
    help: 'segment overlap fraction',
  },
  {
    name: 'detrend',
    kind: 'string',
    value: 'MODE',
    choices: ['none', 'mean', 'linear'],
    default: DEFAULT_ANALYSIS.detrend,
    help: 'detrend each segment',
  },
]);

/** --data DIR: every monitor command has it (demo without the analysis flags). */
export const DATA_FLAG = defineFlag({
  name: 'data',
  kind: 'string',
  value: 'DIR',
  default: DEFAULT_DATA_FOLDER,
  help: 'data folder (recordings/, baselines/, events.jsonl)',
});

export const PIPELINE_FLAGS = defineFlags([
  ...ANALYSIS_FLAGS,
  {
    name: 'average',
    kind: 'string',
    value: 'SPEC',
    default: averagingFlag(DEFAULT_AVERAGING),
    help: 'averaging: mean | rolling:K | exp:TAU_SECONDS | max | median:K',
  },
  {
    name: 'snapshot-rate',
    kind: 'number',
    value: 'N',
    min: 0.01,
    max: 1000,
    default: DEFAULT_SNAPSHOT_RATE,
    help: 'spectrum snapshots per second of sample time',
  },
  DATA_FLAG,
]);

/** The --average spelling of an averaging (the inverse of parseAveraging). */
export function averagingFlag(a: AveragingSpec): string {
  switch (a.mode) {
    case 'exponential':
      return `exp:${a.tauSeconds}`;
    case 'rolling':
    case 'median':
      return `${a.mode}:${a.count}`;
    default:
      return a.mode;
  }
}

/** Parses an --average value; throws UsageError naming the flag and the accepted forms. */
export function parseAveraging(raw: string, command: string): AveragingSpec {
  const fix = `give mean, rolling:K, exp:TAU_SECONDS, max or median:K (e.g. --average exp:10)`;
  const [mode, arg, extra] = raw.split(':');
  const count = (): number => {
    const k = Number(arg);
    if (arg === undefined || !Number.isInteger(k) || k < 1) {
      throw new UsageError(
        `floorline ${command}: --average ${raw} needs a whole count of segments ≥ 1 after the colon; ${fix}.`,
      );
    }
    return k;
  };
  if (extra !== undefined) throw new UsageError(`floorline ${command}: --average '${raw}' has too many parts; ${fix}.`);
  switch (mode) {
    case 'mean':
    case 'max':
      if (arg !== undefined) throw new UsageError(`floorline ${command}: --average ${mode} takes no count; ${fix}.`);
      return { mode };
    case 'rolling':
      return { mode: 'rolling', count: count() };
    case 'median':
      return { mode: 'median', count: count() };
    case 'exp': {
      const tau = Number(arg);
      if (arg === undefined || !Number.isFinite(tau) || tau <= 0) {
        throw new UsageError(
          `floorline ${command}: --average ${raw} needs a time constant in seconds > 0 after the colon; ${fix}.`,
        );
      }
      return { mode: 'exponential', tauSeconds: tau };
    }
    default:
      throw new UsageError(`floorline ${command}: --average '${raw}' is not an averaging mode; ${fix}.`);
  }
}

export interface PipelineFlagValues {
  analysis: AnalysisChoice;
  averaging: AveragingSpec;
  snapshotRate: number;
  data: string;
}

/** The analysis flags checked: a power-of-two segment and a window the analysis knows. */
export function readAnalysisFlags(f: FlagValues<typeof ANALYSIS_FLAGS>, command: string): AnalysisChoice {
  const segment = f.segment;
  if ((segment & (segment - 1)) !== 0) {
    throw new UsageError(
      `floorline ${command}: --segment ${segment} is not a power of two; give one from ${MIN_SEGMENT} to ${MAX_SEGMENT}, e.g. --segment 4096.`,
    );
  }
  let window: string;
  try {
    window = parseWindowName(f.window);
  } catch (err) {
    throw new UsageError(`floorline ${command}: --window: ${(err as Error).message}.`);
  }
  return { segment, window, overlap: f.overlap, detrend: f.detrend };
}

export function readPipelineFlags(f: FlagValues<typeof PIPELINE_FLAGS>, command: string): PipelineFlagValues {
  return {
    analysis: readAnalysisFlags(f, command),
    averaging: parseAveraging(f.average, command),
    snapshotRate: f['snapshot-rate'],
    data: f.data,
  };
}

export const RECORDING_FLAGS = defineFlags([
  { name: 'record', kind: 'boolean', help: 'record continuously to the data folder (float32 WAV + sidecar)' },
  {
    name: 'rotate',
    kind: 'number',
    value: 'S',
    min: 0,
    default: 3600,
    help: 'start a new recording file every S seconds of sample time (0 = one file, RF64 past 4 GiB)',
  },
  {
    name: 'pre',
    kind: 'number',
    value: 'S',
    min: 0,
    max: 600,
    default: 10,
    help: 'seconds an event capture keeps before its trigger',
  },
  {
    name: 'post',
    kind: 'number',
    value: 'S',
    min: 0,
    max: 600,
    default: 10,
    help: 'seconds an event capture runs after its trigger',
  },
  {
    name: 'status-every',
    kind: 'number',
    value: 'S',
    min: 0,
    default: 10,
    help: 'print a status line every S seconds of wall time (0 = never)',
  },
]);

export function readRecordingFlags(f: FlagValues<typeof RECORDING_FLAGS>): {
  record: boolean;
  statusEvery: number;
  recorder: { rotateSeconds: number; preSeconds: number; postSeconds: number };
} {
  return {
    record: f.record,
    statusEvery: f['status-every'],
    recorder: { rotateSeconds: f.rotate, preSeconds: f.pre, postSeconds: f.post },
  };
}

export const ALARM_FLAGS = defineFlags([
  {
    name: 'baseline',
    kind: 'string',
    value: 'FILE',
    help: 'compare against this baseline (from `floorline baseline` or the dashboard)',
  },
  {
    name: 'band',
    kind: 'list',
    value: 'LO:HI',
    help: 'band in Hz for the band rules (default: decade bands and the whole usable band)',
  },
  { name: 'rules', kind: 'string', value: 'FILE', help: 'alarm rules JSON (margins, timings, bands)' },
  { name: 'events-out', kind: 'string', value: 'FILE', help: 'also append every event to this JSON Lines file' },
  {
    name: 'mask',
    kind: 'string',
    value: 'FILE',
    help: 'ASD limit mask (CSV frequency,limit[,unit]) for every channel: the live limit rule',
  },
]);

export interface AlarmFlagValues {
  baseline?: BaselineFile;
  baselinePath?: string;
  rules: RulesConfig;
  eventsOut?: string;
  /** Limit masks by channel name ('*' = every channel), from --mask and the rig config's `masks`. */
  masks?: Record<string, MaskFile>;
}

/** --mask FILE (every channel) and the config's masks (by channel); Nyquist is checked when the stream is known. */
export function readMasks(
  flag: string | undefined,
  config: Record<string, string> | undefined,
): Record<string, MaskFile> | undefined {
  const out: Record<string, MaskFile> = {};
  for (const [ch, file] of Object.entries(config ?? {})) out[ch] = readMaskFile(file, Infinity);
  if (flag) out['*'] = readMaskFile(flag, Infinity);
  return Object.keys(out).length > 0 ? out : undefined;
}

/** A mask file that cannot be read is a usage error naming the command. */
function masksOrUsage(
  command: string,
  read: () => Record<string, MaskFile> | undefined,
): Record<string, MaskFile> | undefined {
  try {
    return read();
  } catch (err) {
    throw new UsageError(`floorline ${command}: ${(err as Error).message}`);
  }
}

/** Loads the baseline and rules named by the flags; errors name the file or flag and the fix. */
export async function readAlarmFlags(
  f: FlagValues<typeof ALARM_FLAGS>,
  command: string,
  configRules?: RulesConfig,
  configMasks?: Record<string, string>,
): Promise<AlarmFlagValues> {
  const rules = f.rules ? await loadRules(f.rules) : configRules ? structuredClone(configRules) : defaultRules();
  const bands = f.band.map((b) => {
    try {
      return parseBand(b);
    } catch (err) {
      throw new UsageError(`floorline ${command}: ${(err as Error).message}.`);
    }
  });
  if (bands.length) rules.band.bands = bands;
  const baselinePath = f.baseline;
  const baseline = baselinePath ? await readBaseline(baselinePath) : undefined;
  const masks = masksOrUsage(command, () => readMasks(f.mask, configMasks));
  return { baseline, baselinePath, rules, eventsOut: f['events-out'], masks };
}

export interface CommandWiring {
  mode: MonitorOptions['mode'];
  /** The --config file, read first thing by the command (it fills flags the command line left out). */
  rig?: LoadedRigConfig;
  /** What feeds the monitor, kept with each run in the history store (port path or recording). */
  sourceLabel: string;
  /** The replay behind the source (for status, a replay's own history store name and its baseline's units). */
  replay?: ReplaySource;
  queueCapacity?: number;
  durationSeconds?: number;
  /** A baseline the command brings itself (demo); else --baseline when the command has it. */
  baseline?: MonitorOptions['baseline'];
  /** Frames in the file, for a replay's header. */
  frames?: () => number | undefined;
  /** Parts of this command only, attached after the terminal report and before the server. */
  parts?: PartSpec[];
}

/** The flags run, replay and demo all declare. */
type CommonMonitorFlags = FlagValues<typeof RECORDING_FLAGS> &
  FlagValues<typeof SERVER_FLAGS> &
  FlagValues<typeof HISTORY_FLAGS> &
  FlagValues<readonly [typeof DATA_FLAG, typeof threadsFlag]> & { quiet: boolean; 'no-server': boolean };

/** What monitorOptionsFromFlags reads: the common flags, and the pipeline and alarm groups where declared. */
export type MonitorFlags = CommonMonitorFlags &
  Partial<FlagValues<typeof PIPELINE_FLAGS>> &
  Partial<FlagValues<typeof ALARM_FLAGS>>;

/** The command declares the whole flag group that `probe` belongs to (the parser fills every declared flag). */
function declares<G>(f: MonitorFlags, probe: keyof G & string): f is MonitorFlags & G {
  return Object.hasOwn(f, probe);
}

/**
 * Turns the parsed flags of run, replay or demo into the options of one monitor. Flags a command does not
 * declare take the defaults (demo has no analysis or alarm flags: its baseline was taken with the defaults).
 */
export async function monitorOptionsFromFlags(
  args: { flags: MonitorFlags },
  command: 'run' | 'replay' | 'demo',
  w: CommandWiring,
): Promise<MonitorOptions> {
  const f = args.flags;
  const pipeline = declares<FlagValues<typeof PIPELINE_FLAGS>>(f, 'segment')
    ? readPipelineFlags(f, command)
    : {
        analysis: DEFAULT_ANALYSIS,
        averaging: DEFAULT_AVERAGING,
        snapshotRate: DEFAULT_SNAPSHOT_RATE,
        data: f.data,
      };
  const rig = w.rig;
  const alarmFlags = declares<FlagValues<typeof ALARM_FLAGS>>(f, 'band');
  const alarms: AlarmFlagValues = alarmFlags
    ? await readAlarmFlags(f, command, rig?.rules, rig?.config.masks)
    : {
        rules: rig?.rules ? structuredClone(rig.rules) : defaultRules(),
        masks: masksOrUsage(command, () => readMasks(undefined, rig?.config.masks)),
      };
  // demo has no --band: the config's bands still apply (its analysis settings do not: they stay the baseline's).
  if (!alarmFlags && rig?.config.bands?.length) alarms.rules.band.bands = rig.config.bands.map(parseBand);
  const rec = readRecordingFlags(f);
  const given =
    w.baseline ??
    (alarms.baseline && alarms.baselinePath ? { baseline: alarms.baseline, where: alarms.baselinePath } : undefined);
  // A replay passes the recording through the config's calibration, so its baseline has to follow.
  const baseline =
    given && w.replay ? await baselineInConfigUnits(given, rig?.config.channels, w.replay, command) : given;
  const parts: PartSpec[] = [
    consolePart({ quiet: f.quiet, statusEvery: rec.statusEvery, frames: w.frames }),
    ...(w.parts ?? []),
  ];
  if (!f['no-server']) parts.push(serveDashboard(serverOptionsFromArgs(f, defaultAssetsDir())));
  return {
    command,
    analysis: pipeline.analysis,
    averaging: pipeline.averaging,
    snapshotRate: pipeline.snapshotRate,
    mode: w.mode,
    threads: resolveThreads(f.threads),
    queueCapacity: w.queueCapacity,
    dataDir: pipeline.data,
    record: rec.record,
    recorder: rec.recorder,
    rules: alarms.rules,
    baseline,
    eventsOut: alarms.eventsOut,
    durationSeconds: w.durationSeconds,
    history: withSource(
      historyFromArgs(f, command, pipeline.data, w.replay?.path),
      w.sourceLabel,
      alarms.rules.band.bands,
    ),
    rig,
    notify: rig?.config.notify,
    retention: rig?.config.retention,
    masks: alarms.masks,
    replay: w.replay,
    parts,
    // The low-frequency view's readers are the dashboard and the HTTP API (status, metrics); with --no-server
    // nothing can read it, and at --speed max it would be most of the work.
    ...(f['no-server'] ? { lowFrequency: false } : {}),
  };
}

/** The source as the monitor sees it: calibrated by the rig config's channels when it has any. */
export function calibratedSource(source: Source, rig: LoadedRigConfig | undefined, command: string): Source {
  const channels = rig?.config.channels;
  return channels
    ? new CalibratedSource(source, channels, (n) => process.stderr.write(`floorline ${command}: calibration: ${n}\n`))
    : source;
}
