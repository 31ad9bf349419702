// Regenerates a scenario's samples in the test process (the reference the serial path must match bit for bit).
import { ScenarioPlayer } from '../../agent/sim/player.ts';
import { parseScenario } from '../../agent/sim/scenario.ts';

export function regenerateCounts(
  scenario: object,
  seed: number,
  frames: number,
): { counts: Float64Array[]; volts: Float64Array[] } {
  const player = new ScenarioPlayer(parseScenario(JSON.stringify(scenario), 'test scenario'), seed);
  const counts = player.counts.map(() => new Float64Array(frames));
  const volts = player.counts.map(() => new Float64Array(frames));
  while (player.position < frames) {
    const n = Math.min(player.framesPerBlock, frames - player.position);
    const first = player.next(n);
    for (let c = 0; c < counts.length; c++) {
      counts[c].set(player.counts[c].subarray(0, n), first);
      volts[c].set(player.volts[c].subarray(0, n), first);
    }
  }
  return { counts, volts };
}

/** Index of the first differing sample among delivered ones, or -1. */
export function firstMismatch(got: Float64Array[], want: Float64Array[], seen: Uint8Array): number {
  if (got.length !== want.length) return 0;
  for (let i = 0; i < seen.length; i++) {
    if (!seen[i]) continue;
    for (let c = 0; c < got.length; c++) if (got[c][i] !== want[c][i]) return i;
  }
  return -1;
}
