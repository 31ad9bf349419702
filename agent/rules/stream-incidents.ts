// Incidents for alarms raised outside the detector set (the recorder's `recording`, the pipeline's `nonfinite`):
// one incident per rule from its raise to its clear, id `RULE-CHANNEL-sSAMPLE` as the detectors name theirs
// (agent/rules/incidents.ts), so every alarm event carries `incident`.
import type { FloorlineEvent } from '../../protocol/events.ts';

export class StreamIncidents {
  private readonly open = new Map<string, string>();

  /** Sets `e.incident` on an alarm event that has none. */
  stamp(e: FloorlineEvent): void {
    if (e.kind !== 'alarm' || e.incident) return;
    let id = this.open.get(e.rule);
    if (!id) {
      id = `${e.rule}-${e.channel === '*' ? 'stream' : e.channel}-s${e.sample}`;
      if (e.state !== 'cleared') this.open.set(e.rule, id);
    }
    e.incident = id;
    if (e.state === 'cleared') this.open.delete(e.rule);
  }
}
