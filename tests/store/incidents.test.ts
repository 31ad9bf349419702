// `floorline incidents` on the bundled demo replayed into a store: one incident per scripted fault (recordings/
// README.md lists four: mains pickup, a switching spur, a band floor rise, a clip), in the contract's shape, with
// the same settled levels as the event log's settled events, and a note attached to one of them.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { afterAll } from 'vitest';
import { Python, tempDir } from '../wav/support.ts';
import { cliIn, replayDemoIntoStore } from './support.ts';

let dir: string;
let store: string;
let py: Python | undefined;
afterAll(() => py?.close());
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

  it('--csv has units in its header and reads with python csv and numpy.genfromtxt, the JSON numbers kept', async () => {
    // A note with a comma and quotes: RFC 4180 quoting keeps it one field.
    const note = 'heater relay on, "chamber B"';
    const json = JSON.parse(floorline('incidents', '--store', store, '--json').stdout) as {
      incidents: {
        id: string;
        settled: { levelDb: number; amplitude?: number } | null;
        peak: { sample: number } | null;
      }[];
    };
    expect(floorline('note', '--store', store, '--incident', json.incidents[1].id, note).status).toBe(0);
    const r = floorline('incidents', '--store', store, '--csv');
    expect(r.status, r.stderr).toBe(0);
    const header = r.stdout.split('\n')[0];
    // The demo's channels are in volts (recordings/README.md): the amplitude columns say so.
    expect(header).toContain('settled_amplitude_V_rms');
    expect(header).toContain('peak_level_dB');
    py ??= new Python();
    const read = await py.run<{
      notes: string[];
      settled: (number | null)[];
      peakSample: (number | null)[];
      units: string[];
    }>(
      `import io, csv, math
rows = list(csv.DictReader(io.StringIO(args[0])))
# numpy.genfromtxt reads the numeric columns by name (its default delimiter is whitespace, hence delimiter=',';
# it does not parse quotes, so the columns are chosen before the quoted notes).
names = rows and list(rows[0].keys())
a = np.genfromtxt(io.StringIO(args[0]), delimiter=',', names=True, usecols=(names.index('settled_level_dB'), names.index('peak_sample')))
fin = lambda v: None if math.isnan(v) else float(v)
result = {"notes": [r['notes'] for r in rows], "units": [r['unit'] for r in rows],
  "settled": [fin(v) for v in np.atleast_1d(a['settled_level_dB'])], "peakSample": [fin(v) for v in np.atleast_1d(a['peak_sample'])]}`,
      r.stdout,
    );
    expect(read.notes[1]).toBe(note);
    expect(read.units.slice(0, 3)).toEqual(['V', 'V', 'V']);
    expect(read.settled).toEqual(json.incidents.map((i) => i.settled?.levelDb ?? null));
    expect(read.peakSample).toEqual(json.incidents.map((i) => i.peak?.sample ?? null));
  });
});
