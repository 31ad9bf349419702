// The session hook that serves the dashboard for run, replay and demo: builds the backend from the pipeline and
// what the command has wired (recorder, replay source, detectors), then starts the server.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import type { ParsedArgs } from '../cli/args.ts';
import type { Source } from '../../protocol/stream.ts';
import type { DataFolder } from '../config/data-folder.ts';
import type { Pipeline } from '../pipeline/pipeline.ts';
import type { Recorder } from '../recorder/recorder.ts';
import type { ReplaySource } from '../sources/replay.ts';
import type { RecordingState } from '../../protocol/messages.ts';
import { PipelineBackend } from './pipeline-backend.ts';
import { startServer } from './server.ts';
import { defaultAssetsDir, serverOptionsFromArgs } from './cli-flags.ts';
import { ServerConfigError } from './options.ts';
import type { Detector } from '../pipeline/types.ts';
import { AlarmHook } from '../rules/alarm-hook.ts';
import type { BaselineFile } from '../baseline/format.ts';
import { LiveLowFrequency } from '../lowfreq/live-low-frequency.ts';
import type { History } from '../store/attach.ts';
import type { RetentionKeeper } from '../retention/retention.ts';
import { HealthWatch } from '../service/health.ts';

export interface ServeWiring {
  pipeline: Pipeline;
  source: Source;
  args: ParsedArgs;
  /** When the source is a replay: position and speed for the banner. */
  replay?: ReplaySource;
  replayLoop?: boolean;
  /** The detectors the session installed (AlarmHook among them gives acknowledge and the bands in use). */
  detectors?: () => readonly Detector[];
  /** The baseline given with --baseline, if any. */
  baseline?: { file: string; baseline: BaselineFile };
  assetsDir?: string;
}

function recordingState(s: { state: RecordingState['state']; file?: string; error?: string }): RecordingState {
  return { state: s.state, ...(s.file ? { file: s.file } : {}), ...(s.error ? { error: s.error } : {}) };
}

export function serveDashboard(
  w: ServeWiring,
): (ctx: { folder: DataFolder; recorder: Recorder | undefined; history: History | undefined; retention?: RetentionKeeper }) => Promise<{ url: string; close(): Promise<void> }> {
  return async ({ folder, recorder, history, retention }) => {
    const assetsDir = w.assetsDir ?? defaultAssetsDir();
    if (!existsSync(join(assetsDir, 'index.html'))) {
      throw new ServerConfigError(`the dashboard is not built (${assetsDir}index.html is missing); run \`npm run build\`, or pass --no-server.`);
    }
    const r = w.replay;
    const hook = (): AlarmHook | undefined => w.detectors?.().find((d): d is AlarmHook => d instanceof AlarmHook);
    const backend = new PipelineBackend({
      pipeline: w.pipeline,
      lowFrequency: new LiveLowFrequency().attach(w.pipeline),
      disk: retention ? () => retention.status() : undefined,
      health: ((h) => () => h.check())(new HealthWatch(w.pipeline)),
      data: folder,
      history: history ? { path: history.path, note: (text, incident) => history.note(text, incident) } : undefined,
      sourceCounters: () => w.source.counters(),
      replay: r
        ? () => {
            const frames = r.fileInfo?.frames ?? 0;
            return { position: frames ? r.position.sample % frames : r.position.sample, duration: frames, speed: r.speed, loop: w.replayLoop ?? false, file: r.path };
          }
        : undefined,
      recorder: recorder
        ? {
            start: async () => recordingState(recorder.startRecording()),
            stop: async () => recordingState(recorder.stopRecording()),
            state: () => recordingState(recorder.status()),
          }
        : undefined,
      baseline: w.baseline ? () => w.baseline! : undefined,
      onBaselineCaptured: (file, baseline) => hook()?.useBaseline(baseline, file),
      acknowledge: w.detectors ? (ref) => (hook()?.detectors?.acknowledge(ref.rule, ref.channel, ref.band) ?? 0) > 0 : undefined,
      detectorStatus: () => hook()?.detectors?.status(),
      mainsHz: () => hook()?.detectors?.status().find((c) => c.mains.fundamental > 0)?.mains.fundamental ?? null,
      bands: (channel) => {
        const b = hook()?.detectors?.bandsOf(channel);
        return b && b.length ? b : undefined;
      },
    });
    const server = await startServer(backend, serverOptionsFromArgs(w.args, assetsDir));
    return { url: server.url, close: () => server.close() };
  };
}
