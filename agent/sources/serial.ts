// Live source: a board on a serial port (USB CDC/ACM, USB-serial bridge, or a pty), binary framed or text.
// Reads from the moment the port opens, asks for the descriptor, keeps sample indices continuous across
// unplug/replug (the board's sequence counter turns what was missed into a gap), and reconnects with backoff.
import { existsSync } from 'node:fs';
import { SerialPort } from 'serialport';
import type { Source, SourceCounters, SourceSink } from '../../protocol/stream.ts';
import { FrameDecoder } from '../framing/decoder.ts';
import { encodeDescribeRequest } from '../framing/encoder.ts';
import { startupChecks } from './linux-checks.ts';
import { describeSpec, parsePortSpec, resolvePort, type PortSpec } from './port-resolve.ts';
import { SampleSequencer } from './sample-sequencer.ts';
import { TextSequencer } from './text-sequencer.ts';
import { LinkWatchdog } from './watchdog.ts';
import { FloorlineError } from '../errors.ts';

export interface SerialSourceOptions {
  /** Path, VID:PID, VID:PID:SERIAL or serial=SERIAL. */
  port: string;
  baudRate?: number;
  format?: 'binary' | 'text';
  /** Text mode: sample rate (required there). */
  rate?: number;
  /** Text mode: unit and unit per printed value (default V, 1). */
  unit?: string;
  scale?: number;
  /** Close and reopen after this long without data, s (default 5). */
  noDataSeconds?: number;
  /** Reconnect backoff, ms: first and largest delay (default 100 and 2000). */
  backoffMs?: [number, number];
  log?: (line: string) => void;
}

const DESCRIBE_REPEAT_MS = 1000;
const TICK_MS = 250;

export class SerialSourceError extends FloorlineError {
  override readonly name = 'SerialSourceError';
  constructor(message: string) {
    super('SERIAL', message);
  }
}

export class SerialSource implements Source {
  readonly kind = 'serial' as const;
  private readonly spec: PortSpec;
  private readonly o: Required<Omit<SerialSourceOptions, 'rate' | 'log'>> & { rate?: number; log: (l: string) => void };
  private sink: SourceSink | undefined;
  private port: SerialPort | undefined;
  private path = '';
  private decoder: FrameDecoder | undefined;
  private binary: SampleSequencer | undefined;
  private text: TextSequencer | undefined;
  private readonly watchdog: LinkWatchdog;
  private timer: NodeJS.Timeout | undefined;
  private reconnectTimer: NodeJS.Timeout | undefined;
  private backoff: number;
  private linkDown = false;
  private everConnected = false;
  private stopping = false;
  private lastRequest = 0;
  private hinted = false;
  private bytes = 0;
  private reconnects = 0;
  private finished: () => void = () => {};
  /** Resolves once stop() has closed everything. */
  readonly done: Promise<void>;

  constructor(options: SerialSourceOptions) {
    this.spec = parsePortSpec(options.port);
    const format = options.format ?? 'binary';
    if (format === 'text' && !(options.rate !== undefined && options.rate > 0)) {
      throw new SerialSourceError('text mode needs the sample rate: give --rate HZ (the board prints no descriptor)');
    }
    this.o = {
      port: options.port,
      baudRate: options.baudRate ?? 921600,
      format,
      rate: options.rate,
      unit: options.unit ?? 'V',
      scale: options.scale ?? 1,
      noDataSeconds: options.noDataSeconds ?? 5,
      backoffMs: options.backoffMs ?? [100, 2000],
      log: options.log ?? (() => {}),
    };
    this.watchdog = new LinkWatchdog(this.o.noDataSeconds * 1000);
    this.backoff = this.o.backoffMs[0];
    this.done = new Promise((resolve) => (this.finished = resolve));
  }

  counters(): SourceCounters {
    const d = this.decoder?.counters;
    const b = this.binary?.counters;
    const t = this.text?.decoder.counters;
    return {
      bytes: this.bytes,
      frames: b ? b.frames : (t?.rows ?? 0),
      crcErrors: d?.crcErrors ?? 0,
      syncErrors: (d ? d.syncErrors + d.malformed + (b?.rejectedFrames ?? 0) : 0) + (t ? t.malformed + t.overlong : 0),
      lostSamples: b?.lostSamples ?? 0,
      reconnects: this.reconnects,
    };
  }

  /** Decoder detail beyond SourceCounters (for status pages and tests). */
  detail(): {
    decoder?: FrameDecoder['counters'];
    sequencer?: SampleSequencer['counters'];
    linkDown: boolean;
    path: string;
  } {
    return {
      decoder: this.decoder?.counters,
      sequencer: this.binary?.counters,
      linkDown: this.linkDown,
      path: this.path,
    };
  }

  async start(sink: SourceSink): Promise<void> {
    this.sink = sink;
    const label = describeSpec(this.spec);
    if (this.o.format === 'binary') {
      this.binary = new SampleSequencer(sink, label);
      const seq = this.binary;
      this.decoder = new FrameDecoder({
        samples: (f) => seq.onFrame(f),
        descriptor: (d) => seq.onDescriptor(d),
        malformed: (detail) => this.o.log(`serial: ${detail}`),
      });
    } else {
      this.text = new TextSequencer(sink, label, this.o.rate!, this.o.unit, this.o.scale);
    }
    let path: string | undefined;
    try {
      path = await resolvePort(this.spec);
    } catch (err) {
      throw new SerialSourceError((err as Error).message);
    }
    if (path === undefined) {
      throw new SerialSourceError(
        `no serial port matches ${label}; plug the board in, or list ports with \`floorline ports\``,
      );
    }
    const hints = startupChecks(path);
    for (const h of hints) this.o.log(`serial: ${h}`);
    const err = await this.open(path);
    if (err) {
      throw new SerialSourceError(`cannot open ${path}: ${err.message}${hints.length ? `; ${hints[0]}` : ''}`);
    }
    this.timer = setInterval(() => this.tick(), TICK_MS);
  }

  private open(path: string): Promise<Error | undefined> {
    const port = new SerialPort({ path, baudRate: this.o.baudRate, autoOpen: false });
    return new Promise((resolve) => {
      port.open((err) => {
        if (err) return resolve(err);
        if (this.stopping) {
          port.close(() => resolve(undefined));
          return;
        }
        this.port = port;
        this.path = path;
        this.decoder?.reset();
        this.watchdog.fed(performance.now());
        port.on('data', (chunk: Buffer) => this.onData(port, chunk));
        port.on('close', (e: (Error & { disconnected?: boolean }) | null) =>
          this.onClosed(port, e?.message ?? 'port closed'),
        );
        port.on('error', (e: Error) => this.onClosed(port, e.message));
        this.requestDescriptor();
        if (this.everConnected) this.o.log(`serial: reopened ${path}`);
        this.everConnected = true;
        resolve(undefined);
      });
    });
  }

  private requestDescriptor(): void {
    if (this.o.format !== 'binary' || !this.port?.isOpen) return;
    this.lastRequest = performance.now();
    this.port.write(Buffer.from(encodeDescribeRequest()));
  }

  private onData(port: SerialPort, chunk: Buffer): void {
    if (port !== this.port || this.stopping) return;
    this.watchdog.fed(performance.now());
    this.bytes += chunk.length;
    if (this.linkDown) {
      this.linkDown = false;
      this.backoff = this.o.backoffMs[0];
      this.text?.reconnected();
      this.sink!.link({ state: 'back', sample: this.lastSample(), detail: `data again on ${this.path}` });
    }
    const view = new Uint8Array(chunk.buffer, chunk.byteOffset, chunk.length);
    if (this.decoder) {
      this.decoder.push(view);
      this.binary!.flush();
    } else {
      this.text!.decoder.push(view);
      this.text!.flush();
    }
  }

  private lastSample(): number {
    return (this.binary?.nextIndex ?? this.text?.nextIndex ?? 0) - 1;
  }

  private tick(): void {
    const now = performance.now();
    if (this.port && this.binary && !this.binary.stream && now - this.lastRequest >= DESCRIBE_REPEAT_MS) {
      this.requestDescriptor();
      this.hintWithoutDescriptor();
    }
    if (!this.port) return;
    const verdict = this.watchdog.check(now, existsSync(this.path));
    if (verdict === 'path-gone')
      this.dropPort(`${this.path} disappeared (no data for ${(this.watchdog.idleMs(now) / 1000).toFixed(1)} s)`);
    else if (verdict === 'silent') this.dropPort(`no data for ${this.o.noDataSeconds} s on ${this.path}`);
  }

  /** Once, when bytes flow but no descriptor came after a few requests: say what the bytes look like. */
  private hintWithoutDescriptor(): void {
    const d = this.decoder!.counters;
    if (this.hinted || d.bytes < 4096 || this.watchdog.idleMs(performance.now()) > 1000) return;
    this.hinted = true;
    if (d.sampleFrames === 0) {
      this.o.log(
        `serial: ${d.bytes} bytes arrived but none formed a frame; if the board prints numbers, use --format text --rate HZ`,
      );
    } else {
      this.o.log(
        `serial: ${d.sampleFrames} samples frames but no descriptor yet (held, up to 4 MiB); check that the board answers describe requests`,
      );
    }
  }

  private onClosed(port: SerialPort, why: string): void {
    if (port !== this.port) return;
    this.dropPort(why);
  }

  /** Closes the current port, reports the link lost (once per outage) and schedules a reconnect. */
  private dropPort(why: string): void {
    const port = this.port;
    this.port = undefined;
    if (port?.isOpen) port.close(() => {});
    if (this.stopping) return;
    this.binary?.flush();
    this.text?.flush();
    // A link that never carried data was never up: close and retry quietly, but report no outage.
    if (!this.linkDown && this.bytes > 0) {
      this.linkDown = true;
      this.o.log(`serial: link lost: ${why}`);
      this.sink!.link({ state: 'lost', sample: this.lastSample(), detail: why });
    }
    this.scheduleReconnect();
  }

  private scheduleReconnect(): void {
    if (this.stopping || this.reconnectTimer) return;
    const delay = this.backoff;
    this.backoff = Math.min(this.o.backoffMs[1], this.backoff * 2);
    this.reconnectTimer = setTimeout(async () => {
      this.reconnectTimer = undefined;
      if (this.stopping) return;
      let path: string | undefined;
      try {
        path = await resolvePort(this.spec);
      } catch (err) {
        this.o.log(`serial: ${(err as Error).message}`);
      }
      if (path !== undefined && existsSync(path) && !(await this.open(path))) {
        this.reconnects++;
        return;
      }
      this.scheduleReconnect();
    }, delay);
  }

  async stop(): Promise<void> {
    if (this.stopping) return this.done;
    this.stopping = true;
    if (this.timer) clearInterval(this.timer);
    if (this.reconnectTimer) clearTimeout(this.reconnectTimer);
    const port = this.port;
    this.port = undefined;
    if (port?.isOpen) await new Promise<void>((resolve) => port.close(() => resolve()));
    this.binary?.flush();
    this.text?.flush();
    this.sink?.end();
    this.finished();
    return this.done;
  }
}
