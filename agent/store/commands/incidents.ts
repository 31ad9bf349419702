// `floorline incidents`: incidents from the history store with settled and peak levels and notes.
import { defineCommand, defineFlags, type ParsedArgs } from '../../cli/args.ts';
import { formatSi } from '../../../protocol/si.ts';
import { storePathFromArgs } from '../cli-flags.ts';
import { openStoreForReading } from '../open-store.ts';
import { channelUnits, incidentsCsv, queryIncidents, type IncidentView } from '../incident-query.ts';
import { OUTPUT_FLAGS, SPAN_FLAGS, STORE_SOURCE_FLAGS, readOutput, readSpan } from './query-flags.ts';

function describe(i: IncidentView, unit: string): string {
  const level = (db: number | null | undefined, amp: number | undefined) =>
    `${db === null || db === undefined ? '—' : `${db.toFixed(1)} dB`}${amp !== undefined ? ` (${formatSi(amp, unit)} rms)` : ''}`;
  const lines = [
    `${i.id}  ${i.channel}  ${i.rules.join('+')}  ${i.start.wallTime} (t=${i.start.t.toFixed(3)} s) → ${i.end ? `${i.end.wallTime} (t=${i.end.t.toFixed(3)} s)` : 'open'}`,
    `  settled ${i.settled ? level(i.settled.levelDb, i.settled.amplitude) : '—'}, peak ${i.peak ? level(i.peak.levelDb, i.peak.amplitude) : '—'}${i.acknowledged ? ', acknowledged' : ''}${i.capture ? `, capture ${i.capture}` : ''}`,
  ];
  for (const n of i.notes) lines.push(`  note ${n.wallTime}: ${JSON.stringify(n.text)}`);
  return lines.join('\n');
}

async function runIncidents(args: ParsedArgs<typeof INCIDENTS_FLAGS>): Promise<number> {
  const f = args.flags;
  const output = readOutput(f, 'incidents');
  const span = readSpan(f, 'incidents');
  const db = openStoreForReading(storePathFromArgs(f));
  try {
    const list = queryIncidents(db, span.from, span.to);
    const units = channelUnits(db);
    if (output === 'json') process.stdout.write(JSON.stringify({ incidents: list }) + '\n');
    else if (output === 'csv') process.stdout.write(incidentsCsv(list, units));
    else {
      process.stdout.write(
        list.length
          ? list.map((i) => describe(i, units.get(i.channel) ?? '')).join('\n') + '\n'
          : 'no incidents in this span.\n',
      );
    }
  } finally {
    db.close();
  }
  return 0;
}

const INCIDENTS_FLAGS = defineFlags([...SPAN_FLAGS, ...OUTPUT_FLAGS, ...STORE_SOURCE_FLAGS]);

export const incidentsCommand = defineCommand({
  name: 'incidents',
  summary: 'list incidents from the history store: start, end, settled and peak levels, notes',
  details: 'Example: floorline incidents --from 2026-12-02T00:00:00Z --json',
  positionals: [],
  flags: INCIDENTS_FLAGS,
  run: runIncidents,
});
