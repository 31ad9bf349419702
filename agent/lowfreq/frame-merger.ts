// Puts the frames of the low-frequency workers back together: worker w's n-th context or update belongs with
// every other worker's n-th (they all saw the same blocks), and its channels go back to their stream positions.
import type { LowFrequencyContext, LowFrequencyUpdate } from '../../protocol/low-frequency-messages.ts';

type Part = { kind: 'context'; context: LowFrequencyContext } | { kind: 'update'; update: LowFrequencyUpdate };

export class FrameMerger {
  private readonly queues: { part: Part; owned: number[] }[][];

  constructor(
    workers: number,
    private readonly channels: number,
    private readonly onContext: (c: LowFrequencyContext) => void,
    private readonly onUpdate: (u: LowFrequencyUpdate) => void,
  ) {
    this.queues = Array.from({ length: workers }, () => []);
  }

  /** Worker `w`'s next frame; `owned` lists the stream channels of its frame's channels, in order. */
  /** Returns what went wrong when the workers' frames do not line up (then nothing more should be added). */
  add(w: number, part: Part, owned: number[]): string | undefined {
    this.queues[w].push({ part, owned });
    while (this.queues.every((q) => q.length > 0)) {
      const problem = this.emit(this.queues.map((q) => q.shift()!));
      if (problem) return problem;
    }
    return undefined;
  }

  private emit(parts: { part: Part; owned: number[] }[]): string | undefined {
    const first = parts[0].part;
    for (const p of parts)
      if (
        p.part.kind !== first.kind ||
        (p.part.kind === 'update' && first.kind === 'update' && p.part.update.sample !== first.update.sample)
      )
        return 'its workers got out of step (their frames differ in kind or sample)';
    if (first.kind === 'context') {
      const channels = new Array<LowFrequencyContext['channels'][number]>(this.channels);
      for (const p of parts)
        if (p.part.kind === 'context')
          p.owned.forEach((c, k) => (channels[c] = (p.part as { context: LowFrequencyContext }).context.channels[k]));
      this.onContext({ ...first.context, channels });
      return undefined;
    }
    const channels = new Array<LowFrequencyUpdate['channels'][number]>(this.channels);
    for (const p of parts)
      if (p.part.kind === 'update')
        p.owned.forEach((c, k) => (channels[c] = (p.part as { update: LowFrequencyUpdate }).update.channels[k]));
    this.onUpdate({ ...first.update, channels });
    return undefined;
  }
}
