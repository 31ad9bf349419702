// `floorline note "text"`: an operator note, into the store (and the data folder's event log) directly, or
// through a running agent (--agent URL), which stamps it with its current sample.
import { appendFileSync, existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { defineCommand, defineFlags, type ParsedArgs } from '../../cli/args.ts';
import { InputError, UsageError } from '../../errors.ts';
import { storePathFromArgs } from '../cli-flags.ts';
import { openStoreForNote } from '../open-store.ts';
import { LEVELS, type Level } from '../schema.ts';
import { noteThroughAgent } from './note-agent.ts';

export const MAX_NOTE_LENGTH = 2000;

/** Checks note text: non-empty, bounded, no control characters but tab and newline. */
export function checkNoteText(text: string): string | undefined {
  if (text.trim() === '') return 'the note is empty; write what happened, e.g. "moved the cable at the chamber door"';
  if (text.length > MAX_NOTE_LENGTH) return `the note has ${text.length} characters; keep it under ${MAX_NOTE_LENGTH}`;
  // eslint-disable-next-line no-control-regex
  if (/[\u0000-\u0008\u000b-\u001f\u007f]/.test(text))
    return 'the note holds control characters; write plain text (tabs and line breaks are fine)';
  return undefined;
}

/** Writes a note into a store file; its sample is the newest the store holds (the note is "now" for the rig). */
export function addNoteToStore(
  path: string,
  text: string,
  incident: string | undefined,
  nowIso: string,
): { sample: number | null; t: number | null; wallTime: string; run: number | null } {
  const db = openStoreForNote(path);
  try {
    const run = db.prepare('SELECT id, sample_rate, level_samples FROM runs ORDER BY id DESC LIMIT 1').get() as
      { id: number; sample_rate: number; level_samples: string } | undefined;
    let sample: number | null = null;
    if (run) {
      const lengths = JSON.parse(run.level_samples) as Record<Level, number>;
      for (const l of LEVELS) {
        const k = (db.prepare(`SELECT max(k) AS k FROM trend_${l} WHERE run = ?`).get(run.id) as { k: number | null })
          .k;
        if (k !== null) {
          sample = (k + 1) * lengths[l] - 1;
          break;
        }
      }
    }
    const t = sample === null || !run ? null : sample / run.sample_rate;
    db.prepare('INSERT INTO notes (run, sample, t, wall_time, text, incident) VALUES (?, ?, ?, ?, ?, ?)').run(
      run?.id ?? null,
      sample,
      t,
      nowIso,
      text,
      incident ?? null,
    );
    db.prepare(
      'INSERT INTO events (run, sample, t, wall_time, kind, rule, state, channel, incident, json) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)',
    ).run(
      run?.id ?? 0,
      sample ?? 0,
      t ?? 0,
      nowIso,
      'note',
      null,
      null,
      null,
      incident ?? null,
      JSON.stringify({
        kind: 'note',
        text,
        sample: sample ?? 0,
        t: t ?? 0,
        wallTime: nowIso,
        ...(incident ? { incident } : {}),
      }),
    );
    return { sample, t, wallTime: nowIso, run: run?.id ?? null };
  } finally {
    db.close();
  }
}

async function runNote(args: ParsedArgs<typeof NOTE_FLAGS>): Promise<number> {
  const f = args.flags;
  const text = args.positionals.join(' ');
  const problem = checkNoteText(text);
  if (problem) throw new UsageError(`floorline note: ${problem}.`);
  const incident = f.incident;
  if (incident !== undefined && !/^[A-Za-z0-9._:-]{1,200}$/.test(incident)) {
    throw new UsageError(
      `floorline note: --incident '${incident}' is not an incident id (letters, digits, . _ : -); see \`floorline incidents\`.`,
    );
  }
  if (f.agent) {
    if (f.store) throw new UsageError('floorline note: give --agent URL or --store FILE, not both.');
    const r = await noteThroughAgent(f.agent, text, incident);
    process.stdout.write(`note added by the agent at t=${r.t} s (sample ${r.sample})\n`);
    return 0;
  }
  const path = storePathFromArgs(f);
  if (!existsSync(path))
    throw new InputError(
      `floorline note: no history store at ${path}; give --store FILE, --data DIR or --agent URL of a running agent.`,
    );
  const now = new Date().toISOString();
  const r = addNoteToStore(path, text, incident, now);
  // With a data folder, the note joins its event log too (the agent's own notes go there through the pipeline).
  if (!f.store) {
    const log = join(dirname(path), 'events.jsonl');
    appendFileSync(
      log,
      JSON.stringify({
        kind: 'note',
        text,
        sample: r.sample ?? 0,
        t: r.t ?? 0,
        wallTime: now,
        ...(incident ? { incident } : {}),
      }) + '\n',
    );
  }
  process.stdout.write(`note stored in ${path}${r.t !== null ? ` at t=${r.t} s (sample ${r.sample})` : ''}\n`);
  return 0;
}

const NOTE_FLAGS = defineFlags([
  {
    name: 'incident',
    kind: 'string',
    value: 'ID',
    help: 'attach the note to this incident (see `floorline incidents`)',
  },
  {
    name: 'agent',
    kind: 'string',
    value: 'URL',
    help: 'send the note to a running agent (its dashboard URL, with ?token=… if set)',
  },
  { name: 'store', kind: 'string', value: 'FILE', help: 'history store file to write' },
  {
    name: 'data',
    kind: 'string',
    value: 'DIR',
    default: './floorline-data',
    help: 'data folder whose floorline.sqlite and events.jsonl take the note',
  },
]);

export const noteCommand = defineCommand({
  name: 'note',
  summary: 'add an operator note ("heater relay on") to the history, optionally on an incident',
  details: 'Example: floorline note --incident mains-bridge-167999 "moved the cable at the chamber door"',
  positionals: [{ name: 'TEXT', help: 'the note', required: true }],
  flags: NOTE_FLAGS,
  run: runNote,
});
