// Hangs disk retention on a running monitor (one part, watching blocks for a new recording file): deletions and
// the `disk` alarm become pipeline events stamped with the newest sample processed; the floor pauses and resumes
// the continuous recording the user asked for.
import type { Pipeline } from '../pipeline/pipeline.ts';
import type { MonitorPart, PartSink } from '../monitor/parts.ts';
import type { Recorder } from '../recorder/recorder.ts';
import { RetentionKeeper, type RetentionPolicy } from './retention.ts';

export function attachRetention(
  pipeline: Pipeline,
  parts: PartSink,
  recorder: Recorder,
  recordingsDir: string,
  policy: RetentionPolicy,
  recordWanted: () => boolean,
): RetentionKeeper {
  let pausedByFloor = false;
  const keeper = new RetentionKeeper(recordingsDir, policy, {
    emit: (e) => {
      const sample = Math.max(0, pipeline.counters().lastSample);
      const rate = pipeline.stream?.sampleRate ?? 1;
      pipeline.emitEvent({ ...e, sample, t: sample / rate, wallTime: pipeline.wallTimeAt(sample) });
    },
    pauseRecording: () => {
      if (recorder.status().state !== 'recording') return;
      pausedByFloor = true;
      recorder.stopRecording();
    },
    resumeRecording: () => {
      if (pausedByFloor && recordWanted()) recorder.startRecording();
      pausedByFloor = false;
    },
    openFiles: () => {
      const s = recorder.status();
      return s.state === 'recording' && s.file ? [s.file] : [];
    },
  });
  // Sweeps start with the stream (every handler is in place by then) and, like every sweep, run behind the part
  // boundary. Also sweep when a new continuous file starts (rotation is in sample time, so a fast replay sweeps as
  // often).
  let file: string | undefined;
  let started = false;
  const part: MonitorPart = {
    name: 'retention',
    onInfo: () => {
      if (started) return;
      started = true;
      keeper.start(undefined, (sweep) => parts.guard(part, 'sweep', sweep));
    },
    onBlock: () => {
      const f = recorder.status().file;
      if (f !== file) {
        file = f;
        keeper.sweep();
      }
    },
  };
  parts.attach(part);
  return keeper;
}
