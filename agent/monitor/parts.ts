// The one attachment point for extra parts of a running monitor (the history store, the notifier, disk retention,
// the dashboard server, the terminal report...). A part sees the monitor's stream through these callbacks, in
// sample order, on the agent's thread. A part that throws is cut off at its boundary: the error is reported once
// (the monitor logs it and raises an `internal` info event), the part is disabled, and acquisition goes on.
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { GapNotice, StreamInfo } from '../../protocol/stream.ts';
import type { AnalysisGrid, CalibratedBlock, SpectrumSnapshot } from '../pipeline/types.ts';

export interface MonitorPart {
  /** Short name for messages, e.g. "history store". */
  readonly name: string;
  onInfo?(info: StreamInfo): void;
  /** Calibrated samples; the arrays are reused after the call returns: copy what you keep. */
  onBlock?(block: CalibratedBlock): void;
  /** A spectrum snapshot; its arrays are reused too. */
  onSnapshot?(snapshot: SpectrumSnapshot): void;
  onEvent?(event: FloorlineEvent): void;
  onGap?(gap: GapNotice): void;
  /** The analysis grid of the Welch segments that follow (again after every settings change). */
  onAnalysis?(grid: AnalysisGrid): void;
  /** One Welch segment's density of one channel (reused: copy what you keep); for exact per-interval averages. */
  onSegment?(channel: number, density: Float64Array, lastSample: number): void;
  /** The source ended; the newest sample processed. */
  onEnd?(end: { sample: number }): void;
  /** The monitor is stopping (source ended or stopped); flush and release. Called once, in reverse attach order. */
  close?(): void | Promise<void>;
}

type Hook = 'onInfo' | 'onBlock' | 'onSnapshot' | 'onEvent' | 'onGap' | 'onAnalysis' | 'onSegment' | 'onEnd';
type HookArgs<K extends Hook> = Parameters<NonNullable<MonitorPart[K]>>;

/** Where a part is attached; the function returned detaches it (its owner closing removes it from the stream). */
export interface PartSink {
  attach(part: MonitorPart): () => void;
  /** Runs a part's own timer work (a commit, a sweep) behind the same boundary; skipped once the part is off. */
  guard(part: MonitorPart, where: string, work: () => void): void;
}

/** Runs the attached parts, each behind its own try/catch. */
export class PartHost implements PartSink {
  private parts: MonitorPart[] = [];
  private readonly disabled = new Set<MonitorPart>();

  constructor(
    /** Told once per failing part (the monitor logs it and emits the `internal` event). */
    private readonly onFailure: (part: MonitorPart, where: string, err: Error) => void,
  ) {}

  add(part: MonitorPart): void {
    this.parts = [...this.parts, part];
  }

  attach(part: MonitorPart): () => void {
    this.add(part);
    return () => {
      this.parts = this.parts.filter((p) => p !== part);
    };
  }

  /** Whether any running part has this hook (so the monitor observes Welch segments only when one wants them). */
  wants(hook: Hook): boolean {
    return this.parts.some((p) => p[hook] !== undefined && !this.disabled.has(p));
  }

  get names(): string[] {
    return this.parts.filter((p) => !this.disabled.has(p)).map((p) => p.name);
  }

  call<K extends Hook>(hook: K, ...args: HookArgs<K>): void {
    // A snapshot of the list: a part attached or detached by a callback takes effect from the next call.
    const parts = this.parts;
    for (let i = 0; i < parts.length; i++) {
      const p = parts[i];
      const fn = p[hook] as ((...a: HookArgs<K>) => void) | undefined;
      if (!fn || this.disabled.has(p)) continue;
      try {
        fn.apply(p, args);
      } catch (err) {
        this.fail(p, hook, err);
      }
    }
  }

  guard(part: MonitorPart, where: string, work: () => void): void {
    if (this.disabled.has(part)) return;
    try {
      work();
    } catch (err) {
      this.fail(part, where, err);
    }
  }

  /** Closes every part, newest first; a failing close is reported and the others still close. */
  async closeAll(): Promise<void> {
    for (const p of [...this.parts].reverse()) {
      try {
        await p.close?.();
      } catch (err) {
        this.fail(p, 'close', err);
      }
    }
  }

  private fail(p: MonitorPart, where: string, err: unknown): void {
    if (this.disabled.has(p)) return;
    this.disabled.add(p);
    this.onFailure(p, where, err instanceof Error ? err : new Error(String(err)));
  }
}
