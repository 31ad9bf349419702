// Notifications: alarm events pass each sink's filter, go into the on-disk outbox, and are delivered from there
// with retry and exponential back-off. Delivery runs on the event loop's spare time and never waits inside the
// pipeline: offering an event costs one journal line per notification. A sink gets its notifications in order,
// one at a time; while it is down only its oldest notification is retried. One still failing after maxTries is
// given up and reported as an info event (rule "notify").
import { randomUUID } from 'node:crypto';
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { SinkConfig } from '../config/rig-config.ts';
import { Outbox, type OutboxEntry } from './outbox.ts';
import { SinkFilter, incidentKey } from './filter.ts';
import { sinkDeliver, sinkLabel, type Deliver } from './sinks.ts';

export const DEFAULT_MAX_TRIES = 10;

export interface NotifierOptions {
  sinks: readonly SinkConfig[];
  /** Journal file (DATA/notify-outbox.jsonl). */
  outboxPath: string;
  /** Reports a notification given up (an info event for the event log). */
  onEvent(e: FloorlineEvent): void;
  /** First retry delay, ms (default 1000); doubles per try up to maxDelayMs (default 300 000). */
  baseDelayMs?: number;
  maxDelayMs?: number;
  /** For tests: replaces the real delivery. */
  deliver?: (sink: number) => Deliver;
  log?: (line: string) => void;
}

export interface NotifierCounters {
  queued: number;
  delivered: number;
  retries: number;
  givenUp: number;
  pending: number;
}

export class Notifier {
  private filters: SinkFilter[];
  private readonly deliverers: Deliver[];
  private readonly outbox: Outbox;
  private readonly busy: boolean[];
  private readonly blockedUntil: number[];
  private timer: NodeJS.Timeout | undefined;
  private closed = false;
  private drainUntil = 0;
  private readonly inFlight = new Set<Promise<void>>();
  readonly counters: NotifierCounters = { queued: 0, delivered: 0, retries: 0, givenUp: 0, pending: 0 };

  constructor(private o: NotifierOptions) {
    this.filters = o.sinks.map((s) => new SinkFilter(s));
    this.deliverers = o.sinks.map((s, i) => (o.deliver ? o.deliver(i) : sinkDeliver(s)));
    this.busy = o.sinks.map(() => false);
    this.blockedUntil = o.sinks.map(() => 0);
    this.outbox = new Outbox(o.outboxPath);
    this.counters.pending = this.outbox.size;
    // Entries left by an earlier run (or a crash) go out first.
    if (this.outbox.size) this.schedule(0);
  }

  /**
   * New filters for the same sinks (a reload that changed only states, rules, durations or tries): the sinks'
   * destinations and order must not change, since queued notifications name their sink by position.
   */
  setFilters(sinks: readonly SinkConfig[]): void {
    if (sinks.length !== this.o.sinks.length) throw new RangeError('setFilters: the number of sinks changed');
    this.o = { ...this.o, sinks };
    this.filters = sinks.map((s) => new SinkFilter(s));
  }

  /** Takes one pipeline event; queues what the sinks' filters let through. */
  offer(e: FloorlineEvent): void {
    if (this.closed) return;
    this.filters.forEach((f, i) => {
      for (const ev of f.offer(e)) this.enqueue(i, ev);
    });
  }

  /** Sample time moved on (a snapshot): releases raises that have now lasted a sink's minimum duration. */
  tick(t: number): void {
    if (this.closed) return;
    this.filters.forEach((f, i) => {
      for (const ev of f.release(t)) this.enqueue(i, ev);
    });
  }

  private enqueue(sink: number, e: FloorlineEvent): void {
    const id = randomUUID();
    const body = { ...e, id, incident: incidentKey(e) };
    this.outbox.add({ id, sink, body, due: Date.now(), tries: 0 });
    this.counters.queued++;
    this.counters.pending = this.outbox.size;
    this.schedule(0);
  }

  private schedule(delayMs: number): void {
    if (this.closed) return;
    if (this.timer) clearTimeout(this.timer);
    this.timer = setTimeout(() => this.pump(), Math.max(0, delayMs));
    this.timer.unref();
  }

  private pump(): void {
    this.timer = undefined;
    const now = Date.now();
    const started = new Set<number>();
    for (const e of this.outbox.due(now)) {
      if (this.busy[e.sink] || started.has(e.sink) || this.blockedUntil[e.sink] > now) continue;
      started.add(e.sink);
      this.attempt(e);
    }
    this.rescheduleIdle();
  }

  /** Wakes up when the earliest waiting notification of an idle sink may be tried. */
  private rescheduleIdle(): void {
    let next = Infinity;
    for (const e of this.outbox.due(Infinity)) {
      if (!this.busy[e.sink]) next = Math.min(next, Math.max(e.due, this.blockedUntil[e.sink]));
    }
    if (Number.isFinite(next)) this.schedule(next - Date.now());
  }

  private attempt(e: OutboxEntry): void {
    this.busy[e.sink] = true;
    let ok = false;
    const p = this.deliverers[e.sink](JSON.stringify(e.body)).then(
      () => {
        ok = true;
        this.outbox.finish(e.id, 'done');
        this.counters.delivered++;
        this.blockedUntil[e.sink] = 0;
      },
      (err: Error) => this.failed(e, err.message),
    );
    const tracked = p.finally(() => {
      this.busy[e.sink] = false;
      this.inFlight.delete(tracked);
      this.counters.pending = this.outbox.size;
      if (!this.closed) this.schedule(0);
      else if (ok && Date.now() < this.drainUntil) this.startNext(e.sink);
    });
    this.inFlight.add(tracked);
  }

  /** Closing: the sink's next notification at once (a sink that just answered is up). */
  private startNext(sink: number): void {
    const next = this.outbox.due(Infinity).find((x) => x.sink === sink);
    if (next) this.attempt(next);
  }

  private failed(e: OutboxEntry, reason: string): void {
    const tries = e.tries + 1;
    const sink = this.o.sinks[e.sink];
    const max = sink.maxTries ?? DEFAULT_MAX_TRIES;
    if (tries >= max) {
      this.outbox.finish(e.id, 'drop');
      this.counters.givenUp++;
      const b = e.body as unknown as FloorlineEvent;
      this.o.onEvent({
        kind: 'info',
        rule: 'notify',
        state: 'raised',
        channel: b.channel,
        sample: b.sample,
        t: b.t,
        wallTime: new Date().toISOString(),
        detail: `notification ${e.id} (${b.rule} ${b.state}) to ${sinkLabel(sink)} given up after ${tries} tries: ${reason}`,
      });
      return;
    }
    const base = this.o.baseDelayMs ?? 1000;
    const delay = Math.min(base * 2 ** (tries - 1), this.o.maxDelayMs ?? 300_000) * (0.8 + 0.4 * Math.random());
    const due = Date.now() + delay;
    this.outbox.retryLater(e.id, due, tries, reason);
    this.blockedUntil[e.sink] = due;
    this.counters.retries++;
    this.o.log?.(
      `notify: ${sinkLabel(sink)} failed (${reason}); try ${tries + 1} of ${max} in ${(delay / 1000).toFixed(1)} s`,
    );
  }

  /**
   * Stops taking events and drains: each idle sink's oldest notification is tried at once (back-off ignored), and a
   * sink that answers gets the next, until deadlineMs has passed. What is still pending stays in the journal and
   * goes out at the next start.
   */
  async close(deadlineMs = 1200): Promise<void> {
    if (this.closed) return;
    if (this.timer) clearTimeout(this.timer);
    this.closed = true;
    this.drainUntil = Date.now() + deadlineMs;
    for (let s = 0; s < this.o.sinks.length; s++) if (!this.busy[s]) this.startNext(s);
    while (this.inFlight.size && Date.now() < this.drainUntil) {
      await Promise.race([
        ...this.inFlight,
        new Promise((r) => setTimeout(r, Math.max(1, this.drainUntil - Date.now())).unref()),
      ]);
    }
    this.outbox.close();
  }
}
