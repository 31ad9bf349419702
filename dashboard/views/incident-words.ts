// Incident wording for the panel: states in words, levels with their reference, members folded to one line.
import type { IncidentJson, IncidentMemberJson } from '../../protocol/incidents.ts';
import { fixed, short, si } from '../format.ts';

/** The caution shown with every mains or ground-loop incident (the same words as `run --help`). */
export { MAINS_CAUTION } from '../../protocol/safety.ts';

/** "1 h 02 min", "3 min 12 s", "8.2 s": a duration of sample time for people. */
export function duration(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds < 0) return '—';
  if (seconds < 60) return `${seconds.toFixed(1)} s`;
  const s = Math.round(seconds);
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  const r = s % 60;
  return h > 0 ? `${h} h ${String(m).padStart(2, '0')} min` : `${m} min ${String(r).padStart(2, '0')} s`;
}

const signed = (db: number): string => `${db >= 0 ? '+' : ''}${fixed(db, 1)} dB`;

/** "raised 3 min 12 s ago, settled at +10.3 dB" or "cleared after 8.2 s, peak +10.6 dB". */
export function stateWords(i: IncidentJson, nowT: number): string {
  if (i.end) {
    const peak = i.peak ? `, peak ${signed(i.peak.levelDb)}` : '';
    return `cleared after ${duration(i.end.t - i.start.t)}${peak}`;
  }
  const settled = i.settled ? `, settled at ${signed(i.settled.levelDb)}` : ', settling';
  return `raised ${duration(nowT - i.start.t)} ago${settled}`;
}

/** One line for the members: "mains harmonics 1, 3, 5", "band-rise 100–1000 Hz", "spur at 1.953 kHz". */
export function membersLine(members: IncidentMemberJson[]): string {
  const byRule = new Map<string, IncidentMemberJson[]>();
  for (const m of members) byRule.set(m.rule, [...(byRule.get(m.rule) ?? []), m]);
  const parts: string[] = [];
  for (const [rule, ms] of byRule) {
    if (rule === 'mains') {
      const h = [...new Set(ms.map((m) => m.harmonic).filter((x): x is number => x !== undefined))].sort(
        (a, b) => a - b,
      );
      parts.push(`mains harmonic${h.length > 1 ? 's' : ''} ${h.join(', ')}`);
    } else if (ms.some((m) => m.band)) {
      parts.push(
        `${rule} ${ms
          .filter((m) => m.band)
          .map((m) => `${short(m.band![0])}–${short(m.band![1])} Hz`)
          .join(', ')}`,
      );
    } else if (ms.some((m) => m.frequency !== undefined)) {
      parts.push(
        `${rule} at ${ms
          .filter((m) => m.frequency !== undefined)
          .map((m) => si(m.frequency!, 'Hz', 4))
          .join(', ')}`,
      );
    } else parts.push(rule);
  }
  return parts.join(' · ');
}

/** A level with its amplitude when the incident is a line: "+29.9 dB re floor · 2.99 µV rms". */
export function levelWords(l: { levelDb: number; amplitude?: number } | null, unit: string, lines: boolean): string {
  if (!l) return '—';
  const amp = l.amplitude !== undefined ? ` · ${si(l.amplitude, `${unit} rms`)}` : '';
  return `${signed(l.levelDb)} ${lines ? 're floor' : 're baseline'}${amp}`;
}
