// The simulator's serial side: writes to a device or pty path through serialport, answers describe requests,
// and behaves like a board whose cable is pulled: when the path goes away it keeps its sample clock running,
// discards what it cannot send, and reopens the path when it comes back (sending its descriptor again).
import { existsSync } from 'node:fs';
import { SerialPort } from 'serialport';
import { FrameDecoder } from '../framing/decoder.ts';

export interface PortSinkEvents {
  /** The host asked for a descriptor (or we just (re)connected). */
  onConnectOrRequest(): void;
  log(line: string): void;
}

export class PortSink {
  private port: SerialPort | undefined;
  private opening = false;
  private lastTry = 0;
  private pendingBytes = 0;
  private readonly decoder: FrameDecoder;
  /** Bytes discarded while the path was gone. */
  discardedBytes = 0;
  connects = 0;

  constructor(
    readonly path: string,
    private readonly baudRate: number,
    private readonly events: PortSinkEvents,
    /** Bytes the simulated board can hold unsent (default 8 MiB: seconds of stall on a loaded host). */
    private readonly fifoBytes = 8 << 20,
  ) {
    this.decoder = new FrameDecoder({
      samples() {},
      descriptor() {},
      describeRequest: () => events.onConnectOrRequest(),
    });
  }

  get connected(): boolean {
    return this.port !== undefined && this.port.isOpen;
  }

  /** Tries to open the path (at most every 200 ms). Resolves true once open. */
  async ensureOpen(now: number): Promise<boolean> {
    if (this.connected) return true;
    if (this.opening || now - this.lastTry < 200) return false;
    this.lastTry = now;
    if (!existsSync(this.path)) return false;
    this.opening = true;
    const port = new SerialPort({ path: this.path, baudRate: this.baudRate, autoOpen: false });
    const ok = await new Promise<boolean>((resolve) => port.open((err) => resolve(!err)));
    this.opening = false;
    if (!ok) return false;
    port.on('data', (chunk: Buffer) => this.decoder.push(chunk));
    port.on('error', () => this.drop(port));
    port.on('close', () => this.drop(port));
    this.port = port;
    this.decoder.reset();
    this.connects++;
    this.events.log(`simulate: connected to ${this.path}`);
    this.events.onConnectOrRequest();
    return true;
  }

  private drop(port: SerialPort): void {
    if (this.port !== port) return;
    this.port = undefined;
    this.pendingBytes = 0;
    this.events.log(`simulate: ${this.path} went away; the board keeps counting samples`);
    if (port.isOpen) port.close(() => {});
  }

  /**
   * Queues bytes for the port (copied: serialport keeps the buffer until sent). Like a board with a FIFO of
   * `fifoBytes`, a block that does not fit behind the writes still pending is discarded, and everything is
   * discarded while disconnected; the sample counter runs on, so the host sees a gap.
   */
  write(bytes: Uint8Array): void {
    const port = this.port;
    if (!port || !port.isOpen || this.pendingBytes + bytes.length > this.fifoBytes) {
      this.discardedBytes += bytes.length;
      return;
    }
    this.pendingBytes += bytes.length;
    const n = bytes.length;
    port.write(Buffer.from(bytes), (err) => {
      if (port !== this.port) return;
      this.pendingBytes -= n;
      if (err) this.drop(port);
    });
  }

  /** After the path disappeared the port may not notice (serialport 13): poll for it. */
  checkPath(): void {
    if (this.port && !existsSync(this.path)) this.drop(this.port);
  }

  async close(): Promise<void> {
    const port = this.port;
    this.port = undefined;
    if (port?.isOpen) await new Promise<void>((resolve) => port.drain(() => port.close(() => resolve())));
  }
}
