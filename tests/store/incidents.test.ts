// `floorline incidents` on the bundled demo replayed into a store: one incident per scripted fault (recordings/
// README.md lists four: mains pickup, a switching spur, a band floor rise, a clip), in the contract's shape, with
// the same settled levels as the event log's settled events, and a note attached to one of them.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { tempDir } from '../wav/support.ts';
import { cliIn, replayDemoIntoStore } from './support.ts';

let dir: string;
let store: string;
const floorline = cliIn(() => dir);

beforeAll(() => {
  dir = tempDir('store-incidents');
  store = replayDemoIntoStore(dir);
}, 120_000);

describe('floorline incidents', () => {
  it('lists one incident per scripted fault in the contract shape, settled levels as the event log states them', () => {
    const r = floorline('incidents', '--store', store, '--json');
    expect(r.status, r.stderr).toBe(0);
    const { incidents } = JSON.parse(r.stdout) as { incidents: Record<string, unknown>[] };
    expect(incidents.map((i) => (i.rules as string[]).join('+'))).toEqual(['mains', 'spur', 'band-rise', 'clip']);
    for (const i of incidents) {
      expect(Object.keys(i).sort()).toEqual(
        [
          'acknowledged',
          'capture',
          'channel',
          'end',
          'id',
          'members',
          'notes',
          'peak',
          'rules',
          'settled',
          'start',
        ].sort(),
      );
      expect(Object.keys(i.start as object).sort()).toEqual(['sample', 't', 'wallTime']);
    }
    const events = readFileSync(join(dir, 'data/events.jsonl'), 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    for (const i of incidents.filter((x) => x.settled)) {
      const settled = events.filter((e) => e.incident === i.id && e.state === 'settled');
      expect(settled.length).toBeGreaterThan(0);
      expect(settled.map((e) => e.levelDb)).toContain((i.settled as { levelDb: number }).levelDb);
    }
    // A note on the mains incident comes back with it (and only with it).
    const id = incidents[0].id as string;
    expect(floorline('note', '--store', store, '--incident', id, 'moved the cable at the chamber door').status).toBe(0);
    const again = (
      JSON.parse(floorline('incidents', '--store', store, '--json').stdout) as {
        incidents: { id: string; notes: { text: string }[] }[];
      }
    ).incidents;
    expect(again[0].notes.map((n) => n.text)).toEqual(['moved the cable at the chamber door']);
    expect(again[1].notes).toEqual([]);
    // --from/--to in sample time: only the band rise (40–51 s) overlaps t = 45..46 besides the still-open lines.
    const span = JSON.parse(
      floorline('incidents', '--store', store, '--from', 't=45', '--to', 't=46', '--json').stdout,
    ) as { incidents: { rules: string[] }[] };
    expect(span.incidents.map((x) => x.rules[0])).toEqual(['mains', 'spur', 'band-rise']);
  });
});
