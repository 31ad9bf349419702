// The event list, newest first: alarms with an Acknowledge button while raised, and a link to each capture.
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { AlarmRow } from '../../protocol/messages.ts';
import { alarmId } from '../../protocol/ids.ts';
import { count, fixed } from '../format.ts';

const MAX_ROWS = 500;

/** The state in words: an info event is a notice, not an alarm that was raised. */
function stateWords(e: FloorlineEvent): string {
  if (e.kind === 'info') return 'notice';
  if ((e.kind as string) === 'note') return 'note';
  return `alarm ${e.state as string}`;
}

/** The level with what it is measured against: "+10.3 dB · threshold 3.0 dB", never a bare comparison sign. */
function levelText(e: FloorlineEvent): string {
  if (e.kind !== 'alarm') return '';
  const sign = (v: number): string => `${v >= 0 ? '+' : ''}${fixed(v, 1)}`;
  const parts: string[] = [];
  if (e.levelDb !== undefined) parts.push(`${sign(e.levelDb)} dB`);
  if (e.thresholdDb !== undefined) parts.push(`threshold ${fixed(e.thresholdDb, 1)} dB`);
  if (parts.length === 0 && e.frequency !== undefined) parts.push(`${fixed(e.frequency, 2)} Hz`);
  return parts.join(' · ');
}

export class EventList {
  readonly events: FloorlineEvent[] = [];

  constructor(
    private readonly body: HTMLTableSectionElement,
    private readonly acknowledge: (e: FloorlineEvent) => void,
  ) {}

  reset(events: FloorlineEvent[]): void {
    this.events.length = 0;
    this.body.replaceChildren();
    for (const e of events) this.add(e);
  }

  add(e: FloorlineEvent): void {
    this.events.push(e);
    if (this.events.length > 10 * MAX_ROWS) this.events.splice(0, this.events.length - 10 * MAX_ROWS);
    const tr = document.createElement('tr');
    tr.className = e.kind === 'alarm' && e.state === 'raised' ? 'raised' : '';
    tr.dataset.rule = e.rule;
    tr.dataset.state = e.state;
    tr.dataset.channel = e.channel;
    if (e.band) tr.dataset.band = e.band.join('-');
    if (e.kind === 'alarm') tr.dataset.alarm = alarmId(e);
    const cells = [fixed(e.t, 3), count(e.sample), e.channel, e.rule, stateWords(e), levelText(e), e.detail];
    for (const [i, text] of cells.entries()) {
      const td = document.createElement('td');
      td.textContent = text;
      if (i >= 2) td.className = 'text';
      tr.appendChild(td);
    }
    const cap = document.createElement('td');
    if (e.capture) {
      const a = document.createElement('a');
      a.href = `files/${e.capture.split('/').map(encodeURIComponent).join('/')}`;
      a.textContent = 'recording';
      a.setAttribute('download', '');
      cap.appendChild(a);
    }
    tr.appendChild(cap);
    const act = document.createElement('td');
    if (e.kind === 'alarm' && e.state === 'raised') {
      const b = document.createElement('button');
      b.type = 'button';
      b.textContent = 'Acknowledge';
      b.className = 'ack';
      b.addEventListener('click', () => this.acknowledge(e));
      act.appendChild(b);
    }
    tr.appendChild(act);
    this.body.prepend(tr);
    while (this.body.rows.length > MAX_ROWS) this.body.deleteRow(this.body.rows.length - 1);
  }

  /** Marks acknowledged alarms (from status) so their button turns into a label. */
  markAcknowledged(alarms: AlarmRow[]): void {
    for (const tr of Array.from(this.body.rows)) {
      const btn = tr.querySelector('button.ack');
      if (!btn) continue;
      const rows = alarms.filter((x) => x.id === tr.dataset.alarm);
      if (rows.length === 0) continue;
      if (rows.some((x) => x.state === 'raised' && x.acknowledged))
        btn.replaceWith(document.createTextNode('acknowledged'));
      else if (rows.every((x) => x.state === 'clear')) btn.replaceWith(document.createTextNode('cleared'));
    }
  }

  /** The log as JSON Lines, oldest first (the agent's events.jsonl format). */
  toJsonLines(): string {
    return this.events.map((e) => JSON.stringify(e)).join('\n') + (this.events.length ? '\n' : '');
  }
}
