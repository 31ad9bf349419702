// The WebSocket link to the agent: reconnects with backoff after the agent restarts, matches replies to
// requests by id, and hands JSON and binary messages to the app.
import type { ClientMessage, ServerMessage, ReplyMessage } from '../protocol/messages.ts';

export type Request = ClientMessage extends infer M ? (M extends ClientMessage ? Omit<M, 'id'> : never) : never;

export interface LinkHandlers {
  json(m: ServerMessage): void;
  binary(buf: ArrayBuffer): void;
  /** `closed`: the agent's close reason when it dropped this page (e.g. too slow), so the page can say why. */
  state(s: 'up' | 'down' | 'connecting', closed?: { code: number; reason: string }): void;
}

export class Link {
  private ws: WebSocket | null = null;
  private nextId = 1;
  private backoff = 250;
  private readonly pending = new Map<number, { resolve(r: ReplyMessage): void; reject(e: Error): void }>();
  private stopped = false;

  constructor(
    private readonly url: string,
    private readonly on: LinkHandlers,
  ) {}

  connect(): void {
    this.on.state('connecting');
    const ws = new WebSocket(this.url);
    ws.binaryType = 'arraybuffer';
    this.ws = ws;
    ws.onopen = () => {
      this.backoff = 250;
      this.on.state('up');
    };
    ws.onmessage = (ev: MessageEvent) => {
      if (typeof ev.data === 'string') {
        const m = JSON.parse(ev.data) as ServerMessage;
        if (m.type === 'reply') {
          const p = this.pending.get(m.id);
          this.pending.delete(m.id);
          p?.resolve(m);
        }
        this.on.json(m);
      } else this.on.binary(ev.data as ArrayBuffer);
    };
    ws.onclose = (ev: CloseEvent) => {
      this.ws = null;
      const why = ev.reason ? ` (${ev.code}: ${ev.reason})` : '';
      for (const p of this.pending.values()) p.reject(new Error(`connection to the agent lost${why}`));
      this.pending.clear();
      this.on.state('down', { code: ev.code, reason: ev.reason });
      if (this.stopped) return;
      setTimeout(() => this.connect(), this.backoff);
      this.backoff = Math.min(2000, this.backoff * 2); // a local agent: retry at least every 2 s
    };
  }

  request(m: Request): Promise<ReplyMessage> {
    const ws = this.ws;
    if (!ws || ws.readyState !== WebSocket.OPEN) return Promise.reject(new Error('not connected to the agent'));
    const id = this.nextId++;
    return new Promise((resolve, reject) => {
      this.pending.set(id, { resolve, reject });
      ws.send(JSON.stringify({ ...m, id }));
    });
  }

  stop(): void {
    this.stopped = true;
    this.ws?.close();
  }
}

export function agentSocketUrl(loc: Location): string {
  return `${loc.protocol === 'https:' ? 'wss' : 'ws'}://${loc.host}/ws`;
}
