// The event list, newest first: alarms with an Acknowledge button while raised, and a link to each capture.
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { AlarmRow } from '../../protocol/messages.ts';
import { count, fixed } from '../format.ts';

const MAX_ROWS = 500;

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
    const level = e.levelDb !== undefined ? `${fixed(e.levelDb, 1)} dB${e.thresholdDb !== undefined ? ` (> ${fixed(e.thresholdDb, 1)})` : ''}` : e.frequency !== undefined ? `${fixed(e.frequency, 2)} Hz` : '';
    const cells = [fixed(e.t, 3), count(e.sample), e.channel, e.rule, `${e.kind} ${e.state}`, level, e.detail];
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
      const rows = alarms.filter((x) => x.rule === tr.dataset.rule && x.channel === tr.dataset.channel && (x.band ? x.band.join('-') : undefined) === tr.dataset.band);
      if (rows.length === 0) continue;
      if (rows.some((x) => x.state === 'raised' && x.acknowledged)) btn.replaceWith(document.createTextNode('acknowledged'));
      else if (rows.every((x) => x.state === 'clear')) btn.replaceWith(document.createTextNode('cleared'));
    }
  }

  /** The log as JSON Lines, oldest first (the agent's events.jsonl format). */
  toJsonLines(): string {
    return this.events.map((e) => JSON.stringify(e)).join('\n') + (this.events.length ? '\n' : '');
  }
}
