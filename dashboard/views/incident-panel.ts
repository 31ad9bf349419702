// The incidents panel: one row per fault with its members folded under it, settled and peak levels in words,
// one Acknowledge and one Shelve per incident, its notes, and a link to its capture with the replay command.
import type { IncidentJson } from '../../protocol/incidents.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { alarmId } from '../../protocol/ids.ts';
import { fixed } from '../format.ts';
import { MAINS_CAUTION, levelWords, membersLine, stateWords } from './incident-words.ts';

export interface IncidentActions {
  acknowledge(alarmIds: string[], incident: string): Promise<string>;
  shelve(alarmIds: string[], seconds: number, incident: string): Promise<string>;
  note(text: string, incident?: string): Promise<string>;
}

const SHELVE_CHOICES: [number, string][] = [
  [600, '10 min'],
  [3600, '1 h'],
  [8 * 3600, '8 h'],
  [24 * 3600, '24 h'],
];

function el<K extends keyof HTMLElementTagNameMap>(tag: K, text = '', cls = ''): HTMLElementTagNameMap[K] {
  const e = document.createElement(tag);
  if (text) e.textContent = text;
  if (cls) e.className = cls;
  return e;
}

const rowClass = (i: IncidentJson): string => (i.end ? 'cleared' : 'raised');
/** The settled level as the row carries it for tests and copying (the cell shows it rounded). */
const settledValue = (i: IncidentJson): string => (i.settled ? String(i.settled.levelDb) : '');

export class IncidentPanel {
  private list: IncidentJson[] = [];
  private readonly rendered = new Map<
    string,
    { actionsKey: string; moreKey: string; tr: HTMLTableRowElement; more: HTMLTableRowElement }
  >();
  /** Alarm ids and the threshold of each incident, from the events that carry its id. */
  private readonly alarmsOf = new Map<string, Set<string>>();
  private readonly thresholdOf = new Map<string, number>();

  constructor(
    private readonly body: HTMLTableSectionElement,
    private readonly message: HTMLElement,
    private readonly actions: IncidentActions,
    private readonly unitOf: (channel: string) => string,
  ) {}

  /** Every event passes here: the panel learns which alarms belong to which incident. */
  noteEvent(e: FloorlineEvent): void {
    const inc = (e as FloorlineEvent & { incident?: string }).incident;
    // Raised events name the alarm as the agent's alarm table does (a settled event may carry a refined frequency).
    if (!inc || e.kind !== 'alarm' || e.state !== 'raised') return;
    const ids = this.alarmsOf.get(inc) ?? new Set<string>();
    ids.add(alarmId(e));
    this.alarmsOf.set(inc, ids);
    if (e.thresholdDb !== undefined) this.thresholdOf.set(inc, e.thresholdDb);
  }

  get incidents(): readonly IncidentJson[] {
    return this.list;
  }

  /** Newest first. Rows are updated in place: cell texts change, and the buttons are replaced only when the
   *  incident's state changes (acknowledged, ended), so a button under the pointer or focus stays put. */
  update(list: IncidentJson[], nowT: number): void {
    this.list = list;
    const keep = new Set<string>();
    const order: HTMLTableRowElement[] = [];
    for (const i of [...list].reverse()) {
      keep.add(i.id);
      const actionsKey = `${i.end ? 'ended' : 'open'}|${i.acknowledged}`;
      const moreKey = JSON.stringify([i.members, i.notes, i.capture]);
      let r = this.rendered.get(i.id);
      if (!r) {
        const [tr, more] = this.rowsOf(i, nowT);
        r = { actionsKey, moreKey, tr, more };
        this.rendered.set(i.id, r);
      } else {
        const cells = r.tr.cells;
        this.cellTexts(i, nowT).forEach((text, k) => {
          if (cells[k].textContent !== text) cells[k].textContent = text;
        });
        cells[4].dataset.value = settledValue(i);
        r.tr.className = rowClass(i);
        if (r.actionsKey !== actionsKey) {
          cells[7].replaceWith(this.actionsCell(i));
          r.actionsKey = actionsKey;
        }
        if (r.moreKey !== moreKey) {
          const more = this.moreRow(i);
          r.more.replaceWith(more);
          r.more = more;
          r.moreKey = moreKey;
        }
      }
      order.push(r.tr, r.more);
    }
    for (const [id, r] of this.rendered) {
      if (keep.has(id)) continue;
      r.tr.remove();
      r.more.remove();
      this.rendered.delete(id);
    }
    // New incidents arrive at the top: insert them without moving (detaching) the rows already in place.
    order.forEach((row, k) => {
      const at = this.body.rows[k];
      if (at !== row) this.body.insertBefore(row, at ?? null);
    });
  }

  /** The seven text cells of an incident's row: start, channel, members, state, settled, peak, threshold. */
  private cellTexts(i: IncidentJson, nowT: number): string[] {
    const unit = this.unitOf(i.channel);
    const lines = i.rules.some((r) => r === 'mains' || r === 'spur');
    const threshold = this.thresholdOf.get(i.id);
    return [
      `${fixed(i.start.t, 1)} s`,
      i.channel,
      membersLine(i.members),
      stateWords(i, nowT),
      levelWords(i.settled, unit, lines),
      levelWords(i.peak, unit, lines),
      threshold === undefined ? '—' : `threshold ${fixed(threshold, 1)} dB`,
    ];
  }

  private actionsCell(i: IncidentJson): HTMLTableCellElement {
    const act = el('td', '', 'actions');
    act.append(...this.buttons(i));
    return act;
  }

  private rowsOf(i: IncidentJson, nowT: number): HTMLTableRowElement[] {
    const tr = el('tr', '', rowClass(i));
    tr.dataset.incident = i.id;
    this.cellTexts(i, nowT).forEach((text, k) => tr.appendChild(el('td', text, k >= 1 ? 'text' : '')));
    tr.cells[4].dataset.value = settledValue(i);
    if (i.rules.includes('mains')) tr.cells[2].title = MAINS_CAUTION;
    tr.appendChild(this.actionsCell(i));
    return [tr, this.moreRow(i)];
  }

  /** The folded part under an incident's row. */
  private moreRow(i: IncidentJson): HTMLTableRowElement {
    // The folded part: members one per line, notes, the capture and how to replay it, and the mains caution.
    const more = el('tr', '', 'incident-more');
    const td = el('td');
    td.colSpan = 8;
    const det = el('details');
    det.append(
      el(
        'summary',
        `${i.members.length} member${i.members.length === 1 ? '' : 's'}, ${i.notes.length} note${i.notes.length === 1 ? '' : 's'}`,
      ),
    );
    const ul = el('ul');
    for (const m of i.members) ul.append(el('li', membersLine([m])));
    det.append(ul);
    for (const n of i.notes)
      det.append(el('p', `note${n.t === null ? '' : ` at t = ${fixed(n.t, 1)} s`}: ${n.text}`, 'note'));
    if (i.capture) {
      const p = el('p', '', 'capture');
      const a = el('a', 'capture file');
      a.href = `files/${i.capture.split('/').map(encodeURIComponent).join('/')}`;
      a.setAttribute('download', '');
      p.append(a, el('span', ` · replay it with: floorline replay ${i.capture}`));
      det.append(p);
    }
    if (i.rules.includes('mains')) det.append(el('p', MAINS_CAUTION, 'caution'));
    td.append(det);
    more.append(td);
    return more;
  }

  private buttons(i: IncidentJson): HTMLElement[] {
    // The alarm ids are read at click time: an incident gains members while it is open.
    const ids = (): string[] => [...(this.alarmsOf.get(i.id) ?? [])];
    const out: HTMLElement[] = [];
    if (!i.end && !i.acknowledged) {
      const ack = el('button', 'Acknowledge', 'ack');
      ack.type = 'button';
      ack.dataset.focusKey = `ack:${i.id}`;
      ack.setAttribute('aria-label', `Acknowledge incident on ${i.channel} from t = ${fixed(i.start.t, 1)} s`);
      ack.addEventListener('click', () => void this.run(() => this.actions.acknowledge(ids(), i.id)));
      out.push(ack);
    } else if (!i.end) out.push(el('span', 'acknowledged', 'acked'));
    if (!i.end) {
      const sel = el('select');
      sel.setAttribute('aria-label', `Shelve duration for the incident on ${i.channel}`);
      sel.dataset.focusKey = `shelve-for:${i.id}`;
      for (const [s, label] of SHELVE_CHOICES) sel.add(new Option(label, String(s)));
      const sh = el('button', 'Shelve', 'shelve');
      sh.type = 'button';
      sh.dataset.focusKey = `shelve:${i.id}`;
      sh.setAttribute('aria-label', `Shelve the incident on ${i.channel}`);
      sh.addEventListener('click', () => void this.run(() => this.actions.shelve(ids(), Number(sel.value), i.id)));
      out.push(sel, sh);
    }
    const note = el('button', 'Note', 'note-btn');
    note.type = 'button';
    note.dataset.focusKey = `note:${i.id}`;
    note.setAttribute('aria-label', `Add a note to the incident on ${i.channel}`);
    note.addEventListener('click', () => {
      const input = document.getElementById('note-text') as HTMLInputElement | null;
      const target = document.getElementById('note-incident') as HTMLSelectElement | null;
      if (target) {
        if (![...target.options].some((o) => o.value === i.id))
          target.add(new Option(`${i.channel} t = ${fixed(i.start.t, 1)} s`, i.id));
        target.value = i.id;
      }
      input?.focus();
    });
    out.push(note);
    return out;
  }

  private async run(action: () => Promise<string>): Promise<void> {
    try {
      this.message.textContent = await action();
      this.message.classList.remove('error');
    } catch (err) {
      this.message.textContent = (err as Error).message;
      this.message.classList.add('error');
    }
  }
}
