// A small WebSocket client for server tests: collects JSON and binary messages and waits for them.
import { WebSocket } from 'ws';
import type { ServerMessage } from '../../../protocol/messages.ts';
import { decodeFrame, type DecodedFrame } from '../../../protocol/frame.ts';

export class TestClient {
  readonly json: ServerMessage[] = [];
  readonly frames: DecodedFrame[] = [];
  closeCode: number | null = null;
  private waiters: (() => void)[] = [];

  constructor(readonly ws: WebSocket) {
    ws.on('message', (data, isBinary) => {
      if (isBinary) {
        const b = data as Buffer;
        this.frames.push(decodeFrame(b.buffer as ArrayBuffer, b.byteOffset, b.byteLength));
      } else this.json.push(JSON.parse(data.toString()) as ServerMessage);
      this.wake();
    });
    ws.on('close', (code) => {
      this.closeCode = code;
      this.wake();
    });
  }

  static open(url: string, headers: Record<string, string> = {}): Promise<TestClient> {
    return new Promise((resolve, reject) => {
      const ws = new WebSocket(url, { headers, perMessageDeflate: false });
      const c = new TestClient(ws);
      ws.once('open', () => resolve(c));
      ws.once('error', reject);
      ws.once('unexpected-response', (_req, res) => reject(new Error(`HTTP ${res.statusCode}`)));
    });
  }

  private wake(): void {
    const w = this.waiters;
    this.waiters = [];
    for (const f of w) f();
  }

  /** Resolves when `test()` is true, re-checked on every message; rejects after `ms`. */
  until<T>(test: () => T | undefined | false, ms = 5000): Promise<T> {
    return new Promise((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error('TestClient.until: timed out')), ms);
      const check = (): void => {
        const v = test();
        if (v) {
          clearTimeout(timer);
          resolve(v);
        } else this.waiters.push(check);
      };
      check();
    });
  }

  reply(id: number): Promise<Extract<ServerMessage, { type: 'reply' }>> {
    return this.until(() =>
      this.json.find((m): m is Extract<ServerMessage, { type: 'reply' }> => m.type === 'reply' && m.id === id),
    );
  }

  send(obj: unknown): void {
    this.ws.send(typeof obj === 'string' ? obj : JSON.stringify(obj));
  }

  close(): void {
    this.ws.close();
  }
}
