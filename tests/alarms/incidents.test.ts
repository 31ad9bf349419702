// Incident grouping: one fault, one incident. Harmonic relations (a line at k × f is the k-th harmonic of f) and
// band membership are facts of the trade; the grouping window is the rule's own (GROUP_SECONDS).
import { describe, expect, it } from 'vitest';
import { AlarmState } from '../../dsp/detection/alarm-state.ts';
import { GROUP_SECONDS, IncidentBook, type MemberSpec } from '../../agent/rules/incidents.ts';

const FS = 8000;
const BIN = FS / 4096;
const at = (t: number) => ({ sample: Math.round(t * FS), t, wallTime: new Date(t * 1000).toISOString() });
const timing = { onDelay: 0, offDelay: 0, deadband: 1, reAlarm: 0 };

function raisedState(): AlarmState {
  const s = new AlarmState(timing);
  s.update(0, 10, 3);
  return s;
}

describe('incidents', () => {
  it('groups mains harmonics 1..5 of one channel into one incident, apart from another channel', () => {
    const book = new IncidentBook(FS, BIN);
    const ids = [1, 3, 2, 5].map(
      (k, i) =>
        book.join({ rule: 'mains', channel: 'bridge', frequency: 50.01 * k, harmonic: k }, at(20 + i)).incident.id,
    );
    expect(new Set(ids).size).toBe(1);
    const other = book.join({ rule: 'mains', channel: 'shorted', frequency: 50.01, harmonic: 1 }, at(21)).incident.id;
    expect(other).not.toBe(ids[0]);
    expect(ids[0]).toBe(`mains-bridge-s${20 * FS}`);
  });

  it('groups a spur with its harmonics (3906.6 = 2 × 1953.3 Hz), not with an unrelated line', () => {
    const book = new IncidentBook(FS, BIN);
    const a = book.join({ rule: 'spur', channel: 'shorted', frequency: 1953.3 }, at(30));
    const b = book.join({ rule: 'spur', channel: 'shorted', frequency: 3906.6 }, at(31));
    const c = book.join({ rule: 'spur', channel: 'shorted', frequency: 2711.0 }, at(31));
    expect(b.incident).toBe(a.incident);
    expect(c.incident).not.toBe(a.incident);
  });

  it('groups a band rise with a line inside its band that started within GROUP_SECONDS, and overlapping bands together', () => {
    const book = new IncidentBook(FS, BIN);
    const line = book.join({ rule: 'spur', channel: 'bridge', frequency: 612 }, at(38));
    const band = book.join({ rule: 'band-rise', channel: 'bridge', band: [100, 1000] }, at(38 + GROUP_SECONDS - 1));
    const wide = book.join({ rule: 'band-rise', channel: 'bridge', band: [5.86, 3998] }, at(43));
    expect(band.incident).toBe(line.incident);
    expect(wide.incident).toBe(line.incident);
    // A band rise long after an unrelated line outside its band is its own incident.
    const later = new IncidentBook(FS, BIN);
    const l2 = later.join({ rule: 'spur', channel: 'bridge', frequency: 1953 }, at(10));
    expect(
      later.join({ rule: 'band-rise', channel: 'bridge', band: [100, 1000] }, at(10 + GROUP_SECONDS + 1)).incident,
    ).not.toBe(l2.incident);
  });

  it("ends at its last member's clear; a later alarm opens a new incident", () => {
    const book = new IncidentBook(FS, BIN);
    const m1 = book.join({ rule: 'mains', channel: 'bridge', frequency: 50, harmonic: 1 }, at(20));
    const m3 = book.join({ rule: 'mains', channel: 'bridge', frequency: 150, harmonic: 3 }, at(21));
    book.leave(m3, at(40));
    expect(m1.incident.end).toBeNull();
    book.leave(m1, at(41), { levelDb: 30, amplitude: 3e-6, sample: 33 * FS });
    expect(m1.incident.end?.t).toBe(41);
    const rec = book.record(m1.incident);
    expect(rec.members.map((m) => m.harmonic)).toEqual([1, 3]);
    expect(rec.peak).toEqual({ levelDb: 30, amplitude: 3e-6, sample: 33 * FS });
    expect(book.join({ rule: 'mains', channel: 'bridge', frequency: 50, harmonic: 1 }, at(60)).incident).not.toBe(
      m1.incident,
    );
  });

  it('acknowledges and shelves every member of an incident, and the members that join it later', () => {
    const book = new IncidentBook(FS, BIN);
    const spec = (k: number): MemberSpec => ({
      rule: 'mains',
      channel: 'bridge',
      frequency: 50 * k,
      harmonic: k,
      state: raisedState(),
    });
    const a = book.join(spec(1), at(20));
    expect(book.acknowledge(a.incident.id)).toBe(true);
    expect(a.state!.acknowledged).toBe(true);
    const b = book.join(spec(2), at(22));
    expect(b.state!.acknowledged).toBe(true);
    expect(book.record(a.incident).acknowledged).toBe(true);
    expect(book.shelve(a.incident.id, 100 * FS)).toBe(true);
    const c = spec(3);
    book.join(c, at(23));
    // Shelved: a raise is not announced before the shelving ends.
    const fresh = new AlarmState(timing);
    const d = book.join({ ...spec(4), state: fresh }, at(24));
    expect(d.incident).toBe(a.incident);
    expect(fresh.update(25 * FS, 10, 3)).toBe(0);
    expect(book.acknowledge('no-such-incident')).toBe(false);
  });
});
