// The one attachment point for extra parts of a running monitor (a trend store, a notifier, retention, the
// dashboard server, the terminal report...). A part sees the monitor's stream through these callbacks, in sample
// order, on the agent's thread. A part that throws is cut off at its boundary: the error is logged, the part is
// disabled, an `internal` info event says so, and acquisition goes on.
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { GapNotice, StreamInfo } from '../../protocol/stream.ts';
import type { CalibratedBlock, SpectrumSnapshot } from '../pipeline/types.ts';

export interface MonitorPart {
  /** Short name for messages, e.g. "trend-store". */
  readonly name: string;
  onInfo?(info: StreamInfo): void;
  /** Calibrated samples; the arrays are reused after the call returns: copy what you keep. */
  onBlock?(block: CalibratedBlock): void;
  /** A spectrum snapshot; its arrays are reused too. */
  onSnapshot?(snapshot: SpectrumSnapshot): void;
  onEvent?(event: FloorlineEvent): void;
  onGap?(gap: GapNotice): void;
  /** The monitor is stopping (source ended or stopped); flush and release. Called once, in reverse attach order. */
  close?(): void | Promise<void>;
}

type Hook = 'onInfo' | 'onBlock' | 'onSnapshot' | 'onEvent' | 'onGap';

/** Runs the attached parts, each behind its own try/catch. */
export class PartHost {
  private readonly parts: MonitorPart[] = [];
  private readonly disabled = new Set<MonitorPart>();

  constructor(
    /** Told once per failing part (the monitor logs it and emits the `internal` event). */
    private readonly onFailure: (part: MonitorPart, where: string, err: Error) => void,
  ) {}

  add(part: MonitorPart): void {
    this.parts.push(part);
  }

  get names(): string[] {
    return this.parts.filter((p) => !this.disabled.has(p)).map((p) => p.name);
  }

  call<K extends Hook>(hook: K, value: Parameters<NonNullable<MonitorPart[K]>>[0]): void {
    for (const p of this.parts) {
      const fn = p[hook] as ((v: typeof value) => void) | undefined;
      if (!fn || this.disabled.has(p)) continue;
      try {
        fn.call(p, value);
      } catch (err) {
        this.fail(p, hook, err);
      }
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
