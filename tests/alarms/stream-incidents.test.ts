// Alarms raised outside the detector set still carry an incident: one per raise-to-clear of a rule.
import { describe, expect, it } from 'vitest';
import { StreamIncidents } from '../../agent/rules/stream-incidents.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';

const ev = (state: FloorlineEvent['state'], sample: number, channel = '*'): FloorlineEvent => ({
  kind: 'alarm',
  rule: 'nonfinite',
  state,
  channel,
  sample,
  t: sample / 1000,
  wallTime: '2026-01-01T00:00:00Z',
  detail: '',
});

describe('stream incidents', () => {
  it('gives a raise and its clear one id, the next raise another, and leaves detector incidents alone', () => {
    const s = new StreamIncidents();
    const a = ev('raised', 100, 'ch0');
    const b = ev('cleared', 900);
    const c = ev('raised', 2000);
    for (const e of [a, b, c]) s.stamp(e);
    expect(a.incident).toBe('nonfinite-ch0-s100');
    expect(b.incident).toBe(a.incident);
    expect(c.incident).toBe('nonfinite-stream-s2000');
    const d = { ...ev('raised', 3000), incident: 'mains-bridge-s1' };
    s.stamp(d);
    expect(d.incident).toBe('mains-bridge-s1');
  });
});
