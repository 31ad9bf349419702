// The run's alarm table: one row per alarm condition, named by its stable id (protocol/ids.ts), built from the
// events the rules emit (health alarms have no state object of their own, so the events are the one record of
// every rule). A repeat while raised keeps the acknowledgement; a new raise after a clear asks again.
import type { FloorlineEvent } from '../../protocol/events.ts';
import { alarmId } from '../../protocol/ids.ts';
import type { AlarmRow } from '../../protocol/messages.ts';

/** Most rows kept: every raised alarm stays; beyond this the oldest cleared rows are forgotten (a multi-day run
 * with drifting spur lines would otherwise send one row per frequency ever seen to every client, forever). */
export const MAX_ALARM_ROWS = 64;

export class AlarmTable {
  private readonly rows = new Map<string, AlarmRow>();
  /** Cleared rows forgotten so far (shown in status so the bound is visible). */
  forgotten = 0;

  onEvent(e: FloorlineEvent): void {
    if (e.kind !== 'alarm' || e.state === 'settled') return; // settled restates a raised alarm's level
    const id = alarmId(e);
    const prev = this.rows.get(id);
    const raised = e.state === 'raised';
    const line = e.rule === 'mains' || e.rule === 'spur';
    this.rows.set(id, {
      id,
      rule: e.rule,
      channel: e.channel,
      ...(e.band ? { band: e.band } : {}),
      ...(line && e.frequency !== undefined ? { frequency: e.frequency } : {}),
      state: raised ? 'raised' : 'clear',
      acknowledged: raised && prev?.state === 'raised' ? prev.acknowledged : false,
      sample: e.sample,
      ...(e.incident ? { incident: e.incident } : {}),
    });
    if (this.rows.size > MAX_ALARM_ROWS) this.forgetOldCleared();
  }

  private forgetOldCleared(): void {
    const cleared = [...this.rows.values()].filter((r) => r.state === 'clear').sort((a, b) => a.sample - b.sample);
    for (const r of cleared) {
      if (this.rows.size <= MAX_ALARM_ROWS) break;
      this.rows.delete(r.id);
      this.forgotten++;
    }
  }

  get(id: string): AlarmRow | undefined {
    return this.rows.get(id);
  }

  all(): AlarmRow[] {
    return [...this.rows.values()];
  }

  /** Marks the rows the rules acknowledged together with `row` (same rule and channel; same band for band rules). */
  /** Marks that one alarm acknowledged while raised (an incident's acknowledge marks each of its members). */
  markAcknowledged(row: AlarmRow): void {
    const r = this.rows.get(row.id);
    if (r && r.state === 'raised') r.acknowledged = true;
  }
}
