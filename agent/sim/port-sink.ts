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
  private pending = false;
  private readonly decoder: FrameDecoder;
  /** Bytes discarded while the path was gone. */
  discardedBytes = 0;
  connects = 0;

  constructor(readonly path: string, private readonly baudRate: number, private readonly events: PortSinkEvents) {
    this.decoder = new FrameDecoder({ samples() {}, descriptor() {}, describeRequest: () => events.onConnectOrRequest() });
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
    this.pending = false;
    this.events.log(`simulate: ${this.path} went away; the board keeps counting samples`);
    if (port.isOpen) port.close(() => {});
  }

  /**
   * Writes bytes (copied: serialport may keep the buffer until sent). Like a board whose USB buffer is full, a
   * block is discarded while the previous write is still pending, and everything is discarded while
   * disconnected; the sample counter runs on, so the host sees a gap. Waits at most `maxWaitMs` for a write.
   */
  async write(bytes: Uint8Array, maxWaitMs = 500): Promise<void> {
    const port = this.port;
    if (!port || !port.isOpen || this.pending) {
      this.discardedBytes += bytes.length;
      return;
    }
    this.pending = true;
    const copy = Buffer.from(bytes);
    await new Promise<void>((resolve) => {
      const timer = setTimeout(resolve, maxWaitMs);
      port.write(copy, (err) => {
        this.pending = false;
        clearTimeout(timer);
        if (err) this.drop(port);
        resolve();
      });
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
