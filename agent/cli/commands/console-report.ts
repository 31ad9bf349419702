// What run, replay and demo print on the terminal: the stream header, one line per event, a closing summary.
// Everything is stamped in sample time (sample index and t); wall time appears only as a label.
import type { FloorlineEvent } from '../../../protocol/events.ts';
import type { StreamInfo } from '../../../protocol/stream.ts';
import type { Pipeline } from '../../pipeline/pipeline.ts';
import type { SnapshotDigest } from '../../pipeline/snapshot-digest.ts';
import type { Recorder } from '../../recorder/recorder.ts';

function averagingText(p: Pipeline): string {
  const a = p.averaging;
  switch (a.mode) {
    case 'rolling':
    case 'median':
      return `${a.mode} over ${a.count} segments`;
    case 'exponential':
      return `exponential, τ ${a.tauSeconds} s`;
    default:
      return a.mode;
  }
}

export function printStreamHeader(info: StreamInfo, p: Pipeline, frames?: number): void {
  const s = p.analysisSettings;
  const lines = [
    `source     ${info.source.kind} ${info.source.label}${info.boardId ? ` (board ${info.boardId})` : ''}`,
    `stream     ${info.sampleRate} S/s, ${info.channels.length} channel(s): ${info.channels.map((c) => `${c.name} [${c.unit}]`).join(', ')}`,
  ];
  if (frames !== undefined)
    lines.push(
      `length     ${frames} samples (${(frames / info.sampleRate).toFixed(3)} s) in the file; playing from sample ${info.firstSample} (t = ${(info.firstSample / info.sampleRate).toFixed(3)} s)`,
    );
  if (s) {
    lines.push(
      `analysis   segment ${s.segment} (${(s.sampleRate / s.segment).toPrecision(4)} Hz bins), ${s.window}, overlap ${s.overlap}, detrend ${s.detrend}, ${averagingText(p)}`,
    );
  }
  process.stdout.write(lines.join('\n') + '\n');
}

export function describeEvent(e: FloorlineEvent): string {
  // An operator note has no rule, state or channel: print its text (and incident) instead of "undefined".
  const note = e as FloorlineEvent & { text?: string };
  if ((e.kind as string) === 'note')
    return `t=${e.t.toFixed(3)} s  sample ${e.sample}  note${e.incident ? ` on ${e.incident}` : ''}  ${note.text ?? ''}`;
  const where = e.band
    ? ` ${e.band[0]}–${e.band[1]} Hz`
    : e.frequency !== undefined
      ? ` ${e.frequency.toFixed(2)} Hz`
      : '';
  const level = e.levelDb !== undefined ? ` ${e.levelDb >= 0 ? '+' : ''}${e.levelDb.toFixed(1)} dB` : '';
  return `t=${e.t.toFixed(3)} s  sample ${e.sample}  ${e.kind} ${e.rule} ${e.state}  ${e.channel}${where}${level}  ${e.detail}`;
}

function recordingText(r: Recorder | undefined): string {
  if (!r) return 'off';
  const s = r.status();
  if (s.state === 'failed') return `FAILED (${s.error ?? 'unknown error'})`;
  const state = s.state === 'recording' ? 'on' : s.state;
  if (s.files.length === 0) return state;
  return `${state}, ${s.framesWritten} frames in ${s.files.length} file(s), last ${s.file}`;
}

/** One line of where the stream is, in sample time. */
export function printStatusLine(p: Pipeline, r?: Recorder): void {
  const c = p.counters();
  const rate = p.stream?.sampleRate ?? 1;
  process.stdout.write(
    `status     t=${((c.lastSample + 1) / rate).toFixed(3)} s  sample ${c.lastSample}  snapshots ${c.snapshots}  events ${c.events}  ` +
      `gaps ${c.gaps}  dropped ${c.droppedBlocks}  recording ${recordingText(r)}\n`,
  );
}

export function printSummary(p: Pipeline, wallMs: number, digest?: SnapshotDigest, recorder?: Recorder): void {
  const c = p.counters();
  const info = p.stream;
  const rate = info?.sampleRate ?? 0;
  const seconds = rate ? c.samples / rate : 0;
  const speed = wallMs > 0 ? seconds / (wallMs / 1000) : 0;
  const lines = [
    `samples    ${c.samples} (${seconds.toFixed(3)} s of sample time) in ${(wallMs / 1000).toFixed(2)} s wall, ${speed.toFixed(1)}× real time`,
    `snapshots  ${c.snapshots}${digest ? `, digest ${digest.hex().slice(0, 16)}` : ''}`,
    `events     ${c.events}`,
    `health     gaps ${c.gaps} (${c.lostSamples} samples lost), dropped blocks ${c.droppedBlocks}, clipped samples ${c.clippedSamples.join('/')}`,
    `recording  ${recordingText(recorder)}`,
  ];
  process.stdout.write(lines.join('\n') + '\n');
}
