// The one pipeline of live, demo and replay runs: source → conditioner → analysers → snapshots → detectors → events.
// It is the sources' SourceSink. Two ways to take blocks:
//  - 'lossless' (replay): each block is processed inside block(); the source is paced by the analysis, so every
//    sample is analysed and a replay at any speed gives the same result.
//  - 'bounded' (live): blocks are copied into a bounded queue and analysed from setImmediate in slices of at most
//    drainBudgetMs, so the event loop keeps reading the port; when the queue is full the incoming block is dropped
//    whole and counted, and the analysis restarts cleanly after the hole (as after a gap).
import { StreamIncidents } from '../rules/stream-incidents.ts';
import { markInputReferred } from './input-referred-events.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { AveragingSpec } from '../../protocol/settings.ts';
import type { GapNotice, LinkNotice, SampleBlock, Source, SourceSink, StreamInfo } from '../../protocol/stream.ts';
import { Analyser, DEFAULT_ANALYSIS, DEFAULT_SNAPSHOT_RATE, type AnalysisChoice } from './analyser.ts';
import { DEFAULT_AVERAGING } from '../../dsp/averaging.ts';
import { BlockQueue } from './block-queue.ts';
import { resolveCoherencePairs, type CoherencePairsSpec } from './coherence-pairs.ts';
import { Conditioner, forEachFiniteRun } from './conditioner.ts';
import { rateProblem } from '../../protocol/limits.ts';
import { makeEvent } from '../rules/event-factory.ts';
import { Emitter, type Listener } from './emitter.ts';
import { RemoteAnalyser } from '../workers/remote-analyser.ts';
import type {
  CalibratedBlock,
  ClipNotice,
  Detector,
  NonFiniteNotice,
  OverrunNotice,
  PipelineCounters,
  PipelineEvents,
  SegmentObserver,
  SpectrumSnapshot,
} from './types.ts';

/** A block handed to the analysis worker whose events are not out yet: they go out, in a one-thread run's order,
 * once the worker has its snapshots, while the worker analyses the next block. */
interface PendingBlock {
  firstSample: number;
  frames: number;
  data: Float64Array[];
  clips: ClipNotice[];
  snapshots: SpectrumSnapshot[];
  /** The worker still holds its last piece. */
  outstanding: boolean;
}

export interface PipelineOptions {
  analysis?: Partial<AnalysisChoice>;
  averaging?: AveragingSpec;
  /** Snapshots per second of sample time (default 10). */
  snapshotRate?: number;
  mode?: 'lossless' | 'bounded';
  /** Blocks the bounded queue holds before dropping (default 64). */
  queueCapacity?: number;
  /** Longest analysis slice per event-loop turn in bounded mode, ms (default 20). */
  drainBudgetMs?: number;
  /** Channel pairs whose cross-spectra and coherence the snapshots carry (default 'auto': every pair of 2–4 channels). */
  coherence?: CoherencePairsSpec;
  /** Above 1 (lossless mode only), the Welch estimators and cross-spectra run on a worker thread while this thread
   * runs the detectors of the block before: same snapshots and events, in the same order (default 1). */
  threads?: number;
}

export class Pipeline implements SourceSink {
  private readonly streamIncidents = new StreamIncidents();
  private readonly emitter = new Emitter<PipelineEvents>((owner, event, err) =>
    this.subscriberFailed(owner, event, err),
  );
  private readonly detectors: Detector[] = [];
  private readonly segmentObservers: SegmentObserver[] = [];
  private choice: AnalysisChoice;
  private averagingSpec: AveragingSpec;
  private readonly snapshotRate: number;
  private readonly mode: 'lossless' | 'bounded';
  private readonly queueCapacity: number;
  private readonly drainBudgetMs: number;
  private readonly coherenceSpec: CoherencePairsSpec;
  private pairs: [number, number][] = [];
  private readonly threads: number;
  /** The analysis on a worker thread (threads > 1, lossless, no segment observers), instead of `analyser`. */
  private remote: RemoteAnalyser | undefined;
  private pending: PendingBlock | undefined;
  /** Two sets of conditioned channels: one waits for its events while the next block fills the other. */
  private unitSets: [Float64Array[], Float64Array[]] = [[], []];
  private unitSet = 0;
  /** Events of a pending block are going out (a source stopped from one of them stops before the next block). */
  private emitting = false;
  private dropPending = false;

  private streamInfo: StreamInfo | undefined;
  private startWallMs = 0;
  private conditioner: Conditioner | undefined;
  private analyser: Analyser | undefined;
  private queue: BlockQueue | undefined;
  private units: Float64Array[] = [];
  private expected = -1;
  private pendingReconfigure: { choice: AnalysisChoice; averaging: AveragingSpec } | undefined;
  private drainScheduled = false;
  private dropRun: OverrunNotice | undefined;
  private nonfiniteOpen: { sample: number; frames: number } | undefined;
  private ended = false;
  private endWaiters: (() => void)[] = [];
  private readonly count: PipelineCounters = {
    blocks: 0,
    samples: 0,
    lastSample: -1,
    snapshots: 0,
    gaps: 0,
    lostSamples: 0,
    droppedBlocks: 0,
    droppedSamples: 0,
    clippedSamples: [],
    nonfiniteFrames: 0,
    lastNonfiniteSample: -1,
    events: 0,
    queueDepth: 0,
    queueCapacity: 0,
  };

  constructor(options: PipelineOptions = {}) {
    this.choice = { ...DEFAULT_ANALYSIS, ...options.analysis };
    this.averagingSpec = options.averaging ?? DEFAULT_AVERAGING;
    this.snapshotRate = options.snapshotRate ?? DEFAULT_SNAPSHOT_RATE;
    if (!(this.snapshotRate > 0) || !Number.isFinite(this.snapshotRate)) {
      throw new RangeError(`Pipeline: snapshotRate must be a positive number per second, got ${this.snapshotRate}`);
    }
    this.mode = options.mode ?? 'lossless';
    this.queueCapacity = options.queueCapacity ?? 64;
    this.drainBudgetMs = options.drainBudgetMs ?? 20;
    this.coherenceSpec = options.coherence ?? 'auto';
    this.threads = options.threads ?? 1;
    if (!Number.isInteger(this.queueCapacity) || this.queueCapacity < 1) {
      throw new RangeError(`Pipeline: queueCapacity must be an integer ≥ 1, got ${this.queueCapacity}`);
    }
  }

  /** `owner` names the part the listener belongs to: if one of its listeners throws, all of them are removed. */
  on<K extends keyof PipelineEvents>(name: K, fn: Listener<PipelineEvents[K]>, owner?: string): () => void {
    return this.emitter.on(name, fn, owner);
  }

  /** A subscriber threw: it is already cut off; log it with a code and say so in an `internal` event. */
  private subscriberFailed(owner: string, event: string, err: Error): void {
    const code = (err as Error & { code?: string }).code;
    process.stderr.write(
      `floorline: internal: ${owner} failed on '${event}'${code ? ` (${code})` : ''} and is disabled; acquisition and alarms go on: ${err.message}\n`,
    );
    const sample = Math.max(0, this.count.lastSample);
    const rate = this.streamInfo?.sampleRate ?? 1;
    this.emitEvent(
      makeEvent(
        'internal',
        'raised',
        '*',
        sample,
        rate,
        this.wallTimeAt(sample),
        `${owner} failed on '${event}'${code ? ` (${code})` : ''} and was disabled: ${err.message}`,
        {},
        'info',
      ),
    );
  }

  addDetector(d: Detector): void {
    this.detectors.push(d);
    if (this.streamInfo && d.onInfo) d.onInfo(this.streamInfo);
  }

  /** Adds an observer of every completed Welch segment (see SegmentObserver). */
  addSegmentObserver(o: SegmentObserver): void {
    if (this.remote)
      throw new Error(
        'pipeline: segment observers must be added before the stream starts when analysis runs on a worker',
      );
    this.segmentObservers.push(o);
    if (this.analyser && this.streamInfo) this.installObservers(this.analyser, this.streamInfo, this.expected);
  }

  private readonly dispatchSegment = (channel: number, density: Float64Array, lastSample: number): void => {
    const list = this.segmentObservers;
    for (let i = 0; i < list.length; i++) list[i].onSegment(channel, density, lastSample);
  };

  private installObservers(a: Analyser, info: StreamInfo, firstSample: number): void {
    if (this.segmentObservers.length === 0) return;
    a.observeSegments(this.dispatchSegment);
    const grid = {
      settings: { ...a.settings },
      frequencies: a.frequencies,
      binHz: a.binHz,
      snapshotInterval: a.interval,
      channels: info.channels.map((c) => ({ name: c.name, unit: c.unit })),
      firstSample,
    };
    for (const o of this.segmentObservers) o.onAnalysis(grid);
  }

  /** Starts the source with this pipeline as its sink; resolves when the source has started. */
  attach(source: Source): Promise<void> {
    return source.start(this);
  }

  get stream(): StreamInfo | undefined {
    return this.streamInfo;
  }

  get settings(): AnalysisChoice {
    return { ...this.choice };
  }

  get averaging(): AveragingSpec {
    return { ...this.averagingSpec };
  }

  /** The analysis as it runs now (undefined before the stream's info). */
  get analysisSettings() {
    const settings = this.analyser?.settings ?? this.remote?.settings;
    return settings ? { ...settings } : undefined;
  }

  /** Whether the analysis runs on a worker thread. */
  get analysisOnWorker(): boolean {
    return this.remote !== undefined;
  }

  /** The source is being stopped: called from a listener of a block's events, the blocks after it were never
   * delivered in a one-thread run, so one handed on already is dropped rather than analysed. */
  sourceStopping(): void {
    if (this.emitting) this.dropPending = true;
  }

  counters(): PipelineCounters {
    return { ...this.count, clippedSamples: [...this.count.clippedSamples], queueDepth: this.queue?.length ?? 0 };
  }

  /** Wall-clock label of a sample: the stream's start wall time plus its sample time since firstSample. */
  wallTimeAt(sample: number): string {
    const info = this.streamInfo;
    if (!info) return new Date(this.startWallMs || 0).toISOString();
    const ms = this.startWallMs + ((sample - info.firstSample) / info.sampleRate) * 1000;
    // A label only: clamped into the Date range so an odd start time can never throw here.
    return new Date(Math.min(Math.max(ms, -8.64e15), 8.64e15)).toISOString();
  }

  /** Changes segment/window/overlap/detrend/averaging; takes effect at the next block (estimates restart). */
  configure(change: { analysis?: Partial<AnalysisChoice>; averaging?: AveragingSpec }): void {
    const choice = { ...this.choice, ...change.analysis };
    const averaging = change.averaging ?? this.averagingSpec;
    if (this.streamInfo) {
      // Validate now, so a bad request is refused to its caller rather than failing later in the stream.
      new Analyser(this.streamInfo, choice, averaging, this.snapshotRate, 0, this.pairs);
    }
    this.pendingReconfigure = { choice, averaging };
  }

  /** Emits an event that did not come from a detector (e.g. the recorder's 'recording' info). */
  emitEvent(e: FloorlineEvent): void {
    this.streamIncidents.stamp(e); // detectors' alarms carry theirs already
    markInputReferred(e, this.streamInfo);
    this.count.events++;
    this.emitter.emit('event', e);
  }

  /** Resolves when the source has ended and every queued block is processed. */
  whenEnded(): Promise<void> {
    if (this.ended) return Promise.resolve();
    return new Promise((resolve) => this.endWaiters.push(resolve));
  }

  // ---- SourceSink ----

  info(info: StreamInfo): void {
    const rate = rateProblem(info.sampleRate);
    if (rate) throw new RangeError(`stream ${rate}`);
    const same =
      this.streamInfo !== undefined &&
      this.streamInfo.sampleRate === info.sampleRate &&
      this.streamInfo.channels.length === info.channels.length &&
      this.streamInfo.channels.every(
        (c, i) => c.scale === info.channels[i].scale && c.fullScaleCounts === info.channels[i].fullScaleCounts,
      );
    this.drainNow();
    this.settle();
    const start = info.startWallTime ? Date.parse(info.startWallTime) : NaN;
    if (!same) {
      this.streamInfo = info;
      this.startWallMs = Number.isFinite(start) ? start : Date.now();
      this.conditioner = new Conditioner(info.channels);
      this.pairs = resolveCoherencePairs(this.coherenceSpec, info);
      this.remote?.close();
      this.remote = undefined;
      this.analyser = undefined;
      const args = [info, this.choice, this.averagingSpec, this.snapshotRate, info.firstSample, this.pairs] as const;
      // Made on this thread either way, so a bad setting is refused here with the one-thread message.
      const local = new Analyser(...args);
      if (this.threads > 1 && this.mode === 'lossless' && this.segmentObservers.length === 0) {
        this.remote = new RemoteAnalyser(...args);
      } else {
        this.analyser = local;
        this.installObservers(local, info, info.firstSample);
      }
      this.units = info.channels.map(() => new Float64Array(0));
      this.unitSets = [this.units, info.channels.map(() => new Float64Array(0))];
      this.queue = this.mode === 'bounded' ? new BlockQueue(this.queueCapacity, info.channels.length) : undefined;
      this.count.queueCapacity = this.mode === 'bounded' ? this.queueCapacity : 0;
      this.count.clippedSamples = info.channels.map(() => 0);
      this.expected = info.firstSample;
    } else {
      this.streamInfo = {
        ...info,
        firstSample: this.streamInfo!.firstSample,
        startWallTime: this.streamInfo!.startWallTime,
      };
    }
    for (const d of this.detectors) d.onInfo?.(this.streamInfo!);
    this.emitter.emit('info', this.streamInfo!);
  }

  block(block: SampleBlock): void {
    if (!this.streamInfo)
      throw new Error('pipeline: a block arrived before the stream info; a source must call info() first');
    if (block.frames <= 0) return;
    if (this.queue) {
      if (this.queue.push(block)) {
        this.scheduleDrain();
      } else {
        this.count.droppedBlocks++;
        this.count.droppedSamples += block.frames;
        if (this.dropRun) {
          this.dropRun.lost += block.frames;
          this.dropRun.droppedBlocks++;
        } else {
          this.dropRun = { sample: block.firstSample, lost: block.frames, droppedBlocks: 1 };
        }
      }
      return;
    }
    this.processBlock(block.data, block.firstSample, block.frames);
  }

  gap(gap: GapNotice): void {
    this.drainNow();
    this.settle();
    this.applyGap(gap, true);
  }

  link(link: LinkNotice): void {
    this.drainNow();
    this.settle();
    this.emitter.emit('link', link);
    for (const d of this.detectors) if (d.onLink) this.emitAll(d.onLink(link));
  }

  end(): void {
    this.drainNow();
    this.settle();
    this.remote?.close();
    this.flushDropRun();
    this.ended = true;
    this.emitter.emit('end', { sample: this.count.lastSample });
    const waiters = this.endWaiters;
    this.endWaiters = [];
    for (const w of waiters) w();
  }

  // ---- internals ----

  private emitAll(events: readonly FloorlineEvent[]): void {
    for (let i = 0; i < events.length; i++) this.emitEvent(events[i]);
  }

  private flushDropRun(): void {
    const run = this.dropRun;
    if (!run) return;
    this.dropRun = undefined;
    this.emitter.emit('overrun', run);
    for (const d of this.detectors) if (d.onOverrun) this.emitAll(d.onOverrun(run));
  }

  /**
   * lost = 0 marks a seam in the signal without missing samples (a replay starting its recording again): the
   * estimate starts over, so every loop of a replay gives the same spectra as the first, and detectors are not
   * told of a gap. A real gap keeps the averages and only drops the partial segment.
   */
  private applyGap(gap: GapNotice, notifyDetectors: boolean): void {
    this.expected = gap.sample + gap.lost;
    const origin = this.expected - (gap.restartsAt ?? this.expected);
    if (gap.lost === 0) (this.analyser ?? this.remote)?.clearAt(this.expected, origin);
    else (this.analyser ?? this.remote)?.restartAt(this.expected);
    if (gap.lost > 0) {
      this.count.gaps++;
      this.count.lostSamples += gap.lost;
    }
    this.emitter.emit('gap', gap);
    if (notifyDetectors && gap.lost > 0) for (const d of this.detectors) if (d.onGap) this.emitAll(d.onGap(gap));
  }

  private scheduleDrain(): void {
    if (this.drainScheduled) return;
    this.drainScheduled = true;
    setImmediate(() => {
      this.drainScheduled = false;
      this.drain(this.drainBudgetMs);
    });
  }

  private drainNow(): void {
    this.drain(Infinity);
  }

  private drain(budgetMs: number): void {
    const q = this.queue;
    if (!q) return;
    const until = performance.now() + budgetMs;
    let item = q.peek();
    while (item) {
      this.processBlock(item.data, item.firstSample, item.frames);
      q.release();
      if (performance.now() >= until) break;
      item = q.peek();
    }
    if (q.length > 0) this.scheduleDrain();
    else this.flushDropRun();
  }

  private processBlock(raw: readonly Float64Array[], firstSample: number, frames: number): void {
    const info = this.streamInfo!;
    let start = 0;
    if (firstSample < this.expected) {
      // Overlaps samples already processed (a source replaying frames): keep time monotonic, skip the repeat.
      start = this.expected - firstSample;
      if (start >= frames) return;
    } else if (firstSample > this.expected) {
      const reason =
        this.dropRun || this.count.droppedSamples > 0
          ? 'analysis overrun (blocks dropped)'
          : 'discontinuity in the source';
      this.settle();
      this.flushDropRun();
      this.applyGap(
        { sample: this.expected, lost: firstSample - this.expected, reason },
        reason.startsWith('discontinuity'),
      );
    }
    if (this.pendingReconfigure) {
      const { choice, averaging } = this.pendingReconfigure;
      this.pendingReconfigure = undefined;
      this.settle();
      this.choice = choice;
      this.averagingSpec = averaging;
      const from = firstSample + start;
      if (this.remote?.fits(choice)) this.remote.reconfigure(choice, averaging, from);
      else if (this.remote) {
        this.remote.close();
        this.remote = new RemoteAnalyser(info, choice, averaging, this.snapshotRate, from, this.pairs);
      } else {
        this.analyser = new Analyser(info, choice, averaging, this.snapshotRate, from, this.pairs);
        this.installObservers(this.analyser, info, from);
      }
    }
    const n = frames - start;
    const first = firstSample + start;
    if (this.remote) {
      // The set the pending block does not hold.
      this.unitSet ^= 1;
      this.units = this.unitSets[this.unitSet];
    }
    const units = this.units;
    for (let c = 0; c < units.length; c++)
      if (units[c].length < n) units[c] = new Float64Array(Math.max(n, units[c].length * 2));
    const cond = this.conditioner!;
    const nonFinite = cond.condition(raw, start, n, first, units);
    this.expected = first + n;
    if (this.remote && nonFinite === 0) {
      this.handOver(units, first, n, cond);
      return;
    }
    this.settle();
    this.count.blocks++;
    this.count.samples += n;
    this.count.lastSample = first + n - 1;
    if (nonFinite === 0) {
      this.emitter.emit('block', { firstSample: first, frames: n, data: units });
      this.emitClips(cond);
      this.analyser!.process(units, first, n, this.onInstant);
      return;
    }
    // Rare path: split the block into runs of whole finite frames and runs of excluded frames.
    this.emitClips(cond);
    forEachFiniteRun(units, 0, n, (from, to, finite) => {
      if (!finite) {
        this.excludeNonFinite({
          sample: first + from,
          frames: to - from,
          channels: cond.nonFiniteChannels(units, from, to),
        });
        return;
      }
      const data = from === 0 ? units : units.map((u) => u.subarray(from));
      const calibrated: CalibratedBlock = { firstSample: first + from, frames: to - from, data };
      this.emitter.emit('block', calibrated);
      if (this.analyser) this.analyser.process(data, first + from, to - from, this.onInstant);
      else {
        const run = this.handOverPieces(data, first + from, to - from, [], false);
        this.collect(run);
        for (const snap of run.snapshots) this.emitSnapshot(snap);
      }
    });
  }

  /**
   * The worker's path for a finite block: the block before is collected, this one is handed over, and the block
   * before's events go out while the worker analyses this one.
   */
  private handOver(units: Float64Array[], first: number, n: number, cond: Conditioner): void {
    const before = this.pending;
    if (before) this.collect(before);
    this.pending = this.handOverPieces(units, first, n, this.clipsOf(cond), true);
    if (before) this.emitPending(before);
  }

  /** Hands [first, first+n) over in pieces the worker's memory holds; all but the last are collected at once. */
  private handOverPieces(
    data: Float64Array[],
    first: number,
    n: number,
    clips: ClipNotice[],
    counted: boolean,
  ): PendingBlock {
    const remote = this.remote!;
    const p: PendingBlock = {
      firstSample: first,
      frames: counted ? n : 0,
      data,
      clips,
      snapshots: [],
      outstanding: false,
    };
    const piece = remote.blockFrames;
    for (let off = 0; off < n; off += piece) {
      if (p.outstanding) this.collect(p);
      remote.handOver(data, off, first + off, Math.min(piece, n - off));
      p.outstanding = true;
    }
    return p;
  }

  /** Waits for the worker's snapshots of the pending piece of p. */
  private collect(p: PendingBlock): void {
    if (!p.outstanding) return;
    p.outstanding = false;
    const remote = this.remote!;
    remote.collect((numbers, at) => p.snapshots.push(remote.snapshot(numbers, at, this.wallTimeAt(numbers[at]), -1)));
  }

  /** The events of the block handed over last, now: before anything that is not a finite block goes on. */
  private settle(): void {
    const p = this.pending;
    if (!p) return;
    this.pending = undefined;
    if (this.dropPending) return;
    this.collect(p);
    this.emitPending(p);
  }

  /** A pending block's events, in a one-thread run's order: the block, its clips, its snapshots. */
  private emitPending(p: PendingBlock): void {
    this.emitting = true;
    try {
      this.count.blocks++;
      this.count.samples += p.frames;
      this.count.lastSample = p.firstSample + p.frames - 1;
      this.emitter.emit('block', { firstSample: p.firstSample, frames: p.frames, data: p.data });
      for (const clip of p.clips) this.emitClip(clip);
      for (const snap of p.snapshots) this.emitSnapshot(snap);
    } finally {
      this.emitting = false;
    }
  }

  private emitClips(cond: Conditioner): void {
    for (const clip of this.clipsOf(cond)) this.emitClip(clip);
  }

  /** The block just conditioned's clip notices, one per channel that clipped. */
  private clipsOf(cond: Conditioner): ClipNotice[] {
    const clips: ClipNotice[] = [];
    for (let c = 0; c < this.units.length; c++) {
      const clip = cond.clipNotice(c);
      if (clip) clips.push(clip);
    }
    return clips;
  }

  private emitClip(clip: ClipNotice): void {
    this.count.clippedSamples[clip.channelIndex] += clip.count;
    this.emitter.emit('clip', clip);
    for (const d of this.detectors) if (d.onClip) this.emitAll(d.onClip(clip));
  }

  /** Non-finite frames are a counted fault: subscribers see a gap there (recordings end their file, estimates drop
   * the partial segment), detectors see the fault itself (the 'nonfinite' health alarm). */
  private excludeNonFinite(notice: NonFiniteNotice): void {
    this.count.nonfiniteFrames += notice.frames;
    this.count.lastNonfiniteSample = notice.sample;
    (this.analyser ?? this.remote)!.restartAt(notice.sample + notice.frames);
    this.emitter.emit('gap', {
      sample: notice.sample,
      lost: notice.frames,
      reason: `non-finite samples on ${notice.channels.join(', ')}`,
    });
    this.emitter.emit('nonfinite', notice);
    // The health alarm is the pipeline's own: it must be raised even before any spectrum or baseline exists.
    if (this.nonfiniteOpen) {
      this.nonfiniteOpen.frames += notice.frames;
      return;
    }
    this.nonfiniteOpen = { sample: notice.sample, frames: notice.frames };
    this.emitEvent(
      makeEvent(
        'nonfinite',
        'raised',
        notice.channels.length === 1 ? notice.channels[0] : '*',
        notice.sample,
        this.streamInfo!.sampleRate,
        this.wallTimeAt(notice.sample),
        `non-finite sample (NaN, ±Inf or beyond float32) on ${notice.channels.join(', ')} at sample ${notice.sample}; ${notice.frames} frame${notice.frames === 1 ? '' : 's'} excluded like a gap`,
      ),
    );
  }

  /** Clears the non-finite alarm at the first spectrum made wholly after the excluded frames. */
  private clearNonFinite(sample: number): void {
    const open = this.nonfiniteOpen;
    if (!open || sample <= open.sample + open.frames) return;
    this.nonfiniteOpen = undefined;
    this.emitEvent(
      makeEvent(
        'nonfinite',
        'cleared',
        '*',
        sample,
        this.streamInfo!.sampleRate,
        this.wallTimeAt(sample),
        `finite samples again (${open.frames} frame${open.frames === 1 ? '' : 's'} excluded)`,
      ),
    );
  }

  private readonly onInstant = (sample: number): void => {
    this.emitSnapshot(this.analyser!.snapshot(sample, this.wallTimeAt(sample), this.count.snapshots));
  };

  private emitSnapshot(snap: SpectrumSnapshot): void {
    snap.sequence = this.count.snapshots;
    this.count.snapshots++;
    this.emitter.emit('snapshot', snap);
    for (const d of this.detectors) this.emitAll(d.onSnapshot(snap));
    this.clearNonFinite(snap.sample);
  }
}
