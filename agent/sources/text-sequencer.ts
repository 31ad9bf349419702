// Text mode: rows become blocks at the rate given on the command line. The first row (or header line) fixes the
// channels; there is no sequence counter, so a reconnect is a gap of unknown length (reported as lost: 0).
import type { SourceSink, StreamInfo } from '../../protocol/stream.ts';
import { TextLineDecoder } from '../framing/text-decoder.ts';

type Out = Pick<SourceSink, 'info' | 'block' | 'gap'>;

export class TextSequencer {
  readonly decoder: TextLineDecoder;
  private names: string[] | undefined;
  private info: StreamInfo | undefined;
  private block: Float64Array[] = [];
  private blockStart = 0;
  private blockFrames = 0;
  nextIndex = 0;

  constructor(
    private readonly out: Out,
    private readonly label: string,
    private readonly rate: number,
    private readonly unit = 'V',
    private readonly scale = 1,
    private readonly blockCapacity = 8192,
  ) {
    this.decoder = new TextLineDecoder({ names: (n) => (this.names = n), row: (v, n) => this.row(v, n) });
  }

  get stream(): StreamInfo | undefined {
    return this.info;
  }

  private row(values: Float64Array, n: number): void {
    if (!this.info) {
      this.info = {
        sampleRate: this.rate,
        channels: Array.from({ length: n }, (_, i) => ({
          name: this.names?.[i] ?? `ch${i}`,
          unit: this.unit,
          scale: this.scale,
          fullScaleCounts: Infinity,
        })),
        source: { kind: 'serial', label: this.label },
        firstSample: 0,
        startWallTime: new Date().toISOString(),
      };
      this.block = this.info.channels.map(() => new Float64Array(this.blockCapacity));
      this.out.info(this.info);
    }
    if (this.blockFrames === this.blockCapacity) this.flush();
    if (this.blockFrames === 0) this.blockStart = this.nextIndex;
    const k = this.blockFrames;
    for (let c = 0; c < n; c++) this.block[c][k] = values[c];
    this.blockFrames++;
    this.nextIndex++;
  }

  /** After a reconnect: the samples missed cannot be counted in text mode. */
  reconnected(): void {
    this.flush();
    if (this.info)
      this.out.gap({
        sample: this.nextIndex,
        lost: 0,
        reason: 'text mode: samples missed while the link was down cannot be counted',
      });
  }

  flush(): void {
    if (this.blockFrames === 0) return;
    const frames = this.blockFrames;
    this.blockFrames = 0;
    this.out.block({ firstSample: this.blockStart, frames, data: this.block });
  }
}
