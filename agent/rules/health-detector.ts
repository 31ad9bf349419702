// Health alarms of the stream: clip (samples within 0.1 % of full scale, found by the conditioner), gap (lost
// samples), link (board lost/back) and analysis overrun (whole blocks dropped). A gap is raised when reported and
// cleared by the next spectrum after it; clip and overrun clear after a hold time without new occurrences.
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { GapNotice, LinkNotice } from '../../protocol/stream.ts';
import { makeEvent } from './event-factory.ts';

export class HealthDetector {
  private readonly clipLast = new Map<string, number>();
  private readonly clipCount = new Map<string, number>();
  private gapOpen: GapNotice | undefined;
  private linkLost = false;
  private overrunLast = -1;
  private overrunBlocks = 0;

  constructor(
    private readonly sampleRate: number,
    private readonly clipHoldSamples: number,
    private readonly overrunHoldSamples: number,
  ) {}

  onClip(channel: string, sample: number, count: number, wallTime: string, out: FloorlineEvent[]): void {
    const active = this.clipLast.has(channel);
    this.clipLast.set(channel, sample);
    this.clipCount.set(channel, (this.clipCount.get(channel) ?? 0) + count);
    if (!active) {
      out.push(
        makeEvent(
          'clip',
          'raised',
          channel,
          sample,
          this.sampleRate,
          wallTime,
          `${channel}: ${count} sample${count === 1 ? '' : 's'} within 0.1 % of full scale at sample ${sample}`,
        ),
      );
    }
  }

  /** True while the clip alarm of a channel is raised. */
  clipActive(channel: string): boolean {
    return this.clipLast.has(channel);
  }

  onGap(gap: GapNotice, wallTime: string, out: FloorlineEvent[]): void {
    const first = !this.gapOpen;
    this.gapOpen = this.gapOpen ? { ...this.gapOpen, lost: this.gapOpen.lost + gap.lost } : gap;
    if (first) {
      out.push(
        makeEvent(
          'gap',
          'raised',
          '*',
          gap.sample,
          this.sampleRate,
          wallTime,
          `${gap.lost} sample${gap.lost === 1 ? '' : 's'} lost from sample ${gap.sample} (${gap.reason})`,
        ),
      );
    }
  }

  onLink(link: LinkNotice, wallTime: string, out: FloorlineEvent[]): void {
    if (link.state === 'lost' && !this.linkLost) {
      this.linkLost = true;
      out.push(makeEvent('link', 'raised', '*', link.sample, this.sampleRate, wallTime, `board lost: ${link.detail}`));
    } else if (link.state === 'back' && this.linkLost) {
      this.linkLost = false;
      out.push(makeEvent('link', 'cleared', '*', link.sample, this.sampleRate, wallTime, `board back: ${link.detail}`));
    }
  }

  onOverrun(sample: number, droppedBlocks: number, wallTime: string, out: FloorlineEvent[]): void {
    const active = this.overrunLast >= 0;
    this.overrunLast = sample;
    this.overrunBlocks += droppedBlocks;
    if (!active) {
      out.push(
        makeEvent(
          'overrun',
          'raised',
          '*',
          sample,
          this.sampleRate,
          wallTime,
          `analysis fell behind: ${droppedBlocks} block${droppedBlocks === 1 ? '' : 's'} dropped at sample ${sample}`,
        ),
      );
    }
  }

  /** Clears what has stopped happening, as of `sample` (called with each spectrum). */
  onTime(sample: number, wallTime: string, out: FloorlineEvent[]): void {
    if (this.gapOpen && sample > this.gapOpen.sample) {
      out.push(
        makeEvent(
          'gap',
          'cleared',
          '*',
          sample,
          this.sampleRate,
          wallTime,
          `data flowing again after ${this.gapOpen.lost} lost sample${this.gapOpen.lost === 1 ? '' : 's'}`,
        ),
      );
      this.gapOpen = undefined;
    }
    for (const [channel, last] of this.clipLast) {
      if (sample - last >= this.clipHoldSamples) {
        out.push(
          makeEvent(
            'clip',
            'cleared',
            channel,
            sample,
            this.sampleRate,
            wallTime,
            `${channel}: no clipping since sample ${last} (${this.clipCount.get(channel)} clipped samples in all)`,
          ),
        );
        this.clipLast.delete(channel);
        this.clipCount.delete(channel);
      }
    }
    if (this.overrunLast >= 0 && sample - this.overrunLast >= this.overrunHoldSamples) {
      out.push(
        makeEvent(
          'overrun',
          'cleared',
          '*',
          sample,
          this.sampleRate,
          wallTime,
          `analysis keeping up again (${this.overrunBlocks} blocks dropped in all)`,
        ),
      );
      this.overrunLast = -1;
      this.overrunBlocks = 0;
    }
  }
}
