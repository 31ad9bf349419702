// The console line of each event kind: an operator note prints its text, never "undefined" fields.
import { describe, expect, it } from 'vitest';
import { describeEvent } from '../../agent/cli/commands/console-report.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';

describe('console event line', () => {
  it('prints a note with its text and incident, and no field it does not have', () => {
    const note = {
      kind: 'note',
      text: 'lid closed',
      sample: 8000,
      t: 1,
      wallTime: '2026-01-01T00:00:01.000Z',
      incident: 'mains-bridge-s0',
    } as unknown as FloorlineEvent;
    const line = describeEvent(note);
    expect(line).toBe('t=1.000 s  sample 8000  note on mains-bridge-s0  lid closed');
    expect(line).not.toContain('undefined');
  });

  it('prints an alarm with rule, state, channel, place and level', () => {
    const e = {
      kind: 'alarm',
      rule: 'mains',
      state: 'raised',
      channel: 'bridge',
      sample: 16000,
      t: 2,
      wallTime: '2026-01-01T00:00:02.000Z',
      frequency: 50,
      levelDb: 19.39,
      detail: 'bridge mains harmonic 1',
    } as unknown as FloorlineEvent;
    expect(describeEvent(e)).toBe(
      't=2.000 s  sample 16000  alarm mains raised  bridge 50.00 Hz +19.4 dB  bridge mains harmonic 1',
    );
  });
});
